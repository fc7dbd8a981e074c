/**
 * Worker thread of the embedded pool: prepares the scan's physics once, then evaluates the chunks the
 * pool sends and posts columnar results back (typed arrays transferred, not copied).
 *
 * Messages in:  { type: 'chunk', range }
 * Messages out: { type: 'ready', observableNames } | { type: 'fatal', error }
 *               { type: 'result', result } | { type: 'error', chunk, error }
 */
import { parentPort, workerData } from 'node:worker_threads';
import { ChunkEvaluator, loadPhysicsEngine } from '../scheduler/chunk.js';
import type { ChunkRange } from '../scheduler/plan.js';

interface ThreadData {
  readonly resolvedSpecJson: string;
  readonly physicsModule?: string;
}

const port = parentPort!;
const data = workerData as ThreadData;
const describe = (err: unknown): string => (err instanceof Error ? err.message : String(err));

let evaluator: ChunkEvaluator;
try {
  evaluator = await ChunkEvaluator.create(data.resolvedSpecJson, await loadPhysicsEngine(data.physicsModule));
  port.postMessage({ type: 'ready', observableNames: evaluator.prepared.observableNames });
} catch (err) {
  port.postMessage({ type: 'fatal', error: describe(err) });
  process.exit(1);
}

port.on('message', (msg: { type: 'chunk'; range: ChunkRange }) => {
  if (msg.type !== 'chunk') return;
  try {
    const result = evaluator.evaluate(msg.range);
    const transfer = result.columns.filter((c): c is Float64Array => c instanceof Float64Array).map((c) => c.buffer as ArrayBuffer);
    port.postMessage({ type: 'result', result }, transfer);
  } catch (err) {
    port.postMessage({ type: 'error', chunk: msg.range.chunk, error: describe(err) });
  }
});
