// A bare worker thread for the scan bench (no pool, no scheduler), running the same bundle of the
// sources as the pool's threads (or tsx when there is none): prepares the bench scan's physics,
// warms up on 50 points (unless workerData.warmUp is false), says 'ready', then on 'go' evaluates the
// given id ranges and reports, per range, its wall time and this thread's own CPU time
// (/proc/thread-self/stat, Linux, 10 ms ticks).
import { readFileSync } from 'node:fs';
import { parentPort, workerData } from 'node:worker_threads';
import { bundledEntry } from '../../bin/bundle-cache.mjs';

// the same compiled form of the code as the pool's threads run: the cached bundle, else tsx
const source = new URL('../../scheduler/chunk.ts', import.meta.url);
const bundle = await bundledEntry(source);
if (!bundle) (await import('tsx/esm/api')).register();
const { ChunkEvaluator, loadPhysicsEngine } = await import(bundle ?? source.href);
const evaluator = await ChunkEvaluator.create(workerData.resolvedSpecJson, await loadPhysicsEngine());
const threadCpuMs = () => {
  const f = readFileSync('/proc/thread-self/stat', 'utf8').split(') ')[1].split(' ');
  return (Number(f[11]) + Number(f[12])) * 10; // utime + stime, clock ticks of 10 ms
};
if (workerData.warmUp !== false) evaluator.evaluate({ chunk: 0, firstId: 0, n: 50 });
parentPort.postMessage('ready');
parentPort.once('message', () => {
  const out = workerData.ranges.map((range) => {
    const c0 = threadCpuMs();
    const w0 = performance.now();
    evaluator.evaluate(range);
    return { wallMs: performance.now() - w0, cpuMs: threadCpuMs() - c0 };
  });
  parentPort.postMessage(out);
});
