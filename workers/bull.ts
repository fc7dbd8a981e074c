/**
 * Entry point of a BullMQ worker process (`darksieve worker`): probes Redis, then serves every scan
 * announced there until SIGINT/SIGTERM. The first signal stops taking chunks and finishes the ones
 * in hand (their results are sent); a second abandons them (their jobs stall and run elsewhere).
 * Chunks are evaluated by scheduler/chunk.ts in worker threads (workers/thread.ts), as in the
 * embedded pool; the queue mechanics live in scheduler/redis/worker-service.ts.
 */
import { codeVersion } from '../scheduler/run.js';
import { probeRedis } from '../scheduler/redis/connection.js';
import { WorkerService, type WorkerServiceOptions } from '../scheduler/redis/worker-service.js';

export type BullWorkerOptions = Omit<WorkerServiceOptions, 'codeVersion'> & {
  /** install SIGINT/SIGTERM handlers (the CLI does) */
  readonly handleSignals?: boolean;
};

/** Runs a worker until a signal (or `stop` resolves); resolves once it has left cleanly. */
export async function runBullWorker(options: BullWorkerOptions, stop?: Promise<unknown>): Promise<void> {
  const log = options.log ?? ((line: string) => process.stderr.write(`${line}\n`));
  await probeRedis(options.url);
  const service = new WorkerService({ ...options, codeVersion: codeVersion(), log });
  let signalled = 0;
  let release: () => void = () => {};
  const stopped = new Promise<void>((resolve) => {
    release = resolve;
  });
  const onSignal = (sig: NodeJS.Signals): void => {
    signalled++;
    if (signalled === 1) {
      log(`${sig}: finishing the chunks in hand, then leaving (again to abandon them)`);
      release();
    } else {
      log(`${sig}: abandoning the chunks in hand; they run elsewhere after their locks expire`);
      void service.close(true).finally(() => process.exit(1));
    }
  };
  if (options.handleSignals) {
    process.on('SIGINT', onSignal);
    process.on('SIGTERM', onSignal);
  }
  try {
    await service.start();
    await Promise.race([stopped, ...(stop ? [stop] : [])]);
  } finally {
    await service.close();
    if (options.handleSignals) {
      process.off('SIGINT', onSignal);
      process.off('SIGTERM', onSignal);
    }
  }
}
