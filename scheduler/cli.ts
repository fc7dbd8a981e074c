/**
 * The darksieve command line. Each verb lives in its own module under scheduler/commands/ and
 * registers itself here; this file only wires them together and maps failures to exit codes
 * (0 success, 1 runtime failure, 2 bad input).
 */
import { Command, CommanderError } from 'commander';
import { InvalidInputError } from '../physics/issue.js';
import { formatIssues } from './report-issues.js';
import { EXIT_BAD_INPUT, EXIT_RUNTIME } from './exit-codes.js';

type Registrar = (program: Command) => void;

/**
 * Verbs and the module that defines each. A module is loaded only when its verb is used (or for
 * the overall --help), so `darksieve point` does not pay for the plotting or queue libraries.
 */
const COMMANDS: Readonly<Record<string, () => Promise<Registrar>>> = {
  demo: async () => (await import('./commands/demo.js')).registerDemo,
  check: async () => (await import('./commands/check.js')).registerCheck,
  run: async () => (await import('./commands/run.js')).registerRun,
  worker: async () => (await import('./commands/worker.js')).registerWorker,
  status: async () => (await import('./commands/status.js')).registerStatus,
  judge: async () => (await import('./commands/judge.js')).registerJudge,
  survivors: async () => (await import('./commands/survivors.js')).registerSurvivors,
  plot: async () => (await import('./commands/plot.js')).registerPlot,
  report: async () => (await import('./commands/report.js')).registerReport,
  point: async () => (await import('./commands/point.js')).registerPoint,
};

function newProgram(): Command {
  return new Command('darksieve')
    .description(
      'Scan simplified dark-matter models (Dirac or Majorana fermion with a scalar, pseudoscalar, vector or ' +
        'axial-vector mediator) against the relic abundance, direct detection and indirect detection. ' +
        'Results are research approximations; see README for model assumptions and validity limits. ' +
        'The demo scenario (darksieve demo, scans/demo) is invented: fictional detectors, halo and limit curves.',
    )
    .version(process.env.npm_package_version ?? '0.1.0')
    .exitOverride()
    .configureOutput({ outputError: (str, write) => write(str) });
}

/** Registers the verb named in argv, or every verb when none is recognisable (help, typos). */
async function buildProgram(argv: readonly string[]): Promise<Command> {
  const program = newProgram();
  const verb = argv.find((a) => !a.startsWith('-'));
  const load = verb !== undefined ? COMMANDS[verb] : undefined;
  const registrars = load ? [await load()] : await Promise.all(Object.values(COMMANDS).map((l) => l()));
  for (const register of registrars) register(program);
  return program;
}

/** Runs a command body and turns its failures into the documented exit codes. */
export async function runCli(argv: readonly string[]): Promise<number> {
  try {
    const program = await buildProgram(argv);
    await program.parseAsync([...argv], { from: 'user' });
    return process.exitCode === undefined ? 0 : Number(process.exitCode);
  } catch (err) {
    if (err instanceof CommanderError) {
      if (err.code === 'commander.helpDisplayed' || err.code === 'commander.version' || err.exitCode === 0) return 0;
      return EXIT_BAD_INPUT;
    }
    if (err instanceof InvalidInputError) {
      process.stderr.write(formatIssues(err.issues));
      return EXIT_BAD_INPUT;
    }
    const message = err instanceof Error ? err.message : String(err);
    process.stderr.write(`darksieve: ${message}\n`);
    if (process.env.DARKSIEVE_DEBUG && err instanceof Error && err.stack) process.stderr.write(`${err.stack}\n`);
    return EXIT_RUNTIME;
  }
}

process.exitCode = await runCli(process.argv.slice(2));
