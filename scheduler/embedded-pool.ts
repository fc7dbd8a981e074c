/**
 * The embedded transport: a pool of worker threads on this machine (raw node:worker_threads; each
 * thread prepares the scan's physics once, at start, and keeps it for every chunk).
 *
 * Why not tinypool: the pool needs per-thread start-up state (the prepared physics, announced by a
 * 'ready' message before any chunk), a replacement thread when one dies with the chunk it held, and
 * immediate termination on abandon; with raw threads each of these is a few explicit lines.
 *
 * Failures: a chunk whose thread dies or whose evaluation throws outside the per-point guard is
 * retried up to `maxAttempts` times (a fresh thread replaces a dead one), then reported as failed;
 * the scan goes on. Points whose physics throws are not failures here: chunk.ts stores them flagged.
 */
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import { knownBlocks, mergeCalibrations, packKnownRows, type Calibration, type ChunkResult, type KnownBlock, type KnownRows } from './chunk.js';
import { InvalidInputError, type Issue } from '../physics/issue.js';
import { OutcomeQueue } from './outcome-queue.js';
import { ChunkTickets } from './chunk-tickets.js';
import { bundledEntry } from '../bin/bundle-cache.mjs';
import type { ChunkRange } from './plan.js';
import { TransportStartError, type ChunkOutcome, type ScanWork, type Transport } from './transport.js';

export interface EmbeddedPoolOptions {
  /** worker threads; default: os.availableParallelism() */
  readonly workers?: number;
  /** attempts per chunk before it is reported failed; default 3 */
  readonly maxAttempts?: number;
  /** module exporting prepare/evaluate; default physics/evaluate.ts (tests inject others) */
  readonly physicsModule?: string;
  /**
   * when > 0: the threads starting with the pool share about this much compute time, timed after
   * preparing (chunk.ts calibrateEvaluator, interleaved rounds, each thread warming its own compiled
   * code, which its first chunk would otherwise do), and open() makes their merged result available
   * as `started.calibration`; default 0. Sharing it keeps every thread busy until dispatch starts
   * instead of leaving all but one idle while the first calibrates. The calibrated points are not
   * wasted: each chunk goes out with the calibrated blocks inside its range, which the thread copies
   * instead of evaluating again.
   */
  readonly calibrateMs?: number;
}

/** What the threads reported when the pool opened. */
export interface PoolStarted {
  /** prepare()'s knobs as JSON (every thread runs the same code on the same spec) */
  readonly knobsJson: string;
  /** the threads' calibrations merged, when asked for */
  readonly calibration: Calibration | null;
}

/** the thread through the tsx loader (workers/thread-entry.mjs registers it) */
const THREAD_ENTRY = new URL('../workers/thread-entry.mjs', import.meta.url);
const THREAD_SOURCE = new URL('../workers/thread.ts', import.meta.url);

/**
 * Where a new thread starts: the cached bundle of workers/thread.ts (bin/bundle-cache.mjs; a thread
 * is ready in about a third of the time), looked up again for each thread so that a replacement thread runs
 * the code now on disk, as it would through tsx; or the tsx entry when there is no bundle or a
 * stand-in physics module (a .ts file) is to be loaded.
 */
async function threadEntry(physicsModule: string | undefined): Promise<URL> {
  const bundle = physicsModule ? null : await bundledEntry(THREAD_SOURCE);
  return bundle ? new URL(bundle) : THREAD_ENTRY;
}

type ThreadMessage =
  | { type: 'ready'; observableNames: string[]; knobsJson: string; calibration: Calibration | null; known: KnownRows }
  | { type: 'fatal'; error: string; issues?: Issue[] }
  | { type: 'result'; result: ChunkResult; ticket: number }
  | { type: 'error'; chunk: number; error: string; ticket: number }
  | { type: 'skipped'; chunk: number; ticket: number };

interface Posted {
  readonly range: ChunkRange;
  readonly ticket: number;
}

interface Slot {
  worker: Worker;
  /** chunks posted to this thread, in the order it evaluates them (at most PER_THREAD) */
  posted: Posted[];
  /** tickets of chunks taken back from this thread, until it answers 'skipped' */
  withdrawn: Set<number>;
}

/**
 * Chunks posted to a thread ahead of time: the next one is already waiting in the thread's message
 * queue when a result goes out, so the thread never idles during the round trip to the scheduler.
 */
const PER_THREAD = 2;

export class EmbeddedPool implements Transport {
  readonly workers: number;
  readonly description: string;
  readonly window: number;
  private readonly maxAttempts: number;
  private readonly physicsModule: string | undefined;
  private readonly calibrateMs: number;
  /** set once open() resolved */
  started: PoolStarted | null = null;
  private work: ScanWork | null = null;
  private readonly slots = new Set<Slot>();
  private readonly queue: ChunkRange[] = [];
  private readonly attempts = new Map<number, number>();
  private readonly outcomes = new OutcomeQueue<ChunkOutcome>((o) => o);
  /** points the threads evaluated while calibrating: disjoint blocks in ascending firstId order */
  private known: KnownBlock[] = [];
  private readonly tickets: ChunkTickets;
  private closed = false;

  constructor(options: EmbeddedPoolOptions = {}) {
    this.workers = options.workers ?? availableParallelism();
    if (!Number.isInteger(this.workers) || this.workers < 1) throw new RangeError(`workers must be a positive integer, got ${this.workers}`);
    this.maxAttempts = options.maxAttempts ?? 3;
    this.physicsModule = options.physicsModule;
    this.calibrateMs = options.calibrateMs ?? 0;
    this.description = `embedded pool, ${this.workers} worker thread${this.workers === 1 ? '' : 's'}`;
    // every thread holds PER_THREAD chunks, plus one more each waiting here
    this.window = (PER_THREAD + 1) * this.workers;
    // posted chunks plus withdrawn ones not yet answered stay below 2 PER_THREAD per thread
    this.tickets = new ChunkTickets(2 * PER_THREAD * this.workers + 8);
  }

  async open(work: ScanWork): Promise<void> {
    if (this.work) throw new Error('the pool is already open');
    this.work = work;
    const evaluated: KnownBlock[] = [];
    const started = await Promise.allSettled(Array.from({ length: this.workers }, (_, i) =>
      this.spawn(this.calibrateMs > 0 ? { ms: this.calibrateMs / this.workers, first: i, step: this.workers } : null, evaluated)));
    const failed = started.find((s): s is PromiseRejectedResult => s.status === 'rejected');
    if (failed) {
      await this.close();
      throw failed.reason;
    }
    // each thread reports its own calibration; the pool's is their merge
    const all = started.map((s) => (s as PromiseFulfilledResult<PoolStarted>).value);
    const parts = all.map((s) => s.calibration).filter((c): c is Calibration => c !== null);
    this.started = { knobsJson: all[0]!.knobsJson, calibration: parts.length > 0 ? mergeCalibrations(parts) : null };
    this.known = disjointBlocks(evaluated);
  }

  dispatch(range: ChunkRange): void {
    if (this.closed) throw new Error('the pool is closed');
    this.queue.push(range);
    this.feed();
  }

  next(): Promise<ChunkOutcome> {
    return this.outcomes.take();
  }

  async close(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    this.queue.length = 0;
    const all = [...this.slots];
    this.slots.clear();
    await Promise.all(all.map((s) => s.worker.terminate()));
  }

  /**
   * Starts one thread and resolves when its physics is prepared (and calibrated, when asked; the
   * calibrated blocks are appended to `evaluated`).
   */
  private async spawn(calibrate: { ms: number; first: number; step: number } | null = null, evaluated: KnownBlock[] = []): Promise<PoolStarted> {
    const work = this.work!;
    const entry = await threadEntry(this.physicsModule);
    if (this.closed) throw new TransportStartError('the pool closed while a thread was starting');
    return new Promise((resolve, reject) => {
      const worker = new Worker(entry, {
        workerData: {
          resolvedSpecJson: work.resolvedSpecJson, physicsModule: this.physicsModule, tickets: this.tickets.buffer,
          calibrateMs: calibrate?.ms ?? 0, calibrateRounds: calibrate ? { first: calibrate.first, step: calibrate.step } : undefined,
        },
      });
      const slot: Slot = { worker, posted: [], withdrawn: new Set() };
      let ready = false;
      worker.on('message', (msg: ThreadMessage) => {
        if (msg.type === 'ready') {
          const expected = work.observableNames.join(',');
          if (msg.observableNames.join(',') !== expected) {
            void worker.terminate();
            reject(new TransportStartError(`worker observables (${msg.observableNames.join(', ')}) differ from the scan's (${expected})`));
            return;
          }
          ready = true;
          evaluated.push(...knownBlocks(msg.known));
          this.slots.add(slot);
          resolve({ knobsJson: msg.knobsJson, calibration: msg.calibration });
          this.feed();
        } else if (msg.type === 'fatal') {
          // a setup the physics refuses is bad input (exit 2), anything else a start failure
          reject(msg.issues ? new InvalidInputError(msg.issues) : new TransportStartError(`a worker thread could not prepare the scan: ${msg.error}`));
        } else if (msg.type === 'result') {
          this.unpost(slot, msg.result.chunk, msg.ticket);
          this.attempts.delete(msg.result.chunk);
          this.deliver({ kind: 'result', result: msg.result });
          this.feed();
        } else if (msg.type === 'error') {
          this.retryOrFail(this.unpost(slot, msg.chunk, msg.ticket), msg.error);
          this.feed();
        } else {
          slot.withdrawn.delete(msg.ticket);
          this.tickets.release(msg.ticket);
        }
      });
      worker.on('error', (err) => {
        if (!ready) reject(new TransportStartError(`a worker thread failed to start: ${err.message}`));
        else this.lose(slot, err.message);
      });
      worker.on('exit', (code) => {
        if (!ready) reject(new TransportStartError(`a worker thread exited during start-up (code ${code})`));
        else this.lose(slot, `worker thread exited with code ${code}`);
      });
    });
  }

  /** A thread died: its chunk is retried elsewhere and a replacement thread is started. */
  private lose(slot: Slot, reason: string): void {
    if (this.closed || !this.slots.delete(slot)) return;
    // the thread was evaluating the first of its chunks; the others had not started
    const posted = slot.posted.splice(0);
    for (const p of posted) this.tickets.release(p.ticket);
    for (const t of slot.withdrawn) this.tickets.release(t);
    slot.withdrawn.clear();
    const [running, ...waiting] = posted.map((p) => p.range);
    this.queue.unshift(...waiting);
    if (running) this.retryOrFail(running, reason);
    this.spawn().catch((err: Error) => {
      if (this.slots.size === 0) {
        for (const r of this.queue.splice(0)) this.deliver({ kind: 'failed', range: r, attempts: this.attempts.get(r.chunk) ?? 0, error: err.message });
      }
    });
  }

  /** Removes a finished chunk from its thread's list and frees its ticket. */
  private unpost(slot: Slot, chunk: number, ticket: number): ChunkRange {
    const i = slot.posted.findIndex((p) => p.range.chunk === chunk && p.ticket === ticket);
    if (i < 0) throw new Error(`a worker thread answered for chunk ${chunk}, which it was not given`);
    this.tickets.release(ticket);
    return slot.posted.splice(i, 1)[0]!.range;
  }

  private retryOrFail(range: ChunkRange, error: string): void {
    const attempts = (this.attempts.get(range.chunk) ?? 0) + 1;
    if (attempts < this.maxAttempts) {
      this.attempts.set(range.chunk, attempts);
      this.queue.unshift(range);
    } else {
      this.attempts.delete(range.chunk);
      this.deliver({ kind: 'failed', range, attempts, error });
    }
  }

  /**
   * Hands queued chunks to the threads, one at a time to the thread with the fewest in hand. When
   * nothing is queued and a thread is idle (the end of a scan), it takes back a chunk still waiting
   * behind another thread's running one and gives it to the idle thread, so that the last chunks never
   * wait behind a busy thread while another idles.
   */
  private feed(): void {
    if (this.closed) return;
    while (this.queue.length > 0) {
      let target: Slot | undefined;
      for (const slot of this.slots) {
        if (slot.posted.length < PER_THREAD && (!target || slot.posted.length < target.posted.length)) target = slot;
      }
      if (!target) return;
      this.post(target, this.queue.shift()!);
    }
    for (const idle of this.slots) {
      if (idle.posted.length > 0) continue;
      let victim: Slot | undefined;
      for (const slot of this.slots) if (slot.posted.length >= 2 && (!victim || slot.posted.length > victim.posted.length)) victim = slot;
      if (!victim) return;
      // the last one posted: the first may already be running
      const last = victim.posted[victim.posted.length - 1]!;
      if (!this.tickets.withdraw(last.ticket)) continue;
      victim.posted.pop();
      victim.withdrawn.add(last.ticket);
      this.post(idle, last.range);
    }
  }

  private post(slot: Slot, range: ChunkRange): void {
    const ticket = this.tickets.issue();
    slot.posted.push({ range, ticket });
    slot.worker.postMessage({ type: 'chunk', range, known: this.knownWithin(range), ticket });
  }

  /** The calibrated rows of the blocks that hold ids of `range` (one may start before it or end after it), packed. */
  private knownWithin(range: ChunkRange): KnownRows {
    const end = range.firstId + range.n;
    // the first block ending after the range's first id, by bisection
    let lo = 0;
    let hi = this.known.length;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      const b = this.known[mid]!;
      if (b.firstId + b.n <= range.firstId) lo = mid + 1;
      else hi = mid;
    }
    const out: KnownBlock[] = [];
    for (let k = lo; k < this.known.length && this.known[k]!.firstId < end; k++) out.push(this.known[k]!);
    return packKnownRows(out);
  }

  private deliver(outcome: ChunkOutcome): void {
    if (this.closed) return;
    this.outcomes.put(outcome);
  }
}

/**
 * Evaluated blocks as disjoint blocks in ascending firstId order (threads calibrating a small scan
 * sample the same ids more than once; a block overlapping one already kept is dropped).
 */
export function disjointBlocks<T extends { readonly firstId: number; readonly n: number }>(blocks: readonly T[]): T[] {
  const out: T[] = [];
  let end = -Infinity;
  for (const b of [...blocks].sort((x, y) => x.firstId - y.firstId || y.n - x.n)) {
    if (b.n === 0 || b.firstId < end) continue;
    out.push(b);
    end = b.firstId + b.n;
  }
  return out;
}
