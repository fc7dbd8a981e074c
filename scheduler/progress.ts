/**
 * Progress of a running scan on stderr: a cli-progress bar with points/s and ETA on a terminal, one
 * plain line every few seconds otherwise (logs, CI), nothing with --quiet. cli-progress prints nothing
 * off a TTY by default (stack.md §5), hence the explicit line mode.
 */
import cliProgress from 'cli-progress';

export interface ProgressReporter {
  /** total points of the scan, points already stored before this run */
  start(totalPoints: number, alreadyDone: number): void;
  /** points stored so far (including those before this run) */
  update(pointsDone: number): void;
  /** a message that must not be garbled by the bar */
  note(text: string): void;
  stop(): void;
}

export type ProgressMode = 'bar' | 'lines' | 'quiet';

export function progressMode(quiet: boolean, stream: NodeJS.WriteStream = process.stderr): ProgressMode {
  if (quiet) return 'quiet';
  return stream.isTTY ? 'bar' : 'lines';
}

/** Seconds as "1h02m", "3m05s" or "12s". */
export function formatDuration(seconds: number): string {
  if (!Number.isFinite(seconds)) return '?';
  const s = Math.max(0, Math.round(seconds));
  const h = Math.floor(s / 3600);
  const m = Math.floor((s % 3600) / 60);
  if (h > 0) return `${h}h${String(m).padStart(2, '0')}m`;
  if (m > 0) return `${m}m${String(s % 60).padStart(2, '0')}s`;
  return `${s}s`;
}

/** Points per second over this run, and the time left at that rate. */
class Rate {
  private t0 = 0;
  private done0 = 0;
  begin(done: number): void {
    this.t0 = performance.now();
    this.done0 = done;
  }
  perSecond(done: number): number {
    const dt = (performance.now() - this.t0) / 1000;
    return dt > 0 ? (done - this.done0) / dt : 0;
  }
}

export function createProgress(mode: ProgressMode, stream: NodeJS.WriteStream = process.stderr, intervalMs = 5000): ProgressReporter {
  const rate = new Rate();
  let total = 0;
  if (mode === 'quiet') {
    return { start() {}, update() {}, note() {}, stop() {} };
  }
  if (mode === 'lines') {
    let last = 0;
    let done = 0;
    const line = (): void => {
      const r = rate.perSecond(done);
      const pct = total > 0 ? ((100 * done) / total).toFixed(1) : '100.0';
      stream.write(`progress: ${done}/${total} points (${pct} %), ${r.toFixed(0)} points/s, ETA ${formatDuration(r > 0 ? (total - done) / r : NaN)}\n`);
    };
    return {
      start(t, already) {
        total = t;
        done = already;
        rate.begin(already);
        last = performance.now();
      },
      update(d) {
        done = d;
        if (performance.now() - last >= intervalMs) {
          last = performance.now();
          line();
        }
      },
      note(text) {
        stream.write(`${text}\n`);
      },
      stop() {
        line();
      },
    };
  }
  const bar = new cliProgress.SingleBar(
    {
      stream,
      format: '{bar} {percentage}% | {value}/{total} points | {rate} points/s | ETA {eta_text}',
      hideCursor: true,
      etaBuffer: 50,
    },
    cliProgress.Presets.shades_classic,
  );
  return {
    start(t, already) {
      total = t;
      rate.begin(already);
      bar.start(t, already, { rate: '0', eta_text: '?' });
    },
    update(d) {
      const r = rate.perSecond(d);
      bar.update(d, { rate: r.toFixed(0), eta_text: formatDuration(r > 0 ? (total - d) / r : NaN) });
    },
    note(text) {
      stream.write(`\n${text}\n`);
    },
    stop() {
      bar.stop();
    },
  };
}
