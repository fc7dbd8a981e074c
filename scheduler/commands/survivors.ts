/**
 * `darksieve survivors DB [--where EXPR] [--format table|csv|json] [--limit N] [--set NAME]
 * [--scan ID|NAME]`: the points of a scan that pass every constraint of a judged set, and on stderr
 * how many points each constraint removed.
 */
import type { Command } from 'commander';
import { InvalidInputError } from '../../physics/issue.js';
import { formatSummary, listSets, readSummary } from '../constraints/judge.js';
import { findScan, openLedger, scanColumns } from '../constraints/scan-context.js';
import { OUTPUT_FORMATS, survivorRows, writeRows, type OutputFormat } from '../survivors.js';

/** Rows shown by the table format when --limit is not given (csv and json give all rows). */
export const DEFAULT_TABLE_ROWS = 50;

interface SurvivorsOptions {
  readonly where?: string;
  readonly format: string;
  readonly limit?: string;
  readonly set?: string;
  readonly scan?: string;
}

function parseLimit(text: string | undefined): number | undefined {
  if (text === undefined) return undefined;
  const n = Number(text);
  if (!Number.isSafeInteger(n) || n < 1) {
    throw new InvalidInputError([{ code: 'out_of_range', path: '--limit', message: '--limit must be a whole number >= 1', seen: text, allowed: 'an integer >= 1' }]);
  }
  return n;
}

export function registerSurvivors(program: Command): void {
  program
    .command('survivors')
    .description('List the points that pass every constraint of a judged set; a per-constraint summary goes to stderr')
    .argument('<db>', 'ledger file')
    .option('--where <expr>', 'filter over numeric point columns, e.g. "m_chi > 100 and omega_h2 < 0.1" (mathjs syntax, sandboxed)')
    .option('--format <format>', `output format: ${OUTPUT_FORMATS.join(', ')}`, 'table')
    .option('--limit <n>', `most rows (default: ${DEFAULT_TABLE_ROWS} for table, all for csv and json)`)
    .option('--set <name>', 'constraint set (default: the most recently judged)')
    .option('--scan <id>', 'scan id or name (needed when the ledger holds several scans)')
    .action((dbFile: string, opts: SurvivorsOptions) => {
      if (!(OUTPUT_FORMATS as readonly string[]).includes(opts.format)) {
        throw new InvalidInputError([{ code: 'invalid_choice', path: '--format', message: `--format must be one of ${OUTPUT_FORMATS.join(', ')}`, seen: opts.format, allowed: OUTPUT_FORMATS.join(', ') }]);
      }
      const format = opts.format as OutputFormat;
      const limit = parseLimit(opts.limit) ?? (format === 'table' ? DEFAULT_TABLE_ROWS : undefined);
      const db = openLedger(dbFile, true);
      try {
        const scan = findScan(db, opts.scan);
        const sets = listSets(db, scan.id);
        const set = opts.set ?? sets[0];
        if (set === undefined || !sets.includes(set)) {
          throw new InvalidInputError([{
            code: sets.length === 0 ? 'not_judged' : 'unknown_set', path: '--set',
            message: sets.length === 0 ? `scan ${scan.id} has no judged constraint set; run darksieve judge first` : `no judged constraint set '${set}' for scan ${scan.id}`,
            ...(set !== undefined ? { seen: set } : {}), allowed: sets.join(', ') || '(none)',
          }]);
        }
        const { all: columns, numeric } = scanColumns(db, scan);
        const rows = survivorRows(db, {
          scanId: scan.id, set, columns, numeric,
          ...(opts.where !== undefined ? { where: opts.where } : {}), ...(limit !== undefined ? { limit } : {}),
        });
        const summary = readSummary(db, scan.id, set);
        if (summary) process.stderr.write(formatSummary(summary, `${scan.id} (${scan.name})`));
        const n = writeRows(columns, rows, format, (t) => process.stdout.write(t));
        if (format === 'table' && n === limit) process.stderr.write(`(first ${n} rows; --limit N to see more)\n`);
      } finally {
        db.close();
      }
    });
}
