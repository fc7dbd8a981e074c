/**
 * Runs the judge and survivors commands in-process (fast enough for dozens of malformed inputs),
 * with the exit-code mapping of scheduler/cli.ts: InvalidInputError -> 2 with the issue printer,
 * other errors -> 1. Captures stdout and stderr.
 */
import { Command, CommanderError } from 'commander';
import { InvalidInputError } from '../../physics/issue.js';
import { registerJudge } from '../../scheduler/commands/judge.js';
import { registerSurvivors } from '../../scheduler/commands/survivors.js';
import { EXIT_BAD_INPUT, EXIT_RUNTIME } from '../../scheduler/exit-codes.js';
import { formatIssues } from '../../scheduler/report-issues.js';

export interface CliResult {
  readonly code: number;
  readonly stdout: string;
  readonly stderr: string;
}

export async function runCommand(argv: readonly string[]): Promise<CliResult> {
  const program = new Command('darksieve').exitOverride().configureOutput({ writeOut: () => {}, writeErr: () => {} });
  registerJudge(program);
  registerSurvivors(program);
  let stdout = '';
  let stderr = '';
  const out = process.stdout.write.bind(process.stdout);
  const err = process.stderr.write.bind(process.stderr);
  process.stdout.write = ((chunk: string | Uint8Array) => { stdout += String(chunk); return true; }) as typeof process.stdout.write;
  process.stderr.write = ((chunk: string | Uint8Array) => { stderr += String(chunk); return true; }) as typeof process.stderr.write;
  let code = 0;
  try {
    await program.parseAsync([...argv], { from: 'user' });
  } catch (e) {
    if (e instanceof CommanderError) code = EXIT_BAD_INPUT;
    else if (e instanceof InvalidInputError) {
      stderr += formatIssues(e.issues);
      code = EXIT_BAD_INPUT;
    } else {
      stderr += `darksieve: ${e instanceof Error ? e.message : String(e)}\n`;
      code = EXIT_RUNTIME;
    }
  } finally {
    process.stdout.write = out;
    process.stderr.write = err;
  }
  return { code, stdout, stderr };
}
