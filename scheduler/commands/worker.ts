/**
 * `darksieve worker --redis URL [--concurrency N] [--allow-other-code]`: a worker for the scans queued
 * on that Redis (REDIS_URL may stand in for --redis). It serves every scan announced there by a
 * scheduler running the same code, joins and leaves at any time, and needs no ledger: results go back
 * to each scan's scheduler through Redis.
 */
import { availableParallelism } from 'node:os';
import type { Command } from 'commander';
import { InvalidInputError } from '../../physics/issue.js';
import { redisOptionsFromUrl, redisPrefix } from '../redis/connection.js';
import { runBullWorker } from '../../workers/bull.js';

interface WorkerCommandOptions {
  readonly redis?: string;
  readonly concurrency?: string;
  readonly allowOtherCode?: boolean;
}

export function registerWorker(program: Command): void {
  program
    .command('worker')
    .description('Evaluate chunks of the scans queued on a Redis (start any number, on any machine that reaches it)')
    .option('--redis <url>', 'redis://[user:password@]host[:port][/db], or rediss:// for TLS (default: $REDIS_URL)')
    .option('--concurrency <n>', 'chunks evaluated at once, one worker thread each (default: number of cores)')
    .option('--allow-other-code', 'also serve scans whose scheduler runs another darksieve version or commit (refused by default: results are bit-identical only with the same code)')
    .action(async (opts: WorkerCommandOptions) => {
      const url = opts.redis ?? process.env.REDIS_URL;
      if (!url)
        throw new InvalidInputError([{ code: 'missing', path: '--redis', message: 'a worker needs the Redis its scans are queued on', allowed: 'redis://host:port or rediss://... (or set REDIS_URL)' }]);
      redisOptionsFromUrl(url);
      const concurrency = opts.concurrency === undefined ? availableParallelism() : Number(opts.concurrency);
      if (!Number.isInteger(concurrency) || concurrency < 1 || concurrency > 1024)
        throw new InvalidInputError([{ code: 'out_of_range', path: '--concurrency', message: 'concurrency must be an integer from 1 to 1024', seen: String(opts.concurrency), allowed: '1 to 1024' }]);
      await runBullWorker({ url, prefix: redisPrefix(), concurrency, handleSignals: true, allowOtherCode: opts.allowOtherCode ?? false });
    });
}
