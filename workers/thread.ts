/**
 * Worker thread of the embedded pool: prepares the scan's physics once (and, when asked, times a
 * calibration of the cost per point, which also warms this thread's compiled code; the calibrated
 * rows go back with 'ready', packed, so that the pool can hand them out with the chunks that hold their ids),
 * then evaluates the chunks the pool sends and posts columnar results back. The typed arrays are copied, not
 * transferred: a chunk's columns are a few hundred kB (well under a millisecond to copy), while
 * transferring them made this thread's next chunks ~8 % slower to evaluate (thread CPU per 1500-point
 * chunk, medians of 8 alternating trials: 417 ms transferred, 382 ms copied).
 *
 * Messages in:  { type: 'chunk', range, known, ticket }   (known: KnownRows of evaluated ids within the
 *               range, by firstId; ticket: the chunk's cell in workerData.tickets, scheduler/chunk-tickets.ts)
 * Messages out: { type: 'ready', observableNames, knobsJson, calibration, known } | { type: 'fatal', error, issues? }
 *               { type: 'result', result, ticket } | { type: 'error', chunk, error, ticket }
 *               { type: 'skipped', chunk, ticket }   (the pool took the chunk back before it started)
 * `issues` comes with a fatal error when prepare() refused the scan's setup (bad input, not a crash).
 */
import { parentPort, workerData } from 'node:worker_threads';
import { ChunkEvaluator, calibrateEvaluator, loadPhysicsEngine, packKnownRows, setupIssues, type ChunkResult, type KnownRows, type PhysicsEngine } from '../scheduler/chunk.js';
import type { ChunkRange } from '../scheduler/plan.js';
import { claimTicket } from '../scheduler/chunk-tickets.js';

interface ThreadData {
  readonly resolvedSpecJson: string;
  readonly physicsModule?: string;
  /** when > 0: time about this much compute after preparing and report it with 'ready' */
  readonly calibrateMs?: number;
  /** which calibration rounds this thread takes: firstRound, firstRound + roundStep, ... */
  readonly calibrateRounds?: { readonly first: number; readonly step: number };
  /** the pool's chunk tickets (Int32 cells) */
  readonly tickets: SharedArrayBuffer;
}

const port = parentPort!;
const data = workerData as ThreadData;
const describe = (err: unknown): string => (err instanceof Error ? err.message : String(err));

let engine: PhysicsEngine;
let evaluator: ChunkEvaluator;
try {
  engine = await loadPhysicsEngine(data.physicsModule);
} catch (err) {
  port.postMessage({ type: 'fatal', error: describe(err) });
  process.exit(1);
}
try {
  evaluator = await ChunkEvaluator.create(data.resolvedSpecJson, engine);
} catch (err) {
  port.postMessage({ type: 'fatal', error: describe(err), issues: setupIssues(err) });
  process.exit(1);
}
try {
  const rounds = data.calibrateRounds ?? { first: 0, step: 1 };
  const evaluated: ChunkResult[] = [];
  const calibration = data.calibrateMs ? calibrateEvaluator(evaluator, data.calibrateMs, undefined, undefined, rounds.first, rounds.step, evaluated) : null;
  const known = packKnownRows(evaluated.map((r) => ({ firstId: r.firstId, n: r.n, rows: r, start: 0 })));
  port.postMessage({ type: 'ready', observableNames: evaluator.prepared.observableNames, knobsJson: JSON.stringify(evaluator.prepared.knobs ?? {}), calibration, known });
} catch (err) {
  port.postMessage({ type: 'fatal', error: describe(err) });
  process.exit(1);
}

const tickets = new Int32Array(data.tickets);
port.on('message', (msg: { type: 'chunk'; range: ChunkRange; known: KnownRows; ticket: number }) => {
  if (msg.type !== 'chunk') return;
  if (!claimTicket(tickets, msg.ticket)) {
    port.postMessage({ type: 'skipped', chunk: msg.range.chunk, ticket: msg.ticket });
    return;
  }
  try {
    const result = evaluator.evaluate(msg.range, msg.known);
    port.postMessage({ type: 'result', result, ticket: msg.ticket });
  } catch (err) {
    port.postMessage({ type: 'error', chunk: msg.range.chunk, error: describe(err), ticket: msg.ticket });
  }
});
