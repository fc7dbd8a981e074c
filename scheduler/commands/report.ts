/**
 * `darksieve report DB --out DIR [--scan ID] [--set NAME]`: a static, self-contained HTML page of
 * one scan (scheduler/report/write-report.ts).
 */
import type { Command } from 'commander';
import { writeReport } from '../report/write-report.js';

export function registerReport(program: Command): void {
  program
    .command('report')
    .description(
      'Write DIR/index.html: survivors per constraint set and constraint, the standard planes\n' +
        '(sigma_SI,p, <sigma v> today, coupling and m_med against m_chi) as inline SVG, and the\n' +
        'provenance (spec, code version, constants edition, knobs). No scripts; reads offline.',
    )
    .argument('<db>', 'ledger file')
    .requiredOption('--out <dir>', 'directory for index.html (created if missing)')
    .option('--scan <id>', 'scan id or name in the ledger (default: the only scan)')
    .option('--set <name>', 'constraint set shown in the planes (default: the most recently judged)')
    .option('--json', 'print what was written as one JSON object')
    .action((db: string, flags: { out: string; scan?: string; set?: string; json?: boolean }) => {
      const result = writeReport({ db, out: flags.out, scan: flags.scan, set: flags.set });
      if (flags.json) process.stdout.write(`${JSON.stringify(result)}\n`);
      else process.stdout.write(`wrote ${result.file} (${result.figures} planes${result.skipped.length ? `, ${result.skipped.length} skipped` : ''})\n`);
    });
}
