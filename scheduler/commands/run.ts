/**
 * `darksieve run SPEC [--db FILE] [--workers N] [--chunk N] [--quiet] [--new] [--redis URL]`: starts a scan, or
 * resumes it when the same command runs again (only chunks not done are evaluated).
 */
import type { Command } from 'commander';
import { EXIT_RUNTIME } from '../exit-codes.js';
import { describeRun, runScan, type RunSummary } from '../run.js';

export interface RunCommandOptions {
  readonly db?: string;
  readonly workers?: string;
  readonly chunk?: string;
  readonly quiet?: boolean;
  readonly new?: boolean;
  /** Redis URL: evaluate on `darksieve worker` processes instead of the embedded pool */
  readonly redis?: string;
}

const optionalInt = (text: string | undefined): number | undefined => (text === undefined ? undefined : Number(text));

/**
 * A module URL standing in for physics/evaluate.ts, for tests of the scheduling mechanics through the
 * real CLI (signals, resume). Such a module's prepare() gives its own knobs, so a ledger made with it
 * is never resumed with the real physics (knobs_changed) and vice versa.
 */
export const PHYSICS_MODULE_ENV = 'DARKSIEVE_PHYSICS_MODULE';

/** Runs a spec with CLI options and prints the summary; shared by `run` and `demo`. */
export async function runAndReport(specPath: string, opts: RunCommandOptions): Promise<RunSummary> {
  const physicsModule = process.env[PHYSICS_MODULE_ENV] || undefined;
  if (physicsModule) process.stderr.write(`note: physics replaced by ${physicsModule} (${PHYSICS_MODULE_ENV}; for tests of the scan mechanics)\n`);
  const summary = await runScan({
    specPath, dbPath: opts.db, workers: optionalInt(opts.workers), chunkSize: optionalInt(opts.chunk),
    quiet: opts.quiet ?? false, newScan: opts.new ?? false, handleSignals: true, redisUrl: opts.redis, physicsModule,
  });
  const out = describeRun(summary);
  process.stdout.write(`${out.join('\n')}\n`);
  if (summary.status !== 'done') process.exitCode = EXIT_RUNTIME;
  return summary;
}

export function registerRun(program: Command): void {
  program
    .command('run')
    .description('Start a scan, or resume it: running the same command again evaluates only the chunks not yet done')
    .argument('<spec>', 'scan spec (JSON)')
    .option('--db <file>', 'ledger file (default: <spec name>.db in the current directory)')
    .option('--workers <n>', 'worker threads (default: number of cores)')
    .option('--chunk <n>', 'points per chunk for a new scan (default: about 1.5 s of compute, from a short calibration)')
    .option('--quiet', 'no progress output')
    .option('--new', 'start a new scan id even if the ledger holds a scan of this name')
    .option('--redis <url>', 'evaluate on `darksieve worker` processes through this Redis (redis:// or rediss://; default: $REDIS_URL if set, else the embedded pool)')
    .action(async (spec: string, opts: RunCommandOptions) => {
      await runAndReport(spec, { ...opts, redis: opts.redis ?? (process.env.REDIS_URL || undefined) });
    });
}
