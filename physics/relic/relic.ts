/**
 * Relic-abundance stage: Omega h^2, x_f and <sigma v>(x_f) of one model point from its
 * annihilation cross section sigma(s).
 *
 * Data flow: sigma(s) (physics/annihilation.ts) -> <sigma v>(x) tabulated on a coarse grid on
 * [tableXMin, tableXMax] (physics/relic/thermal-average.ts; near poles and thresholds from sigma
 * sampled once per point on a graded rule in sqrt(s), physics/relic/energy-grid.ts) -> starting guess for x_f (the standard
 * approximation, Kolb & Turner 1990 §5.2, relic.md eq. 3.1 with c = 1/2, reading the coarse
 * table; a guess below tableXMin + 3 re-tabulates from x = 1, so that the solver never integrates
 * directly below the table) -> the table refined where its spline misses checked midpoints (tolerance weighted by
 * x_f / x, the weight of <sigma v>(x) in Omega) -> full Boltzmann solution with the analytic tail
 * (physics/relic/boltzmann.ts) -> Omega h^2 = C (m/GeV) Y_0 (relic.md eq. 1.9, C =
 * OMEGA_YIELD_FACTOR of physics/constants.ts).
 *
 * Dirac dark matter, convention A of relic.md §4: the chi population alone is tracked with g = 2 and
 * <sigma v> = <sigma v>(chi chibar -> SM) (the Annihilation of a Dirac point describes chi chibar),
 * and Omega_DM = Omega_chi + Omega_chibar = 2 Omega_chi (no asymmetry). Majorana: g = 2, sigma of
 * chi chi, Omega = Omega_chi. The required Dirac <sigma v>(chi chibar) is ~2.07x the Majorana one,
 * not 2x (relic.md §4, §6.3).
 *
 * Physics outcomes are results, never exceptions: sigma = 0 everywhere gives omegaH2 = NaN with the
 * flag 'no_annihilation'; x_f < 3 adds 'relativistic_freezeout' (quantum statistics and the
 * relativistic start make the result indicative only, relic.md §1.4, §2.5). Invalid input (mass not
 * finite and positive, unknown knob, knob out of range) throws InvalidInputError naming the field.
 *
 * Validity: standard radiation-dominated cosmology with Saikawa-Shirai 2018 dof, kinetic equilibrium,
 * no coannihilation, no Sommerfeld enhancement (relic.md §2.5).
 * Accuracy: numerical error <~ 1e-3 at the default knobs against tight knobs
 * (tests/bench/relic-bench.ts); physics systematics are larger (dof table 0.1-0.3%, C 0.6%,
 * QCD-region dof ~10% for m ~ 1-10 GeV; relic.md §1.5, §5).
 */
import type { Annihilation } from '../annihilation-model.js';
import { GEV2_TO_CM3S, OMEGA_YIELD_FACTOR, PLANCK_MASS_GEV } from '../constants.js';
import { dofInto } from '../dof.js';
import { InvalidInputError, type Issue } from '../issue.js';
import type { DmKind } from '../model.js';
import { solveFreezeOut } from './boltzmann.js';
import { tabulateThermalAverage, thermalAverage, type SigmaVTable, type ThermalAverageKnobs } from './thermal-average.js';

export interface RelicResult {
  /** Omega h^2 of all dark matter (chi + chibar for Dirac); NaN when there is no annihilation */
  readonly omegaH2: number;
  /** freeze-out x = m/T where Y = 1.5 Y_eq */
  readonly xF: number;
  /** <sigma v>(x_f) in cm^3/s (chi chibar for Dirac, chi chi for Majorana) */
  readonly sigvFoCm3s: number;
  readonly flags: readonly string[];
}

/** Numerical knobs of the relic stage (not physics inputs). */
export interface RelicKnobs {
  readonly laguerreNodes: number;
  readonly tMax: number;
  readonly quadRelTol: number;
  readonly poleCoreWidths: number;
  readonly gridNodes: number;
  readonly tableNodesPerDecade: number;
  readonly tableRelTol: number;
  readonly tableXMin: number;
  readonly tableXMax: number;
  readonly stepX: number;
  readonly quasiStaticDeviation: number;
  readonly equilibriumCut: number;
  readonly tailPanelWidth: number;
}

export interface KnobSpec {
  readonly name: keyof RelicKnobs;
  readonly default: number;
  readonly min: number;
  readonly max: number;
  readonly integer: boolean;
  readonly doc: string;
  readonly why: string;
}

/** Every numerical knob of the relic stage, declared once. Stored with each scan. */
export const RELIC_KNOBS: readonly KnobSpec[] = Object.freeze([
  {
    name: 'laguerreNodes', default: 12, min: 4, max: 64, integer: true,
    doc: 'nodes of the t^{1/2} e^{-t} Gauss-Laguerre rule for <sigma v>(x) when no pole or threshold lies in range',
    why: 'the integrand over the weight is smooth (s-wave 1/beta absorbed by the weight); 12 nodes give ~1e-6 for x >= 10; a listed pole below threshold closer than 10 in t hands the x over to graded pieces (12 nodes would be off by 2e-4 at distance 1)',
  },
  {
    name: 'tMax', default: 60, min: 30, max: 400, integer: false,
    doc: 'upper cut of t = (sqrt(s) - 2m)/T in the piecewise thermal average',
    why: 'the weight is e^{-t}: e^{-100} times polynomial growth is far below double precision',
  },
  {
    name: 'quadRelTol', default: 1e-4, min: 1e-13, max: 1e-3, integer: false,
    doc: 'relative tolerance of the adaptive Gauss-Kronrod over the mapped pieces near poles and thresholds',
    why: 'the G7-K15 estimate is pessimistic: at 1e-4 the measured error is ~1e-8 (vs tight knobs), far below the solver error; the mapped pieces converge on the first pass',
  },
  {
    name: 'poleCoreWidths', default: 2, min: 0.5, max: 20, integer: false,
    doc: 'half-width of the tan-mapped core around a pole, in units of the pole half-width w in t = (sqrt(s) - 2m)/T',
    why: 'the tan map is singular at theta = +-pi/2; a core of +-2w keeps that 0.46 rad outside the core, so one G7-K15 pass converges; log-mapped wings take over beyond',
  },
  {
    name: 'gridNodes', default: 5, min: 4, max: 32, integer: true,
    doc: 'Gauss-Legendre nodes per piece of the per-point sigma(E) rule that serves the <sigma v> table near poles and thresholds (pieces graded by 2 towards each singular point)',
    why: 'each piece is at most as long as its distance to the nearest singularity, so 5 nodes give < 1e-7 on the bench set against the adaptive direct integral (Bernstein ellipse rho >= 4.6), 8 nodes ~1e-11',
  },
  {
    name: 'tableNodesPerDecade', default: 2, min: 2, max: 200, integer: true,
    doc: 'starting nodes per decade of x in the <sigma v>(x) table (cubic spline in ln-ln), refined under tableRelTol',
    why: 'smooth s/p-wave need ~2 (plus the checked midpoints); the checks of tableRelTol add nodes only where <sigma v> bends (resonances, thresholds)',
  },
  {
    name: 'tableRelTol', default: 3e-3, min: 1e-9, max: 0.1, integer: false,
    doc: 'largest miss of the local cubic at an interval midpoint, in ln<sigma v>, before the interval is halved (scaled up by x/x_f beyond x_f)',
    why: 'the checked midpoints stay as nodes, so the final spline is ~10x better than the check; table and quadrature together move Omega by < 1e-4 on the bench set',
  },
  {
    name: 'tableXMin', default: 3, min: 1, max: 20, integer: false,
    doc: 'first table node (x) unless the x_f guess is below tableXMin + 3 (then the table starts at x = 1); below the table <sigma v> is evaluated directly',
    why: 'the x_f guess is read from the table and the solver starts at x_f - 3, so the table must start below typical x_f ~ 10-30',
  },
  {
    name: 'tableXMax', default: 1e4, min: 100, max: 1e6, integer: false,
    doc: 'last table node; <sigma v> is held constant beyond',
    why: 'relic.md §2.4: beyond 1e4 the remaining depletion is ~x_f/x and <sigma v> is at its v -> 0 limit',
  },
  {
    name: 'stepX', default: 0.25, min: 0.005, max: 2, integer: false,
    doc: 'TR-BDF2 step in x through freeze-out',
    why: 'relic.md §3.3: second order, ~4e-4 relative at 0.25; the analytic tail removes the late steps',
  },
  {
    name: 'quasiStaticDeviation', default: 0.03, min: 1e-3, max: 0.3, integer: false,
    doc: '(Y - Y_eq)/Y_eq at the quasi-static start',
    why: 'relic.md §3.3: starting anywhere in 0.01-0.3 changes Omega h^2 by < 1e-5',
  },
  {
    name: 'equilibriumCut', default: 1e-3, min: 1e-8, max: 0.05, integer: false,
    doc: 'switch to the analytic tail once Y_eq < equilibriumCut * Y',
    why: 'the neglected Y_eq^2 term is then ~1e-6 relative of the annihilation term',
  },
  {
    name: 'tailPanelWidth', default: 0.5, min: 0.01, max: 2, integer: false,
    doc: 'widest panel, in ln x, of the composite 5-point Gauss-Legendre rule of the tail integral int L dx (split at the dof fit junction)',
    why: 'the tail carries 30-70% of the depletion; at 0.5 the rule is within 2.6e-6 of adaptive Gauss-Kronrod at 1e-12 (60 evaluations; the dof QCD structure sets the width)',
  },
] satisfies KnobSpec[]);

/** Defaults of RELIC_KNOBS as one object. */
export const DEFAULT_RELIC_KNOBS: RelicKnobs = Object.freeze(
  Object.fromEntries(RELIC_KNOBS.map((k) => [k.name, k.default])) as unknown as RelicKnobs,
);

/** Merges overrides with the defaults, checking names and ranges. */
export function resolveRelicKnobs(overrides: Partial<RelicKnobs> = {}): RelicKnobs {
  // the common case (no overrides): the defaults were checked once, at module load
  if (overrides === DEFAULT_RELIC_KNOBS || Object.keys(overrides).length === 0) return DEFAULT_RELIC_KNOBS;
  const issues: Issue[] = [];
  const known = new Set(RELIC_KNOBS.map((k) => k.name as string));
  for (const name of Object.keys(overrides)) {
    if (!known.has(name)) issues.push({ code: 'unknown_knob', path: `relicKnobs.${name}`, message: `unknown relic knob '${name}'`, seen: name, allowed: [...known].join(', ') });
  }
  for (const k of RELIC_KNOBS) {
    const v = overrides[k.name];
    if (v === undefined) continue;
    if (typeof v !== 'number' || !(v >= k.min && v <= k.max) || (k.integer && !Number.isInteger(v))) {
      issues.push({ code: 'knob_out_of_range', path: `relicKnobs.${k.name}`, message: `${k.name} must be ${k.integer ? 'an integer' : 'a number'} in [${k.min}, ${k.max}]`, seen: String(v), allowed: `[${k.min}, ${k.max}]` });
    }
  }
  if (issues.length > 0) throw new InvalidInputError(issues);
  return Object.freeze({ ...DEFAULT_RELIC_KNOBS, ...overrides });
}

/** Internal degrees of freedom of the tracked population (relic.md §4). */
const G_CHI = 2;
/** lowest x at which freeze-out is followed (Maxwell-Boltzmann is poor below, relic.md §1.4) */
const X_START_MIN = 1;
/** x_f below this is flagged 'relativistic_freezeout' */
const X_RELATIVISTIC = 3;
/** narrowest table interval in ln x that the refinement still halves */
const TABLE_MIN_STEP = 0.005;
/**
 * an x_f guess below tableXMin + this starts the table at X_START_MIN instead (the solver starts at
 * x_f - 3; measured on the point-bench grid: a margin of 5 re-tabulated points with x_f 6-8 that never
 * read below the table)
 */
const LOW_GUESS_MARGIN = 3;
/** sqrt(45/8)/(2 pi^3) of relic.md eq. (3.1) */
const XF_APPROX_PREFACTOR = Math.sqrt(45 / 8) / (2 * Math.PI ** 3);

/** Relic abundance of one model point. */
export function relicAbundance(ann: Annihilation, dm: DmKind, knobOverrides?: Partial<RelicKnobs>): RelicResult {
  const knobs = resolveRelicKnobs(knobOverrides);
  const m = ann.mChiGeV;
  if (!(m > 0) || !Number.isFinite(m)) {
    throw new InvalidInputError([{ code: 'out_of_range', path: 'm_chi', message: 'm_chi must be a finite positive mass in GeV', seen: String(m), allowed: '(0, inf)' }]);
  }
  if (dm !== 'dirac' && dm !== 'majorana') {
    throw new InvalidInputError([{ code: 'invalid_enum', path: 'dm', message: "dm must be 'dirac' or 'majorana'", seen: String(dm), allowed: 'dirac, majorana' }]);
  }
  const tk: ThermalAverageKnobs = {
    laguerreNodes: knobs.laguerreNodes,
    tMax: knobs.tMax,
    relTol: knobs.quadRelTol,
    poleCoreWidths: knobs.poleCoreWidths,
    gridNodes: knobs.gridNodes,
  };
  // no final state at all (e.g. Majorana dark matter with a vector mediator): sigma, the sum over
  // channels (physics/annihilation-model.ts), vanishes identically
  if (ann.channels.length === 0) return noAnnihilation();

  // coarse table first: the x_f guess reads it, and the refinement weights by that guess
  const xMin = knobs.tableXMin;
  const xMax = Math.max(knobs.tableXMax, 2 * xMin);
  let coarse = tabulateThermalAverage(ann, xMin, xMax, tableNodes(knobs, xMin, xMax), tk);
  let xFGuess = approximateFreezeOut(m, coarse, xMin);
  if (xFGuess < xMin + LOW_GUESS_MARGIN && xMin > X_START_MIN) {
    // the solver would start (near x_f - 3) below the table, where every <sigma v> is a direct
    // adaptive integral (~100 sigma calls each): tabulate from X_START_MIN instead
    coarse = tabulateThermalAverage(ann, X_START_MIN, xMax, tableNodes(knobs, X_START_MIN, xMax), tk);
    xFGuess = approximateFreezeOut(m, coarse, X_START_MIN);
  }
  if (Number.isNaN(xFGuess)) return noAnnihilation();
  const table = coarse.refined({ relTol: knobs.tableRelTol, xWeight: xFGuess, minStep: TABLE_MIN_STEP });
  if (table.allZero && thermalAverage(ann, X_START_MIN, tk) === 0) return noAnnihilation();

  const solution = solveFreezeOut(
    { mChiGeV: m, gChi: G_CHI, sigmaV: table.at.bind(table), sigmaVConstantFromX: xMax, xStartMin: X_START_MIN, xFGuess },
    knobs,
  );
  const populations = dm === 'dirac' ? 2 : 1;
  const omegaH2 = populations * OMEGA_YIELD_FACTOR * m * solution.yieldToday;
  const flags: string[] = [];
  if (solution.xF < X_RELATIVISTIC) flags.push('relativistic_freezeout');
  return Object.freeze({
    omegaH2,
    xF: solution.xF,
    sigvFoCm3s: table.at(solution.xF) * GEV2_TO_CM3S,
    flags: Object.freeze(flags),
  });
}

/** nodes of the coarse table on [x0, xMax] */
function tableNodes(knobs: RelicKnobs, x0: number, xMax: number): number {
  return Math.max(4, Math.ceil(knobs.tableNodesPerDecade * Math.log10(xMax / x0)) + 1);
}

function noAnnihilation(): RelicResult {
  return Object.freeze({ omegaH2: NaN, xF: NaN, sigvFoCm3s: 0, flags: Object.freeze(['no_annihilation']) });
}

/**
 * Starting guess for x_f: fixed-point iteration of relic.md eq. (3.1) with c = 1/2 and <sigma v>
 * at the trial x from the table, read no lower than xRead (the table's start: below it, the value at
 * xRead stands in, a guess only). NaN when it vanishes at x = 20 and at x = 1 (no annihilation).
 */
function approximateFreezeOut(m: number, table: SigmaVTable, xRead: number): number {
  const dof = new Float64Array(3);
  const c = 0.5;
  let x = 20;
  for (let iter = 0; iter < 12; iter++) {
    const sv = table.at(Math.max(x, xRead));
    if (!(sv > 0)) {
      if (x === X_START_MIN) return table.at(X_START_MIN) > 0 ? X_START_MIN : NaN;
      x = X_START_MIN;
      continue;
    }
    dofInto(m / x, dof);
    const gStarHalf = (dof[1]! / Math.sqrt(dof[0]!)) * (1 + dof[2]! / 3);
    const arg = (c * (c + 2) * XF_APPROX_PREFACTOR * G_CHI * m * PLANCK_MASS_GEV * sv * gStarHalf) / (dof[1]! * Math.sqrt(x));
    let next = Math.min(1e3, Math.max(X_START_MIN, Math.log(arg)));
    if (iter >= 4) next = 0.5 * (x + next); // damp oscillations near resonances
    if (Math.abs(next - x) < 0.05) return next;
    x = next;
  }
  return x;
}
