/**
 * A BullMQ worker process for the Redis tests: the real runBullWorker (probe, discovery, threads,
 * signals) with stand-in physics and short locks, configured through DSTEST_* variables.
 */
import { runBullWorker } from '../../workers/bull.js';

const env = (name: string): string => {
  const v = process.env[name];
  if (v === undefined) throw new Error(`${name} is not set`);
  return v;
};

await runBullWorker({
  url: env('DSTEST_URL'), prefix: env('DSTEST_PREFIX'), concurrency: Number(env('DSTEST_CONCURRENCY')), physicsModule: env('DSTEST_PHYSICS'),
  lockDurationMs: Number(env('DSTEST_LOCK_MS')), stalledIntervalMs: Number(env('DSTEST_STALLED_MS')), pollMs: 300, heartbeatMs: 500,
  handleSignals: true,
});
