/**
 * Speed of the scan engine (`npm run bench -- scan`):
 *  - physics only: 1 or 2 fresh bare worker threads evaluating all of a scan's points (no pool, no
 *    scheduler, no ledger), against `run` end to end on the embedded pool with as many workers over
 *    the same points (target: overhead <= 5 %), alternating, medians and quartiles of the per-round
 *    ratios over ROUNDS; both sides pay cold compiled code and caches, and with 2 threads on a 2-core
 *    machine both share the same contention; again on a 4x longer scan (LONG_ROUNDS), to tell the
 *    fixed start-up from a cost per point;
 *  - `darksieve run` through the CLI in a fresh process on 1 worker, as users run it (the in-process
 *    runs above share this process's already loaded modules): CPU of the whole process, all threads;
 *  - threads: CPU per chunk in the pool and in bare worker threads (no pool, no scheduler) with 1 and 2
 *    threads, to tell a pool cost (main thread, messages, SQLite) from the machine's (load, V8's own
 *    background threads): process CPU per chunk, the evaluating thread's own CPU, the main thread's;
 *  - ledger ingest: rows/s of the scheduler's chunk writer (target >= 200k rows/s);
 *  - `buildScanLedger`: a 1e6-point ledger written through the real writer, reusable by other
 *    benches (survivors, judge, plot). Its observables are invented smooth functions, not physics.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import Database from 'better-sqlite3';
import { tmpdir } from 'node:os';
import { Worker } from 'node:worker_threads';
import { EmbeddedPool } from '../../scheduler/embedded-pool.js';
import type { ChunkRange } from '../../scheduler/plan.js';
import path from 'node:path';
import { ChunkEvaluator, columnLayout, loadPhysicsEngine, type ChunkResult, type Column } from '../../scheduler/chunk.js';
import { Ledger } from '../../scheduler/ledger.js';
import { runScan } from '../../scheduler/run.js';
import { makePlan, parseSpec, resolvedSpecJson, specHash } from '../../scheduler/spec.js';
import { PARAMETER_COLUMNS } from '../../scheduler/plan.js';
import { numericObservableNames } from '../../physics/observables.js';
import { CONSTANTS_EDITION } from '../../physics/constants.js';
import { cliCpu, median, quartiles } from './measure.js';

/** The demo's physics setup on a smaller grid: 2 x 120 x 120 = 28800 points. */
export const BENCH_SPEC = {
  name: 'bench',
  model: { dm: 'dirac', g_chi: 1, g_q: 0.25 },
  axes: {
    mediator: { values: ['vector', 'axial'] },
    m_chi: { from: 5, to: 5000, steps: 120, spacing: 'log' },
    m_med: { from: 10, to: 10000, steps: 120, spacing: 'log' },
  },
  detectors: [{ name: 'xe_bench', target: 'Xe', windowKeV: [5, 40], efficiency: 0.6, exposureKgDay: 1e6 }],
  targets: [{ name: 'gc', kind: 'galactic_centre', coneDeg: 1, energyGeV: [1, 100] }],
};

const silent = (): void => {};

/** CPU seconds of this process (all its threads) since `from`. */
function cpuSeconds(from: NodeJS.CpuUsage): number {
  const u = process.cpuUsage(from);
  return (u.user + u.system) / 1e6;
}

/** Sum of the workers' own evaluation time over a scan's chunks, ms. */
function sumEvalMs(file: string): number {
  const db = new Database(file, { readonly: true });
  try {
    return db.prepare('SELECT SUM(eval_ms) FROM chunks').pluck().get() as number;
  } finally {
    db.close();
  }
}

/** This thread's own CPU time, ms (Linux, 10 ms ticks). */
function threadCpuMs(): number {
  const f = readFileSync('/proc/thread-self/stat', 'utf8').split(') ')[1]!.split(' ');
  return (Number(f[11]) + Number(f[12])) * 10;
}

const loadAverage = (): string => readFileSync('/proc/loadavg', 'utf8').split(' ')[0]!;

/** Per-chunk CPU of the same 1500-point chunks through the pool and through bare threads, 1 and 2 threads. */
export async function benchThreads(specJson: string, observables: readonly string[]): Promise<string[]> {
  const n = 1500;
  const ranges: ChunkRange[] = Array.from({ length: 8 }, (_, i) => ({ chunk: i, firstId: 2000 + 3000 * i, n }));
  const lines: string[] = [];
  for (const threads of [1, 2]) {
    const pool = new EmbeddedPool({ workers: threads });
    await pool.open({ scanKey: 'bench', resolvedSpecJson: specJson, observableNames: observables });
    // the same warm-up as the bare threads get (2 small chunks are posted to each thread)
    for (let k = 0; k < 2 * threads; k++) pool.dispatch({ chunk: 100 + k, firstId: 25 * k, n: 25 });
    for (let k = 0; k < 2 * threads; k++) await pool.next();
    const c0 = process.cpuUsage();
    const m0 = threadCpuMs();
    let wallMs = 0;
    try {
      ranges.forEach((r) => pool.dispatch(r));
      for (const _ of ranges) {
        const o = await pool.next();
        if (o.kind !== 'result') throw new Error(o.error);
        wallMs += o.result.evalMs;
      }
    } finally {
      await pool.close();
    }
    const processMs = cpuSeconds(c0) * 1000;
    const mainMs = threadCpuMs() - m0;
    lines.push(`pool, ${threads} thread${threads > 1 ? 's' : ''}: per ${n}-point chunk ${(processMs / ranges.length).toFixed(0)} ms process CPU, main thread ${(mainMs / ranges.length).toFixed(0)} ms, wall in the thread ${(wallMs / ranges.length).toFixed(0)} ms (load ${loadAverage()})`);

    const workers = Array.from({ length: threads }, (_, k) => new Worker(new URL('./bare-thread.mjs', import.meta.url), { workerData: { resolvedSpecJson: specJson, ranges: ranges.filter((_, i) => i % threads === k) } }));
    try {
      await Promise.all(workers.map((w) => new Promise((resolve) => w.once('message', resolve))));
      const c1 = process.cpuUsage();
      const out = (await Promise.all(workers.map((w) => {
        const done = new Promise<{ wallMs: number; cpuMs: number }[]>((resolve) => w.once('message', resolve));
        w.postMessage('go');
        return done;
      }))).flat();
      const bareMs = cpuSeconds(c1) * 1000;
      const own = out.reduce((a, x) => a + x.cpuMs, 0);
      const wall = out.reduce((a, x) => a + x.wallMs, 0);
      lines.push(`bare, ${threads} thread${threads > 1 ? 's' : ''}: per ${n}-point chunk ${(bareMs / ranges.length).toFixed(0)} ms process CPU, the thread's own ${(own / ranges.length).toFixed(0)} ms, wall ${(wall / ranges.length).toFixed(0)} ms (load ${loadAverage()})`);
    } finally {
      await Promise.all(workers.map((w) => w.terminate()));
    }
  }
  return lines;
}

/**
 * Physics only: wall seconds for `threads` fresh worker threads (bare, no pool, no scheduler, no
 * ledger; compiled code and per-scan caches cold, as in a run's threads) to evaluate every point of
 * the scan, 1000-point ranges dealt round-robin, timed from 'go' after each has loaded and prepared
 * the physics (`wallS`); `startS` is the time from creating the threads until all had done so. Also
 * the CPU seconds of this process from 'go' (all threads).
 */
async function physicsOnly(specJson: string, total: number, threads: number): Promise<{ wallS: number; startS: number; cpuS: number }> {
  const size = 1000;
  const ranges: ChunkRange[] = Array.from({ length: Math.ceil(total / size) }, (_, c) => ({ chunk: c, firstId: c * size, n: Math.min(size, total - c * size) }));
  const created = performance.now();
  const workers = Array.from({ length: threads }, (_, k) => new Worker(new URL('./bare-thread.mjs', import.meta.url), {
    workerData: { resolvedSpecJson: specJson, warmUp: false, ranges: ranges.filter((_, i) => i % threads === k) },
  }));
  try {
    await Promise.all(workers.map((w) => new Promise((resolve) => w.once('message', resolve))));
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    await Promise.all(workers.map((w) => {
      const done = new Promise((resolve) => w.once('message', resolve));
      w.postMessage('go');
      return done;
    }));
    return { wallS: (performance.now() - t0) / 1000, startS: (t0 - created) / 1000, cpuS: cpuSeconds(c0) };
  } finally {
    await Promise.all(workers.map((w) => w.terminate()));
  }
}

/** Rounds of the comparisons: single runs differ by up to ±15 % on these machines, so many of them. */
const ROUNDS = 9;
const LONG_ROUNDS = 5;

/** Synthetic columnar chunk results in a scan's layout (invented values). */
function syntheticChunk(chunk: number, firstId: number, n: number, observables: readonly string[]): ChunkResult {
  const layout = columnLayout(observables);
  const columns: Column[] = layout.kinds.map((k, c) => {
    if (k === 'text') {
      const name = layout.names[c]!;
      return Array.from({ length: n }, (_, i) => (name === 'dm' ? 'dirac' : name === 'mediator' ? ((firstId + i) % 2 ? 'axial' : 'vector') : ''));
    }
    const col = new Float64Array(n);
    for (let i = 0; i < n; i++) col[i] = Math.exp(Math.sin((firstId + i) * 0.001 * (c + 1)) * 10 - 20 - c);
    return col;
  });
  return { chunk, firstId, n, columns, evalMs: 0 };
}

/**
 * Writes a ledger of `points` points (default 1e6) through the scheduler's chunk writer: a real scan
 * row (resolved spec of a 2 x 1000 x (points/2000) grid with one detector and one target, done chunks
 * of 5000) and invented observables. Returns the scan id and the seconds taken.
 */
export function buildScanLedger(file: string, points = 1_000_000): { scanId: number; seconds: number } {
  const steps = Math.ceil(points / 2000);
  const { spec, issues } = parseSpec({
    ...BENCH_SPEC,
    name: 'bench_1e6',
    axes: { mediator: { values: ['vector', 'axial'] }, m_chi: { from: 5, to: 5000, steps: 1000, spacing: 'log' }, m_med: { from: 10, to: 10000, steps, spacing: 'log' } },
  });
  if (!spec) throw new Error(JSON.stringify(issues));
  const chunkSize = 5000;
  const plan = makePlan(spec, chunkSize);
  const observables = numericObservableNames(['xe_bench'], ['gc']);
  const t0 = performance.now();
  const ledger = Ledger.open(file);
  try {
    const json = resolvedSpecJson(spec);
    const scan = ledger.createScan({
      name: spec.name, specJson: json, specHash: specHash(json), codeVersion: 'bench', constantsEdition: CONSTANTS_EDITION,
      knobsJson: '{"synthetic":true}', observables, nPoints: plan.total, chunkSize, nChunks: plan.chunkCount,
    });
    const write = ledger.chunkWriter(scan.id, columnLayout(observables));
    const params = new Array(PARAMETER_COLUMNS.length);
    for (const range of plan.chunks()) {
      const r = syntheticChunk(range.chunk, range.firstId, range.n, observables);
      // parameters from the plan, so the rows match the stored spec
      for (let i = 0; i < range.n; i++) {
        plan.paramsInto(range.firstId + i, params);
        for (let c = 0; c < PARAMETER_COLUMNS.length; c++) {
          const col = r.columns[c]!;
          if (col instanceof Float64Array) col[i] = typeof params[c] === 'number' ? params[c] : NaN;
          else col[i] = params[c];
        }
      }
      write(r);
    }
    ledger.setStatus(scan.id, 'done');
    ledger.checkpoint();
    return { scanId: scan.id, seconds: (performance.now() - t0) / 1000 };
  } finally {
    ledger.close();
  }
}

/** Ledger ingest: rows/s of the scheduler's chunk writer over 200 synthetic 1000-row chunks of the bench scan's layout. */
function ingestLine(dir: string): string {
  const spec = parseSpec(BENCH_SPEC).spec!;
  const observables = numericObservableNames(['xe_bench'], ['gc']);
  const ledger = Ledger.open(path.join(dir, 'ingest.db'));
  try {
    const json = resolvedSpecJson(spec);
    const scan = ledger.createScan({
      name: 'ingest', specJson: json, specHash: specHash(json), codeVersion: 'bench', constantsEdition: CONSTANTS_EDITION,
      knobsJson: '{}', observables, nPoints: 200_000, chunkSize: 1000, nChunks: 200,
    });
    const write = ledger.chunkWriter(scan.id, columnLayout(observables));
    const chunks = Array.from({ length: 200 }, (_, c) => syntheticChunk(c, c * 1000, 1000, observables));
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    for (const c of chunks) write(c);
    const rate = 200_000 / ((performance.now() - t0) / 1000);
    const cpuRate = 200_000 / cpuSeconds(c0);
    return `ledger ingest: ${rate.toFixed(0)} rows/s wall, ${cpuRate.toFixed(0)} rows per CPU second (${columnLayout(observables).names.length + 2} columns, 1000-row chunks, WAL/NORMAL; target >= 200000)`;
  } finally {
    ledger.close();
  }
}

/** `npm run bench -- ingest`: the ledger ingest line alone, three times. */
export async function benchIngest(): Promise<{ lines: string[] }> {
  const dir = mkdtempSync(path.join(tmpdir(), 'darksieve-bench-ingest-'));
  try {
    return { lines: [0, 1, 2].map((k) => ingestLine(mkdtempSync(path.join(dir, `r${k}-`)))) };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/**
 * Physics only against `run` end to end on the same scan, alternating `rounds` times (and which goes
 * first) so that both see the same machine load, for each worker count. The overhead is the median of
 * the per-round ratios run / physics only, with their quartiles; physics only is timed from 'go'
 * (threads loaded and prepared: the strict yardstick) and, second, from creating its threads (loading
 * and preparing the physics included, which any evaluation of the points must do too).
 */
async function compareRuns(specFile: string, specInput: unknown, workerCounts: readonly number[], rounds: number): Promise<string[]> {
  const lines: string[] = [];
  const spec = parseSpec(specInput).spec!;
  const total = makePlan(spec, 1).total;
  const dir = path.dirname(specFile);
  const pct = (q: readonly number[]): string => q.map((x) => (100 * (x - 1)).toFixed(1)).join(' / ');
  for (const workers of workerCounts) {
    const rows: { physics: { wallS: number; startS: number; cpuS: number }; wallS: number; cpuS: number; computeS: number; evalS: number }[] = [];
    for (let round = 0; round < rounds; round++) {
      const runOnce = async (): Promise<Omit<(typeof rows)[number], 'physics'>> => {
        const db = path.join(dir, `run-${spec.name}-${workers}-${round}.db`);
        const c0 = process.cpuUsage();
        const t0 = performance.now();
        const s = await runScan({ specPath: specFile, dbPath: db, workers, quiet: true, log: silent });
        const wallS = (performance.now() - t0) / 1000;
        const cpuS = cpuSeconds(c0);
        if (s.pointsThisRun !== total) throw new Error(`run stored ${s.pointsThisRun} of ${total} points`);
        const evalS = sumEvalMs(db) / 1000;
        rmSync(db, { force: true });
        return { wallS, cpuS, computeS: s.computeMs / 1000, evalS };
      };
      if (round % 2 === 0) {
        const physics = await physicsOnly(resolvedSpecJson(spec), total, workers);
        rows.push({ physics, ...(await runOnce()) });
      } else {
        const run = await runOnce();
        rows.push({ physics: await physicsOnly(resolvedSpecJson(spec), total, workers), ...run });
      }
    }
    const m = (f: (r: (typeof rows)[number]) => number): number => median(rows.map(f));
    const q = (f: (r: (typeof rows)[number]) => number): [number, number, number] => quartiles(rows.map(f));
    const plural = workers > 1 ? 's' : '';
    lines.push(
      `${total} points, physics only, ${workers} fresh thread${plural}: ${m((r) => r.physics.wallS).toFixed(2)} s wall (${(total / m((r) => r.physics.wallS)).toFixed(0)} points/s) ` +
        `after ${m((r) => r.physics.startS).toFixed(2)} s loading and preparing, ${(1000 * m((r) => r.physics.cpuS) / total).toFixed(2)} ms CPU per point`,
    );
    lines.push(
      `  run, ${workers} worker${plural}, end to end (validation, thread start, calibration, ledger, judging): ${m((r) => r.wallS).toFixed(2)} s wall; ` +
        `overhead (quartiles / median / quartile of ${rounds} alternating rounds; target <= 5 %): ` +
        `${pct(q((r) => r.wallS / r.physics.wallS))} % vs physics timed from ready, ` +
        `${pct(q((r) => r.wallS / (r.physics.startS + r.physics.wallS)))} % vs physics timed from creating its threads`,
    );
    lines.push(
      `  once the workers are ready ${(100 * (m((r) => r.computeS / r.physics.wallS) - 1)).toFixed(1)} %; start-up and closing ${m((r) => r.wallS - r.computeS).toFixed(2)} s; ` +
        `CPU overhead ${(100 * (m((r) => r.cpuS / r.physics.cpuS) - 1)).toFixed(1)} %; scheduling overhead ${(100 * (m((r) => (r.computeS * workers) / r.evalS) - 1)).toFixed(1)} % ` +
        `(compute wall x workers vs the threads' own chunk evaluation time); per-round ratios from ready: ${rows.map((r) => (r.wallS / r.physics.wallS).toFixed(3)).join(', ')}`,
    );
  }
  return lines;
}

export async function benchScan(): Promise<{ lines: string[] }> {
  const lines: string[] = [];
  const dir = mkdtempSync(path.join(tmpdir(), 'darksieve-bench-scan-'));
  try {
    const specFile = path.join(dir, 'bench.json');
    writeFileSync(specFile, JSON.stringify(BENCH_SPEC));
    const spec = parseSpec(BENCH_SPEC).spec!;
    const total = makePlan(spec, 1).total;
    lines.push(...(await compareRuns(specFile, BENCH_SPEC, [1, 2], ROUNDS)));
    // a 4x longer scan of the same setup, where the fixed start-up weighs a quarter as much
    const longSpec = { ...BENCH_SPEC, name: 'bench_long', axes: { ...BENCH_SPEC.axes, m_chi: { ...BENCH_SPEC.axes.m_chi, steps: 240 }, m_med: { ...BENCH_SPEC.axes.m_med, steps: 240 } } };
    const longFile = path.join(dir, 'bench-long.json');
    writeFileSync(longFile, JSON.stringify(longSpec));
    lines.push(...(await compareRuns(longFile, longSpec, [1, 2], LONG_ROUNDS)));
    const physics = await physicsOnly(resolvedSpecJson(spec), total, 1);
    const cli = cliCpu(['run', specFile, '--db', path.join(dir, 'cli-1.db'), '--workers', '1', '--quiet']);
    lines.push(
      `darksieve run through the CLI, fresh process, 1 worker: ${(total / cli.wallS).toFixed(0)} points/s end to end; ` +
        `CPU ${cli.cpuS.toFixed(1)} s vs ${physics.cpuS.toFixed(1)} s physics only (CPU overhead ${(100 * (cli.cpuS / physics.cpuS - 1)).toFixed(1)} %; target <= 5 %)`,
    );
    const observables = numericObservableNames(['xe_bench'], ['gc']);
    lines.push(...(await benchThreads(resolvedSpecJson(spec), observables)));
    lines.push(ingestLine(dir));
    const big = buildScanLedger(path.join(dir, 'big.db'));
    lines.push(`buildScanLedger: 1e6 points in ${big.seconds.toFixed(1)} s (${(1e6 / big.seconds).toFixed(0)} rows/s incl. parameters from the plan)`);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  return { lines };
}
