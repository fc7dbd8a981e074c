/**
 * `plot --fix name=value`: pictures of one slice of a scan, holding model parameters at a value.
 *
 * A scan's stored parameter values are rarely typed exactly (a log-spaced axis stores
 * 10 * 100^(1/11)), so a number picks the stored value nearest to it (in log space when both are
 * positive, else linearly) and the slice is the points holding exactly that value; the picture's
 * notes say which value was taken. A text parameter (dm, mediator) must match a stored value. With
 * the other varying parameters fixed, a grid plane has one point per cell again, so the relic line
 * can be drawn where it could not for the mixed slices.
 */
import { InvalidInputError, type Issue } from '../../physics/issue.js';
import { PARAMETERS } from '../../physics/model.js';
import { formatLinear } from './notation.js';
import { quoteId } from '../ledger.js';
import type { LedgerView } from './ledger-view.js';

/** One parameter held at one stored value. */
export interface FixedValue {
  readonly column: string;
  readonly value: number | string;
  /** what was asked for, when a number was rounded to the nearest stored value */
  readonly requested?: number;
}

/** The slice: its conditions as SQL for a table alias ('' for none) and their parameters. */
export interface Slice {
  readonly fixed: readonly FixedValue[];
  /** ` AND alias."col" = ?` for every fixed column */
  sql(alias: string): string;
  readonly params: readonly (number | string)[];
}

export const NO_SLICE: Slice = { fixed: [], sql: () => '', params: [] };

export function makeSlice(fixed: readonly FixedValue[]): Slice {
  if (fixed.length === 0) return NO_SLICE;
  return {
    fixed,
    sql: (alias) => fixed.map((f) => ` AND ${alias ? `${alias}.` : ''}${quoteId(f.column)} = ?`).join(''),
    params: fixed.map((f) => f.value),
  };
}

/** How the slice reads under a picture. */
export function describeSlice(slice: Slice): string | null {
  if (slice.fixed.length === 0) return null;
  const parts = slice.fixed.map((f) => {
    const shown = typeof f.value === 'number' ? formatLinear(f.value) : f.value;
    return f.requested !== undefined && f.requested !== f.value ? `${f.column} = ${shown} (stored value nearest ${formatLinear(f.requested)})` : `${f.column} = ${shown}`;
  });
  return `slice: ${parts.join(', ')}`;
}

/**
 * Resolves `name=value` assignments against the scan's stored values; every problem (unknown or
 * repeated parameter, a plotted axis, an unparsable number, a text value the scan does not hold) is
 * thrown together, naming `--fix`.
 */
export function resolveSlice(view: LedgerView, scanId: number, assignments: readonly string[], axes: readonly string[]): Slice {
  const issues: Issue[] = [];
  const fixed: FixedValue[] = [];
  const stored = new Set(view.pointColumns().map((c) => c.name));
  const parameters = PARAMETERS.filter((p) => stored.has(p.name));
  const allowedNames = parameters.map((p) => p.name).join(', ');
  for (const text of assignments) {
    const eq = text.indexOf('=');
    const name = eq > 0 ? text.slice(0, eq).trim() : '';
    const raw = eq > 0 ? text.slice(eq + 1).trim() : '';
    const param = parameters.find((p) => p.name === name);
    if (!param || raw === '') {
      issues.push({ code: 'bad_assignment', path: '--fix', message: `--fix takes name=value with a model parameter of the scan`, seen: text, allowed: allowedNames });
      continue;
    }
    if (axes.includes(name)) {
      issues.push({ code: 'fixed_axis', path: '--fix', message: `${name} is on an axis of the picture, so it cannot also be fixed`, seen: text, allowed: 'a parameter not on --x or --y' });
      continue;
    }
    if (fixed.some((f) => f.column === name)) {
      issues.push({ code: 'repeated', path: '--fix', message: `${name} is fixed twice`, seen: text, allowed: 'each parameter once' });
      continue;
    }
    const col = quoteId(name);
    if (param.kind === 'enum') {
      const values = (view.db.prepare(`SELECT DISTINCT ${col} FROM points WHERE scan_id = ? AND ${col} IS NOT NULL`).raw().all(scanId) as [string][]).map((r) => r[0]);
      if (!values.includes(raw)) {
        issues.push({ code: 'not_in_scan', path: '--fix', message: `the scan holds no point with ${name} = ${raw}`, seen: raw, allowed: values.join(', ') || '(none stored)' });
        continue;
      }
      fixed.push({ column: name, value: raw });
      continue;
    }
    const requested = Number(raw);
    if (!Number.isFinite(requested)) {
      issues.push({ code: 'type', path: '--fix', message: `${name} takes a number`, seen: raw, allowed: 'a finite number' });
      continue;
    }
    // nearest stored value: in log space when both are positive (log-spaced axes), else linearly
    const nearest = view.db.prepare(
      `SELECT ${col} AS v FROM points WHERE scan_id = ? AND ${col} IS NOT NULL
        ORDER BY CASE WHEN ${col} > 0 AND ? > 0 THEN abs(ln(${col}) - ln(?)) ELSE abs(${col} - ?) END, ${col} LIMIT 1`,
    ).get(scanId, requested, requested, requested) as { v: number } | undefined;
    if (!nearest) {
      issues.push({ code: 'not_in_scan', path: '--fix', message: `the scan stores no value of ${name}`, seen: raw, allowed: '(none stored)' });
      continue;
    }
    fixed.push({ column: name, value: nearest.v, requested });
  }
  if (issues.length) throw new InvalidInputError(issues);
  return makeSlice(fixed);
}
