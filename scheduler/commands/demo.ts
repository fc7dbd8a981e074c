/**
 * `darksieve demo [--db FILE] [--workers N] [--quiet]`: runs the INVENTED demo scan of scans/demo/
 * (fictional detectors, satellite and limit curves) on the embedded pool, prints the survivor summary
 * of its constraints, draws one picture, and says where the ledger and the picture are. Running it
 * again resumes an interrupted demo or re-reports a finished one.
 */
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Command } from 'commander';
import { writePlot } from '../plot/plot-plane.js';
import { SPEC_CONSTRAINT_SET } from '../run.js';
import { runAndReport } from './run.js';

export const DEMO_SPEC = fileURLToPath(new URL('../../scans/demo/demo.json', import.meta.url));

interface DemoOptions {
  readonly db: string;
  readonly workers?: string;
  readonly quiet?: boolean;
}

export function registerDemo(program: Command): void {
  program
    .command('demo')
    .description('Run the invented demo scan (scans/demo: fictional detectors, satellite and limit curves) end to end on this machine')
    .option('--db <file>', 'ledger file', path.join('out', 'demo.db'))
    .option('--workers <n>', 'worker threads (default: number of cores)')
    .option('--quiet', 'no progress output')
    .action(async (opts: DemoOptions) => {
      mkdirSync(path.dirname(path.resolve(opts.db)), { recursive: true });
      process.stdout.write(`demo: INVENTED scenario from ${path.relative(process.cwd(), DEMO_SPEC) || DEMO_SPEC} (fictional detectors, satellite and limit curves)\n`);
      const summary = await runAndReport(DEMO_SPEC, { db: opts.db, workers: opts.workers, quiet: opts.quiet });
      if (summary.status !== 'done') return;
      const picture = path.join(path.dirname(summary.dbPath), 'demo-m_chi-m_med.svg');
      const plot = writePlot({
        db: summary.dbPath, scan: String(summary.scanId), set: SPEC_CONSTRAINT_SET, x: 'm_chi', y: 'm_med', color: 'omega_h2', out: picture,
      });
      const db = path.relative(process.cwd(), summary.dbPath) || summary.dbPath;
      process.stdout.write(
        [
          `picture: ${plot.file} (omega_h2 over m_chi and m_med)`,
          'next:',
          `  darksieve survivors ${db} --limit 10`,
          `  darksieve plot ${db} --x m_chi --y sigma_si_p_cm2 --color omega_h2 --out out/demo-si.svg`,
          `  darksieve status ${db}`,
        ].join('\n') + '\n',
      );
    });
}
