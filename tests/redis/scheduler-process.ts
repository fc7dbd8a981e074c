/**
 * A scheduler process for the Redis tests: runScan through the Redis transport with stand-in
 * physics, configured through DSTEST_* variables (spec, ledger, URL, prefix, chunk size). Prints the
 * run summary as one JSON line, so a test can kill it at any moment or read how it ended.
 */
import { runScan } from '../../scheduler/run.js';
import { RedisTransport } from '../../scheduler/redis/transport.js';
import { FAKE_PHYSICS } from '../scan/helpers.js';
import { TEST_CODE_VERSION } from './helpers.js';

const env = (name: string): string => {
  const v = process.env[name];
  if (v === undefined) throw new Error(`${name} is not set`);
  return v;
};

const transport = new RedisTransport({
  url: env('DSTEST_URL'), prefix: env('DSTEST_PREFIX'), ledgerTag: 'test', codeVersion: TEST_CODE_VERSION, pollMs: 200,
  resultLockMs: 2000, resultStalledIntervalMs: 1000,
});
const summary = await runScan({
  specPath: env('DSTEST_SPEC'), dbPath: env('DSTEST_DB'), physicsModule: FAKE_PHYSICS, quiet: true, chunkSize: Number(env('DSTEST_CHUNK')),
  transport, handleSignals: true,
});
process.stdout.write(`${JSON.stringify(summary)}\n`);
