/**
 * Turns validated constraints (schema.ts) into one fast per-point test, against the columns of a
 * particular scan. Everything that does not depend on the point is done here, once: curve files are
 * read and interpolation tables built, event-count upper limits computed (physics/direct/statistics),
 * expressions compiled. Problems are returned as issues with the constraint's path
 * (`constraints[2].file`), all at once.
 *
 * Spin-independent curves with a `target` and spin-dependent proton/neutron pairs combine the
 * nucleon cross sections for the target nucleus (isospin.ts): isotope tables and the model's relative
 * coupling signs are prepared here, the per-point work is a loop over at most nine isotopes.
 *
 * Per point, `judgePoint` reads the input columns (NULL as NaN), computes the relic fraction xi when
 * a relic constraint rescales (xi = omega_h2 / central below the central value, else 1; direct
 * signals scale with xi, annihilation signals today with xi^2, shared notes direct.md §6.2), and sets
 * one 0/1 verdict per constraint. A point survives when it passes every constraint.
 *
 * The resolved form (`definition`) has every default filled in and the curve tables inline, so a
 * stored constraint set can be understood and re-applied without its files.
 */
import { readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { InvalidInputError, type Issue } from '../../physics/issue.js';
import { PARAMETERS } from '../../physics/model.js';
import { observableUnit } from '../../physics/observables.js';
import { feldmanCousinsUpperLimit, poissonUpperLimit } from '../../physics/direct/statistics.js';
import { DEFAULT_HADRONIC, type Hadronic } from '../../physics/setup.js';
import { compileExpression, type ExpressionScope } from '../expressions.js';
import { curveLookup, parseCurve, type CurveLookup, type LimitCurve } from './curve-file.js';
import {
  ELEMENT_SYMBOLS,
  SD_ELEMENT_SYMBOLS,
  couplingSigns,
  effectiveSiCm2,
  sdCorrelation,
  sdSumRule,
  sdTarget,
  siTarget,
  type CouplingSigns,
} from './isospin.js';
import {
  DEFAULT_RHO_CURVE_GEVCM3,
  constraintColumn,
  type Constraint,
  type EventsLimitConstraint,
  type ExpressionConstraint,
  type FluxLimitConstraint,
  type LimitCurveConstraint,
  type OutOfRangePolicy,
  type RelicConstraint,
  type SdLimitPairConstraint,
} from './schema.js';

/** What the constraints are applied to: the numeric columns of a scan and its local density. */
export interface ConstraintContext {
  /** numeric parameter columns of the scan's points (e.g. m_chi, m_med, g_chi, ...) */
  readonly parameters: readonly string[];
  /** numeric observable columns (omega_h2, ..., events_<detector>, flux_<target>_cm2s) */
  readonly observables: readonly string[];
  /** the scan's local dark-matter density, GeV/cm^3 (for limit-curve rescaling) */
  readonly rhoLocalGeVcm3: number;
  /** directory that relative curve-file paths start from (the spec's or constraints file's) */
  readonly baseDir: string;
  /**
   * the scan's hadronic inputs (setup.hadronic), for the relative signs of the nucleon couplings
   * used by targeted SI curves and SD pairs; default physics/setup DEFAULT_HADRONIC
   */
  readonly hadronic?: Hadronic;
}

/** A constraint with every default filled in and what was derived from its inputs. */
export type ResolvedConstraint = Readonly<Record<string, unknown>> & { readonly kind: string; readonly name: string };

export interface CompiledConstraints {
  /** verdict columns, one per constraint, in list order */
  readonly columns: readonly string[];
  /** point columns `judgePoint` reads, in the order it expects them */
  readonly inputs: readonly string[];
  /** JSON-able resolved constraints (stored with the verdicts) */
  readonly definition: readonly ResolvedConstraint[];
  /** notes worth showing (e.g. a Poisson limit clamped at zero) */
  readonly warnings: readonly string[];
  /**
   * Judges one point: `values[i]` is input column i (NaN for NULL); writes 0/1 per constraint into
   * `verdicts` and returns whether the point survives.
   */
  judgePoint(values: Float64Array, verdicts: Uint8Array): boolean;
}

/** Largest curve file read (bytes). */
const MAX_CURVE_FILE_BYTES = 10 * 1024 * 1024;

/** Annihilation signals today scale with xi^2, direct-detection signals with xi (direct.md §6.2). */
export function rescalePower(observable: string): 0 | 1 | 2 {
  if (/^sigma_s[id]_[pn]_cm2$/.test(observable) || observable.startsWith('events_')) return 1;
  if (observable === 'sigv0_cm3s' || /^flux_.+_cm2s$/.test(observable)) return 2;
  return 0;
}

function parameterUnit(name: string): string {
  return PARAMETERS.find((p) => p.name === name)?.unit ?? '';
}

type Test = (v: Float64Array, xi: number) => boolean;

interface Builder {
  readonly ctx: ConstraintContext;
  readonly issues: Issue[];
  readonly warnings: string[];
  readonly inputs: string[];
  /** shared scope for expressions, refreshed per point when any expression exists */
  readonly scope: Record<string, number>;
  /** relative nucleon-coupling signs of the model, derived on first use */
  signs?: CouplingSigns;
}

/** Index of a point column in the input vector, adding it on first use. */
function input(b: Builder, column: string): number {
  let i = b.inputs.indexOf(column);
  if (i < 0) {
    b.inputs.push(column);
    i = b.inputs.length - 1;
  }
  return i;
}

function relicTest(b: Builder, c: RelicConstraint): { test: Test; resolved: Record<string, unknown> } {
  const iOmega = input(b, 'omega_h2');
  if (c.bound === 'band') {
    // bounds computed once, so the stored definition states exactly what is applied
    const lower = c.central - c.nSigma * c.sigma;
    const upper = c.central + c.nSigma * c.sigma;
    return {
      test: (v) => v[iOmega]! >= lower && v[iOmega]! <= upper,
      resolved: { lower, upper },
    };
  }
  const max = c.max ?? c.central + c.nSigma * c.sigma;
  return { test: (v) => v[iOmega]! <= max, resolved: { max } };
}

/** Reads the curve file `relPath`; issues go to the constraint field `where` (`constraints[2].file`). */
function readCurve(b: Builder, relPath: string, where: string, xUnit: string, yUnit: string): { curve?: LimitCurve; file: string } {
  const file = path.resolve(b.ctx.baseDir, relPath);
  let text: string;
  try {
    const size = statSync(file).size;
    if (size > MAX_CURVE_FILE_BYTES) {
      b.issues.push({ code: 'curve_file', path: where, message: `curve file ${file} is larger than ${MAX_CURVE_FILE_BYTES} bytes`, seen: `${size} bytes`, allowed: `at most ${MAX_CURVE_FILE_BYTES} bytes` });
      return { file };
    }
    text = readFileSync(file, 'utf8');
  } catch (err) {
    const reason = (err as NodeJS.ErrnoException).code ?? (err instanceof Error ? err.message : String(err));
    b.issues.push({ code: 'curve_file', path: where, message: `cannot read curve file ${file} (${reason}); paths are relative to the spec or constraints file`, seen: relPath, allowed: 'a readable CSV file' });
    return { file };
  }
  const parsed = parseCurve(text, xUnit, yUnit, where);
  b.issues.push(...parsed.issues);
  return parsed.curve ? { curve: parsed.curve, file } : { file };
}

function policies(c: { outOfRange: LimitCurveConstraint['outOfRange'] }): { below: OutOfRangePolicy; above: OutOfRangePolicy } {
  return typeof c.outOfRange === 'string' ? { below: c.outOfRange, above: c.outOfRange } : c.outOfRange;
}

function checkVersus(b: Builder, versus: string, at: string): void {
  if (!b.ctx.parameters.includes(versus)) {
    b.issues.push({ code: 'unknown_parameter', path: `${at}.versus`, message: `versus must be a numeric parameter of the scan`, seen: versus, allowed: b.ctx.parameters.join(', ') });
  }
}

/** Issues when the scan lacks a column a combined test reads (m_chi and the nucleon cross sections). */
function checkColumns(b: Builder, columns: readonly string[], where: string, purpose: string): void {
  for (const col of columns) {
    const known = col === 'm_chi' ? b.ctx.parameters.includes(col) : b.ctx.observables.includes(col);
    if (!known) {
      b.issues.push({ code: col === 'm_chi' ? 'unknown_parameter' : 'unknown_observable', path: where, message: `${purpose} reads ${col}, which the scan does not have`, seen: col, allowed: 'a scan that stores m_chi and the nucleon cross sections' });
    }
  }
}

/** The model's coupling signs (once per compilation); an issue on `where` when they are not unique. */
function signsFor(b: Builder, where: string, which: 'si' | 'sd'): 1 | -1 | null {
  b.signs ??= couplingSigns(b.ctx.hadronic ?? DEFAULT_HADRONIC);
  const sign = b.signs[which];
  if (sign === undefined) {
    b.issues.push({ code: 'isospin_sign', path: where, message: `the relative sign of the proton and neutron couplings differs between the model's structures (${b.signs.detail}); a combined comparison needs one sign`, seen: which, allowed: 'a model whose structures share the sign' });
    return null;
  }
  return sign;
}

function limitCurveTest(b: Builder, c: LimitCurveConstraint, at: string): { test: Test; resolved: Record<string, unknown> } | null {
  const before = b.issues.length;
  checkVersus(b, c.versus, at);
  if (!b.ctx.observables.includes(c.observable)) {
    b.issues.push({ code: 'unknown_observable', path: `${at}.observable`, message: `observable must be a numeric observable of the scan`, seen: c.observable, allowed: b.ctx.observables.join(', ') });
  }
  const isCrossSection = /^sigma_s[id]_[pn]_cm2$/.test(c.observable);
  if (c.rhoCurveGeVcm3 !== undefined && !isCrossSection) {
    b.issues.push({ code: 'invalid', path: `${at}.rhoCurveGeVcm3`, message: 'rhoCurveGeVcm3 applies only to direct-detection cross sections (sigma_*_cm2)', seen: String(c.rhoCurveGeVcm3), allowed: 'absent for this observable' });
  }
  let signFnFp: 1 | -1 | null = null;
  if (c.target !== undefined) {
    if (!/^sigma_si_[pn]_cm2$/.test(c.observable)) {
      b.issues.push({ code: 'invalid', path: `${at}.target`, message: 'target applies only to spin-independent cross sections (isospin-violation rescaling)', seen: c.target, allowed: 'absent for this observable, or observable sigma_si_p_cm2 / sigma_si_n_cm2' });
    } else if (!ELEMENT_SYMBOLS.includes(c.target)) {
      b.issues.push({ code: 'unknown_element', path: `${at}.target`, message: `no isotope data for element '${c.target}' (a single element symbol, case as written in the periodic table)`, seen: c.target, allowed: ELEMENT_SYMBOLS.join(', ') });
    } else {
      checkColumns(b, ['m_chi', 'sigma_si_p_cm2', 'sigma_si_n_cm2'], `${at}.target`, 'a limit curve with a target');
      signFnFp = signsFor(b, `${at}.target`, 'si');
    }
  }
  if (b.issues.length > before) return null;
  const { curve, file } = readCurve(b, c.file, `${at}.file`, parameterUnit(c.versus), observableUnit(c.observable));
  if (!curve) return null;
  const policy = policies(c);
  const rhoCurve = isCrossSection ? (c.rhoCurveGeVcm3 ?? DEFAULT_RHO_CURVE_GEVCM3) : null;
  const rhoFactor = rhoCurve === null ? 1 : b.ctx.rhoLocalGeVcm3 / rhoCurve;
  const power = rescalePower(c.observable);
  const lookup = curveLookup(curve, policy.below, policy.above);
  const iX = input(b, c.versus);
  const resolved = { file, outOfRange: policy, rhoCurveGeVcm3: rhoCurve, rhoFactor, rescalePower: power, curve: { header: curve.header, x: curve.x, y: curve.y } };
  if (c.target !== undefined && signFnFp !== null) {
    const t = siTarget(c.target);
    const iM = input(b, 'm_chi');
    const iP = input(b, 'sigma_si_p_cm2');
    const iN = input(b, 'sigma_si_n_cm2');
    const sign = signFnFp;
    const test: Test = (v, xi) => {
      const limit = lookup(v[iX]!);
      if (limit === Infinity) return true;
      return effectiveSiCm2(t, v[iM]!, v[iP]!, v[iN]!, sign) * rhoFactor * xi <= limit;
    };
    return { test, resolved: { ...resolved, compared: 'sigma_si_eff_cm2', fnOverFpSign: sign, isospin: 'direct.md §6.3 isotope sum (Feng et al. 2011)' } };
  }
  const iY = input(b, c.observable);
  const test: Test = (v, xi) => {
    const limit = lookup(v[iX]!);
    if (limit === Infinity) return true;
    const scale = power === 0 ? rhoFactor : power === 1 ? rhoFactor * xi : rhoFactor * xi * xi;
    return v[iY]! * scale <= limit;
  };
  return { test, resolved };
}

function sdLimitPairTest(b: Builder, c: SdLimitPairConstraint, at: string): { test: Test; resolved: Record<string, unknown> } | null {
  const before = b.issues.length;
  checkVersus(b, c.versus, at);
  checkColumns(b, ['sigma_sd_p_cm2'], `${at}.proton`, 'a proton-only SD curve');
  checkColumns(b, ['sigma_sd_n_cm2'], `${at}.neutron`, 'a neutron-only SD curve');
  let signApAn: 1 | -1 | null = null;
  if (c.combine === 'sum_rule' && c.target !== undefined) {
    if (!SD_ELEMENT_SYMBOLS.includes(c.target)) {
      const known = ELEMENT_SYMBOLS.includes(c.target);
      b.issues.push({
        code: known ? 'no_spin_data' : 'unknown_element', path: `${at}.target`,
        message: known ? `element '${c.target}' has no isotope with both proton and neutron spin in the table (physics/direct/isotopes.ts), so its SD sum rule is undefined` : `no isotope data for element '${c.target}'`,
        seen: c.target, allowed: SD_ELEMENT_SYMBOLS.join(', '),
      });
    } else {
      checkColumns(b, ['m_chi'], `${at}.target`, 'the SD sum rule');
      signApAn = signsFor(b, `${at}.target`, 'sd');
    }
  }
  if (b.issues.length > before) return null;
  const xUnit = parameterUnit(c.versus);
  const proton = readCurve(b, c.proton, `${at}.proton`, xUnit, 'cm^2');
  const neutron = readCurve(b, c.neutron, `${at}.neutron`, xUnit, 'cm^2');
  if (!proton.curve || !neutron.curve) return null;
  const policy = policies(c);
  const rhoCurve = c.rhoCurveGeVcm3 ?? DEFAULT_RHO_CURVE_GEVCM3;
  const rhoFactor = b.ctx.rhoLocalGeVcm3 / rhoCurve;
  const lookP: CurveLookup = curveLookup(proton.curve, policy.below, policy.above);
  const lookN: CurveLookup = curveLookup(neutron.curve, policy.below, policy.above);
  const iX = input(b, c.versus);
  const iP = input(b, 'sigma_sd_p_cm2');
  const iN = input(b, 'sigma_sd_n_cm2');
  // x = sigma / limit; a curve without constraint here ("pass", +Infinity) contributes 0 whatever the
  // prediction (as a lone limit_curve would); a NaN prediction gives NaN, which fails
  const ratios = (v: Float64Array, xi: number): [number, number] | null => {
    const limP = lookP(v[iX]!);
    const limN = lookN(v[iX]!);
    if (limP === -Infinity || limN === -Infinity) return null;
    const scale = rhoFactor * xi;
    return [limP === Infinity ? 0 : (v[iP]! * scale) / limP, limN === Infinity ? 0 : (v[iN]! * scale) / limN];
  };
  const table = (r: { curve?: LimitCurve; file: string }) => ({ file: r.file, header: r.curve!.header, x: r.curve!.x, y: r.curve!.y });
  const resolved = { outOfRange: policy, rhoCurveGeVcm3: rhoCurve, rhoFactor, rescalePower: 1, curves: { proton: table(proton), neutron: table(neutron) } };
  if (c.combine === 'separate') {
    const test: Test = (v, xi) => {
      const r = ratios(v, xi);
      return r !== null && r[0] <= 1 && r[1] <= 1;
    };
    return { test, resolved };
  }
  const t = sdTarget(c.target!);
  const iM = input(b, 'm_chi');
  const sign = signApAn!;
  const test: Test = (v, xi) => {
    const r = ratios(v, xi);
    return r !== null && sdSumRule(r[0], r[1], sign * sdCorrelation(t, v[iM]!)) <= 1;
  };
  return { test, resolved: { ...resolved, apAnSign: sign, sumRule: 'x + y + 2 sign(a_p a_n) rho sqrt(x y) <= 1, direct.md §6.4' } };
}

/** physics/direct/statistics reports its own argument names; these are the constraint's fields. */
const STATISTICS_FIELDS: Readonly<Record<string, string>> = { n: 'observed', b: 'background', cl: 'cl' };

function eventsLimitTest(b: Builder, c: EventsLimitConstraint, at: string): { test: Test; resolved: Record<string, unknown> } | null {
  const column = `events_${c.detector}`;
  if (!b.ctx.observables.includes(column)) {
    const detectors = b.ctx.observables.filter((o) => o.startsWith('events_')).map((o) => o.slice('events_'.length));
    b.issues.push({ code: 'unknown_detector', path: `${at}.detector`, message: `no detector '${c.detector}' in the scan`, seen: c.detector, allowed: detectors.length > 0 ? detectors.join(', ') : '(the scan defines no detectors)' });
    return null;
  }
  let limitEvents: number;
  let clampedAtZero = false;
  try {
    if (c.method === 'poisson') {
      const lim = poissonUpperLimit(c.observed, c.background, c.cl);
      limitEvents = lim.signal;
      clampedAtZero = lim.clampedAtZero;
    } else {
      limitEvents = feldmanCousinsUpperLimit(c.observed, c.background, c.cl);
    }
  } catch (err) {
    if (!(err instanceof InvalidInputError)) throw err;
    for (const i of err.issues) b.issues.push({ ...i, path: `${at}.${STATISTICS_FIELDS[i.path] ?? i.path}` });
    return null;
  }
  if (clampedAtZero) {
    b.warnings.push(`${at}: background ${c.background} exceeds what ${c.observed} observed events allow at CL ${c.cl}; the Poisson limit is clamped at 0 events, so every point with a signal fails`);
  }
  const iE = input(b, column);
  return { test: (v, xi) => v[iE]! * xi <= limitEvents, resolved: { column, limitEvents, clampedAtZero } };
}

function fluxLimitTest(b: Builder, c: FluxLimitConstraint, at: string): { test: Test; resolved: Record<string, unknown> } | null {
  const column = `flux_${c.target}_cm2s`;
  if (!b.ctx.observables.includes(column)) {
    const targets = b.ctx.observables.filter((o) => /^flux_.+_cm2s$/.test(o)).map((o) => o.slice(5, -5));
    b.issues.push({ code: 'unknown_target', path: `${at}.target`, message: `no target '${c.target}' in the scan`, seen: c.target, allowed: targets.length > 0 ? targets.join(', ') : '(the scan defines no targets)' });
    return null;
  }
  const iF = input(b, column);
  return { test: (v, xi) => v[iF]! * xi * xi <= c.maxCm2s, resolved: { column } };
}

/** The names an expression constraint may read: parameters, observables and xi. */
function expressionNames(ctx: ConstraintContext): string[] {
  return [...ctx.parameters, ...ctx.observables, 'xi'];
}

function expressionTest(b: Builder, c: ExpressionConstraint, at: string): { test: Test; resolved: Record<string, unknown> } | null {
  const compiled = compileExpression(c.expr, expressionNames(b.ctx), `${at}.expr`, { expect: 'boolean' });
  if (compiled.issues.length > 0 || !compiled.evaluate) {
    b.issues.push(...compiled.issues);
    return null;
  }
  const evaluate = compiled.evaluate;
  const reads = compiled.symbols.filter((s) => s !== 'xi').map((s) => [s, input(b, s)] as const);
  const scope = b.scope;
  const test: Test = (v, xi) => {
    for (const [name, i] of reads) scope[name] = v[i]!;
    scope.xi = xi;
    return evaluate(scope as ExpressionScope) === true;
  };
  return { test, resolved: { reads: compiled.symbols } };
}

/**
 * Compiles constraints against a scan. `pathPrefix` is where the list sits in its file
 * (`constraints`). Returns every issue; `compiled` only when there are none.
 */
export function compileConstraints(
  constraints: readonly Constraint[],
  ctx: ConstraintContext,
  pathPrefix = 'constraints',
): { compiled?: CompiledConstraints; issues: Issue[] } {
  const b: Builder = { ctx, issues: [], warnings: [], inputs: [], scope: {} };
  const columns = constraints.map(constraintColumn);
  columns.forEach((col, i) => {
    const first = columns.indexOf(col);
    if (first !== i) {
      b.issues.push({ code: 'duplicate_name', path: `${pathPrefix}[${i}].name`, message: `constraint name '${col}' is already used by ${pathPrefix}[${first}]`, seen: col, allowed: 'a name not used by another constraint' });
    }
  });
  const rescalers = constraints.flatMap((c, i) => (c.kind === 'relic' && c.rescale ? [i] : []));
  for (const i of rescalers.slice(1)) {
    b.issues.push({ code: 'invalid', path: `${pathPrefix}[${i}].rescale`, message: `only one relic constraint may rescale signals; ${pathPrefix}[${rescalers[0]}] already does`, seen: 'true', allowed: 'false' });
  }
  const tests: Test[] = [];
  const definition: ResolvedConstraint[] = [];
  constraints.forEach((c, i) => {
    const at = `${pathPrefix}[${i}]`;
    const built =
      c.kind === 'relic' ? relicTest(b, c)
      : c.kind === 'limit_curve' ? limitCurveTest(b, c, at)
      : c.kind === 'sd_limit_pair' ? sdLimitPairTest(b, c, at)
      : c.kind === 'events_limit' ? eventsLimitTest(b, c, at)
      : c.kind === 'flux_limit' ? fluxLimitTest(b, c, at)
      : expressionTest(b, c, at);
    if (!built) return;
    tests.push(built.test);
    definition.push(Object.freeze({ ...c, name: columns[i]!, ...built.resolved }));
  });
  if (b.issues.length > 0) return { issues: b.issues };

  const relic = rescalers.length > 0 ? (constraints[rescalers[0]!] as RelicConstraint) : null;
  const iOmega = relic ? input(b, 'omega_h2') : -1;
  const central = relic?.central ?? 1;
  const n = tests.length;
  const judgePoint = (values: Float64Array, verdicts: Uint8Array): boolean => {
    let xi = 1;
    if (iOmega >= 0) {
      const omega = values[iOmega]!;
      xi = omega < central ? omega / central : omega >= central ? 1 : NaN;
    }
    let survives = true;
    for (let k = 0; k < n; k++) {
      const ok = tests[k]!(values, xi);
      verdicts[k] = ok ? 1 : 0;
      if (!ok) survives = false;
    }
    return survives;
  };
  const compiled: CompiledConstraints = Object.freeze({
    columns: Object.freeze(columns),
    inputs: Object.freeze([...b.inputs]),
    definition: Object.freeze(definition),
    warnings: Object.freeze(b.warnings),
    judgePoint,
  });
  return { compiled, issues: [] };
}
