/**
 * `darksieve status DB [--json]`: progress of every scan in a ledger; safe while a run writes it.
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
    .option('--json', 'print one JSON object: { db, scans: [...] }')
    .action((db: string, opts: { json?: boolean }) => {
      if (!existsSync(db))
        throw new InvalidInputError([{ code: 'missing_file', path: 'DB', message: `ledger file ${db} does not exist`, seen: db, allowed: 'a ledger written by darksieve run' }]);
      const st = ledgerStatus(db);
      process.stdout.write(opts.json ? `${JSON.stringify(st, null, 2)}\n` : formatStatus(st));
    });
}
