/**
 * `darksieve status DB [--json] [--redis URL]`: progress of every scan in a ledger; safe while a run
 * writes it. With --redis, also the workers connected to that Redis and each scan's chunks queued
 * and running there (scheduler/redis/status.ts).
 */
import { existsSync } from 'node:fs';
import type { Command } from 'commander';
import { InvalidInputError } from '../../physics/issue.js';
import { formatStatus, ledgerStatus } from '../status.js';

export function registerStatus(program: Command): void {
  program
    .command('status')
    .description('Show the progress of the scans in a ledger (works while a run is writing it)')
    .argument('<db>', 'ledger file')
    .option('--json', 'print one JSON object: { db, scans: [...] } (and redis: {...} with --redis)')
    .option('--redis <url>', 'also show the workers and the queued and running chunks on this Redis')
    .action(async (db: string, opts: { json?: boolean; redis?: string }) => {
      if (!existsSync(db))
        throw new InvalidInputError([{ code: 'missing_file', path: 'DB', message: `ledger file ${db} does not exist`, seen: db, allowed: 'a ledger written by darksieve run' }]);
      const st = ledgerStatus(db);
      if (!opts.redis) {
        process.stdout.write(opts.json ? `${JSON.stringify(st, null, 2)}\n` : formatStatus(st));
        return;
      }
      const { redisLiveStatus, formatRedisStatus } = await import('../redis/status.js');
      const { redisPrefix } = await import('../redis/connection.js');
      const live = await redisLiveStatus(opts.redis, redisPrefix(), db, st.scans);
      process.stdout.write(opts.json ? `${JSON.stringify({ ...st, redis: live }, null, 2)}\n` : formatStatus(st) + formatRedisStatus(live));
    });
}
