/**
 * Limit-curve files: a small CSV of (parameter value, upper limit) pairs, and the log-log
 * interpolation applied to it.
 *
 * File format (invented for darksieve):
 *   # lines starting with '#' are comments (source of the curve, confidence level, ...)
 *   m_chi [GeV], sigma_si_p [cm^2]
 *   10, 1.2e-45
 *   30, 4.0e-47
 * The first non-comment line is a header of two fields, each `label [unit]`. The units must match
 * the `versus` parameter and the observable (compared after removing spaces, `^` and `*`, case
 * folded; e.g. `cm^2` = `cm2`, `cm^3/s` = `cm3 s^-1`), so a curve in pb or in keV is refused instead of
 * being misread. Data rows hold two finite positive numbers (log-log needs them positive) with the
 * first column strictly increasing; at least two rows.
 *
 * Interpolation: linear in (ln x, ln y) between table points (shared notes direct.md §6.1; accurate
 * to a few % at >= 10 points per decade, common practice, no source). Outside the table the
 * constraint's out-of-range policy applies (schema.ts).
 */
import type { Issue } from '../../physics/issue.js';
import type { OutOfRangePolicy } from './schema.js';

/** Most data rows accepted in one curve file. */
export const MAX_CURVE_ROWS = 100_000;

export interface LimitCurve {
  /** ascending x values */
  readonly x: readonly number[];
  /** limits at x */
  readonly y: readonly number[];
  /** header labels as written, for provenance */
  readonly header: readonly [string, string];
}

/** Canonical spelling of a unit for comparison. */
export function normalizeUnit(unit: string): string {
  const u = unit.toLowerCase().replace(/\s+|\^|\*/g, '');
  const aliases: Record<string, string> = {
    '': '', '1': '', '-': '', events: '', counts: '', dimensionless: '',
    'cm3s-1': 'cm3/s',
    '1/cm2/s': 'cm-2s-1', '1/(cm2s)': 'cm-2s-1', 'photons/cm2/s': 'cm-2s-1', 'ph/cm2/s': 'cm-2s-1', 'photonscm-2s-1': 'cm-2s-1',
  };
  return aliases[u] ?? u;
}

const HEADER_FIELD = /^\s*([^[\]]*?)\s*\[([^[\]]*)\]\s*$/;

function parseNumber(text: string): number {
  const t = text.trim();
  return t === '' ? NaN : Number(t);
}

/**
 * Parses a curve file's text. `xUnit` / `yUnit` are the units the header must carry; `path` is the
 * constraint's file field (`constraints[2].file`) used in every issue, with the line number.
 * `zeroY` accepts second-column values of 0 (tables that are not interpolated in log y, e.g. photon
 * yields, which vanish towards x = 1).
 */
export function parseCurve(text: string, xUnit: string, yUnit: string, path: string, options: { readonly zeroY?: boolean } = {}): { curve?: LimitCurve; issues: Issue[] } {
  const issues: Issue[] = [];
  const lines = text.split(/\r?\n/);
  let header: [string, string] | null = null;
  const x: number[] = [];
  const y: number[] = [];
  for (let i = 0; i < lines.length && issues.length < 20; i++) {
    const line = lines[i]!.trim();
    if (line === '' || line.startsWith('#')) continue;
    const fields = line.split(',');
    const where = `${path} line ${i + 1}`;
    if (header === null) {
      const parts = fields.map((f) => HEADER_FIELD.exec(f));
      if (fields.length !== 2 || !parts[0] || !parts[1]) {
        issues.push({
          code: 'curve_header', path, message: `${where}: the header must be two fields 'label [unit]', e.g. 'm_chi [${xUnit}], limit [${yUnit}]'`,
          seen: line.slice(0, 80), allowed: `label [${xUnit}], label [${yUnit}]`,
        });
        return { issues };
      }
      const [hx, hy] = [parts[0]!, parts[1]!];
      if (normalizeUnit(hx[2]!) !== normalizeUnit(xUnit)) {
        issues.push({ code: 'curve_unit', path, message: `${where}: first column is in [${hx[2]}] but the parameter is in [${xUnit}]; convert the curve`, seen: hx[2]!, allowed: xUnit || '(dimensionless)' });
      }
      if (normalizeUnit(hy[2]!) !== normalizeUnit(yUnit)) {
        issues.push({ code: 'curve_unit', path, message: `${where}: second column is in [${hy[2]}] but the observable is in [${yUnit}]; convert the curve`, seen: hy[2]!, allowed: yUnit || '(dimensionless)' });
      }
      header = [fields[0]!.trim(), fields[1]!.trim()];
      continue;
    }
    if (fields.length !== 2) {
      issues.push({ code: 'curve_row', path, message: `${where}: a data row must have two comma-separated numbers`, seen: line.slice(0, 80), allowed: 'x, limit' });
      continue;
    }
    const xv = parseNumber(fields[0]!);
    const yv = parseNumber(fields[1]!);
    if (!(Number.isFinite(xv) && xv > 0 && Number.isFinite(yv) && (options.zeroY ? yv >= 0 : yv > 0))) {
      issues.push(
        options.zeroY
          ? { code: 'curve_value', path, message: `${where}: the first value must be a finite number > 0, the second >= 0`, seen: line.slice(0, 80), allowed: 'x > 0, y >= 0' }
          : { code: 'curve_value', path, message: `${where}: both values must be finite numbers > 0 (log-log interpolation)`, seen: line.slice(0, 80), allowed: 'finite numbers > 0' },
      );
      continue;
    }
    if (x.length > 0 && xv <= x[x.length - 1]!) {
      issues.push({ code: 'curve_order', path, message: `${where}: the first column must increase strictly`, seen: `${xv} after ${x[x.length - 1]}`, allowed: `> ${x[x.length - 1]}` });
      continue;
    }
    x.push(xv);
    y.push(yv);
  }
  if (header === null && issues.length === 0) {
    issues.push({ code: 'curve_empty', path, message: `${path}: the curve file has no header and no data`, seen: '(empty)', allowed: 'a header line and at least two data rows' });
  } else if (issues.length === 0 && x.length < 2) {
    issues.push({ code: 'curve_rows', path, message: `${path}: a curve needs at least two data rows`, seen: `${x.length} rows`, allowed: `2 to ${MAX_CURVE_ROWS} rows` });
  } else if (x.length > MAX_CURVE_ROWS) {
    issues.push({ code: 'curve_rows', path, message: `${path}: too many data rows`, seen: `${x.length} rows`, allowed: `2 to ${MAX_CURVE_ROWS} rows` });
  }
  if (issues.length > 0 || header === null) return { issues };
  return { curve: Object.freeze({ x: Object.freeze(x), y: Object.freeze(y), header }), issues };
}

/**
 * The limit at `xv`, or +Infinity / -Infinity for "pass" / "fail" outside the table (any prediction
 * passes +Infinity and fails -Infinity; a NaN prediction fails both, which the caller handles).
 */
export type CurveLookup = (xv: number) => number;

/** Builds the interpolating lookup with the given policies below and above the table. */
export function curveLookup(curve: LimitCurve, below: OutOfRangePolicy, above: OutOfRangePolicy): CurveLookup {
  const n = curve.x.length;
  const lx = Float64Array.from(curve.x, Math.log);
  const ly = Float64Array.from(curve.y, Math.log);
  const x0 = curve.x[0]!;
  const xN = curve.x[n - 1]!;
  const outside = (policy: OutOfRangePolicy, xv: number, xEdge: number, yEdge: number): number => {
    switch (policy) {
      case 'pass': return Infinity;
      case 'fail': return -Infinity;
      case 'clamp': return yEdge;
      case 'proportional': return yEdge * (xv / xEdge);
    }
  };
  return (xv: number): number => {
    if (!(xv > 0)) return NaN;
    if (xv < x0) return outside(below, xv, x0, curve.y[0]!);
    if (xv > xN) return outside(above, xv, xN, curve.y[n - 1]!);
    const t = Math.log(xv);
    let lo = 0;
    let hi = n - 1;
    while (hi - lo > 1) {
      const mid = (lo + hi) >> 1;
      if (lx[mid]! <= t) lo = mid;
      else hi = mid;
    }
    const f = (t - lx[lo]!) / (lx[hi]! - lx[lo]!);
    return Math.exp(ly[lo]! + f * (ly[hi]! - ly[lo]!));
  };
}
