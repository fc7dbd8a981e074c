/**
 * `darksieve judge DB --constraints FILE [--set NAME] [--scan ID|NAME] [--json]`: applies a
 * constraints file to the observables stored in a ledger, as a new constraint set beside the
 * existing ones, without recomputing physics. Everything is validated before the ledger is written:
 * bad input exits 2 and leaves the ledger as it was.
 */
import path from 'node:path';
import type { Command } from 'commander';
import { InvalidInputError } from '../../physics/issue.js';
import { compileConstraints } from '../constraints/compile.js';
import { loadConstraintsFile } from '../constraints/file.js';
import { checkSetName, formatSummary, judgeScan } from '../constraints/judge.js';
import { contextFromLedger, findScan, openLedger } from '../constraints/scan-context.js';
import { SET_NAME } from '../constraints/schema.js';

interface JudgeOptions {
  readonly constraints: string;
  readonly set?: string;
  readonly scan?: string;
  readonly json?: boolean;
}

/** --set, else the file's `set`, else the file name without extension. */
function setName(opts: JudgeOptions, fromFile: string | undefined): string {
  const name = opts.set ?? fromFile ?? path.basename(opts.constraints).replace(/\.[^.]*$/, '');
  if (!SET_NAME.test(name)) {
    throw new InvalidInputError([{
      code: 'invalid_set_name', path: '--set', message: 'constraint set name must be 1-64 letters, digits, _, - or .',
      seen: name, allowed: SET_NAME.source,
    }]);
  }
  return name;
}

export function registerJudge(program: Command): void {
  program
    .command('judge')
    .description('Re-judge the stored observables of a scan against a constraints file, as a new constraint set (no physics is recomputed)')
    .argument('<db>', 'ledger file')
    .requiredOption('--constraints <file>', 'constraints file: JSON {"set"?: NAME, "constraints": [...]}; curve paths relative to it')
    .option('--set <name>', 'name of the new constraint set (default: the file\'s "set", else the file name)')
    .option('--scan <id>', 'scan id or name (needed when the ledger holds several scans)')
    .option('--json', 'print the summary as JSON')
    .action((dbFile: string, opts: JudgeOptions) => {
      const file = loadConstraintsFile(opts.constraints);
      const set = setName(opts, file.set);
      const db = openLedger(dbFile, false);
      try {
        const scan = findScan(db, opts.scan);
        const { compiled, issues } = compileConstraints(file.constraints, contextFromLedger(db, scan, file.baseDir));
        if (!compiled) throw new InvalidInputError(issues);
        checkSetName(db, scan.id, set, compiled);
        for (const w of compiled.warnings) process.stderr.write(`warning: ${w}\n`);
        if (scan.status !== 'done') process.stderr.write(`note: scan ${scan.id} is ${scan.status}; only its stored points were judged\n`);
        const summary = judgeScan(db, scan.id, set, compiled);
        process.stdout.write(opts.json ? `${JSON.stringify(summary)}\n` : formatSummary(summary, `${scan.id} (${scan.name})`));
      } finally {
        db.close();
      }
    });
}
