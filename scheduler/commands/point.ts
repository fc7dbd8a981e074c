/**
 * `darksieve point [--json] [--spec FILE] name=value ...`: every observable of one model point.
 * Parameters not given take the documented defaults of physics/model.ts; with --spec the scan's
 * halo, detectors, targets and indirect options are used (its axes and constraints are ignored);
 * --sommerfeld turns the Sommerfeld factor on whatever the spec says.
 */
import type { Command } from 'commander';
import { parsePoint, PARAMETERS, allowedText } from '../../physics/model.js';
import { InvalidInputError, type Issue } from '../../physics/issue.js';
import { prepare, evaluate } from '../../physics/evaluate.js';
import { observableUnit } from '../../physics/observables.js';
import { EMPTY_SETUP, type ScanPhysicsSetup } from '../../physics/setup.js';

/** Splits `name=value` arguments; a malformed one is an issue naming it. */
function parseAssignments(args: readonly string[]): { raw: Record<string, string>; issues: Issue[] } {
  const raw: Record<string, string> = {};
  const issues: Issue[] = [];
  for (const arg of args) {
    const eq = arg.indexOf('=');
    if (eq <= 0) {
      issues.push({
        code: 'syntax', path: arg, message: `expected name=value, got '${arg}'`, seen: arg,
        allowed: `name=value with name one of ${PARAMETERS.map((p) => p.name).join(', ')}`,
      });
      continue;
    }
    const name = arg.slice(0, eq).trim();
    if (name in raw) {
      issues.push({ code: 'duplicate', path: name, message: `${name} given more than once`, seen: arg });
      continue;
    }
    raw[name] = arg.slice(eq + 1).trim();
  }
  return { raw, issues };
}

/** The unit shown beside a value; expected events are labelled as such. */
function unitOf(name: string): string {
  return name.startsWith('events_') ? 'events' : observableUnit(name);
}

export function registerPoint(program: Command): void {
  program
    .command('point')
    .description(
      'Print every observable of one model point. Parameters (name=value):\n' +
        PARAMETERS.map((p) => `  ${p.name.padEnd(10)} ${p.doc}; ${allowedText(p)}; default ${p.default ?? 'computed'}`).join('\n'),
    )
    .option('--json', 'print one JSON object keyed by parameter and observable names')
    .option('--spec <file>', 'take halo, detectors, targets and indirect options from this scan spec')
    .option('--sommerfeld', 'multiply the s-wave part of sigma v today by the Sommerfeld factor (Hulthen approximation; scalar and Dirac vector mediators)')
    .argument('[assignments...]', 'name=value pairs')
    .action(async (assignments: string[], opts: { json?: boolean; spec?: string; sommerfeld?: boolean }) => {
      const { raw, issues } = parseAssignments(assignments);
      const parsed = parsePoint(raw);
      const all = [...issues, ...parsed.issues];
      // the spec module (zod, mathjs) is loaded only when a spec is given
      const fromSpec: ScanPhysicsSetup = opts.spec ? await (await import('../spec.js')).loadSpecSetup(opts.spec) : EMPTY_SETUP;
      const setup: ScanPhysicsSetup = opts.sommerfeld ? { ...fromSpec, sommerfeld: 'hulthen' } : fromSpec;
      if (all.length > 0 || !parsed.point) throw new InvalidInputError(all);
      const point = parsed.point;
      const prepared = prepare(setup);
      const obs = evaluate(point, prepared);
      const values: Record<string, number | string | null> = { ...point };
      for (const name of prepared.observableNames) {
        const v = obs.values[name];
        values[name] = v === undefined || !Number.isFinite(v) ? null : v;
      }
      values.flags = obs.flags;
      if (opts.json) {
        process.stdout.write(`${JSON.stringify(values)}\n`);
        return;
      }
      const rows: [string, string, string][] = [];
      for (const p of PARAMETERS) rows.push([p.name, String(values[p.name] ?? 'computed'), p.unit]);
      for (const name of prepared.observableNames) {
        const v = values[name];
        rows.push([name, v === null ? 'n/a' : Number(v).toPrecision(5), unitOf(name)]);
      }
      rows.push(['flags', obs.flags || '(none)', '']);
      const w = Math.max(...rows.map((r) => r[0].length));
      const w2 = Math.max(...rows.map((r) => r[1].length));
      process.stdout.write(rows.map(([a, b, c]) => `${a.padEnd(w)}  ${b.padStart(w2)}  ${c}`.trimEnd()).join('\n') + '\n');
    });
}
