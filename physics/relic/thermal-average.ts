/**
 * Thermally averaged annihilation cross section <sigma v>(x), x = m_chi / T, from the full sigma(s).
 *
 * What: the Gondolo-Gelmini single integral (Gondolo & Gelmini 1991, Nucl. Phys. B360, 145; shared
 * notes relic.md eqs. 2.1 and 2.3) for two particles of equal mass with Maxwell-Boltzmann statistics,
 * written in t = (sqrt(s) - 2m)/T with exponentially scaled Bessel functions K~ = e^z K(z):
 *
 *   <sigma v>(x) = int_0^inf F(t) dt,
 *   F(t) = 4 sigma(s) (t/x)(1 + t/4x)(1 + t/2x)^2 K~_1(2x + t) e^{-t} / K~_2(x)^2,
 *   s = 4 m^2 (1 + t/2x)^2,
 *
 * so the e^{+-2x} factors cancel analytically and nothing overflows up to x ~ 1e5. The result is the
 * thermal average of the Lorentz-invariant sigma v_lab; a constant sigma v_lab returns that constant
 * at every x (relic.md §2.1). Units: GeV^-2.
 *
 * Method per x:
 *  - Smooth case (no channel threshold in [0, tMax] and no s-channel pole close to it): generalized
 *    Gauss-Laguerre with weight t^{1/2} e^{-t} (laguerreNodes nodes). An s-wave sigma ~ 1/beta makes
 *    F ~ sqrt(t) e^{-t}, so F / (sqrt(t) e^{-t}) is smooth and the rule converges exponentially.
 *  - Otherwise (Griest & Seckel 1991, PRD 43, 3191, exceptions ii and iii; relic.md §2.4): a pole
 *    of mass M and width Gamma puts complex singularities of F at s = M^2 +- i M Gamma, i.e. at
 *    t = t_p +- i w with sqrt(s) = M sqrt(1 +- i Gamma/M) solved exactly. [0, tMax] is cut into
 *    pieces on each of which the integrand is smooth on the piece's own scale, and every piece is
 *    mapped so that a fixed-order rule converges fast (geometric grading towards a near
 *    singularity, as in hp finite elements: Babuska & Guo 1986, and the sinh/log maps for nearly
 *    singular integrals, Johnston & Elliott 2005, Math. Comp. 74, 1127 [memory]):
 *      core  |t - t_p| < poleCoreWidths * w: s = M^2 + M Gamma tan(theta) absorbs the Breit-Wigner
 *            peak exactly (relic.md §2.4), used only while the core is narrower than the thermal
 *            scale (|Delta t| < 1), so e^{-t} stays smooth in theta;
 *      wings poleCoreWidths * w < |t - t_p| < 1: t = t_p +- w e^v (the 1/(t - t_p)^2 fall-off is
 *            smooth in v), split into chunks of length <= WING_CHUNK in v;
 *      plain pieces beyond, with breakpoints at t_p +- R 4^k (R = max(1, poleCoreWidths * w)), so
 *            that every piece ends at least a third of its length away from the singularity; a
 *            broad pole (poleCoreWidths * w >= 1) gets no core or wings, only a cut at t_p.
 *    A pole listed in Annihilation.subthresholdPoles (mediator just below 2m) has no peak in the
 *    range, but its singularity at distance d from t = 0 makes sigma vary on the scale d: when
 *    d < SUBTHRESHOLD_REACH the range is cut at d 2^k from t = 0 (12-node Laguerre would be off by
 *    2e-4 at d = 1 and by 40% at d = 0.05). Thresholds cut the range too. A piece that starts at a square-root edge (t = 0 or a channel
 *    threshold) is mapped by q = q_edge + u^2 in its own variable to remove the edge. All pieces are
 *    integrated together by adaptive Gauss-Kronrod (physics/numerics/quadrature.ts) to relTol, one
 *    unit of a master variable per piece; a well-mapped piece converges on its first G7-K15 pass.
 *    The range above tMax is dropped (its weight is < e^{-tMax} times polynomial growth).
 *  - Table: <sigma v> is computed once per model point on nodes uniform in ln x between xMin and
 *    xMax and interpolated by a cubic spline of ln<sigma v> against ln x (not-a-knot ends). The
 *    table's nodes use the Laguerre rule where the integrand is smooth and otherwise the per-point
 *    sigma(E) grid of physics/relic/energy-grid.ts (sigma sampled once, reused at every x; the
 *    adaptive pieces above are the direct path, used below xMin and as the test reference). Beyond
 *    xMax the value is held constant (relic.md §2.4: the v -> 0 limit; the late contribution is
 *    ~x_f/x of the depletion); below xMin the integral is evaluated directly.
 *
 * Validity: equal-mass pair, kinetic equilibrium (no early kinetic decoupling, relic.md §2.5),
 * Maxwell-Boltzmann statistics (quantum corrections ~e^{-x}/(2 sqrt 2): 2% at x = 3).
 * Accuracy: the quadrature meets relTol (~1e-9 at tight knobs: tests/relic/thermal-average.test.ts,
 * against scipy quad of eq. 2.1); the table interpolation error is measured by
 * tests/bench/relic-bench.ts.
 */
import type { Annihilation } from '../annihilation-model.js';
import { ASYMPTOTIC_Z_MIN, besselK1Scaled, besselK2Scaled, LARGE_Z_MIN, sqrtZK1ScaledAsymptotic, sqrtZK1ScaledOfInverse } from '../numerics/bessel.js';
import { gaussLaguerre, integrate, type GaussRule } from '../numerics/quadrature.js';
import { buildEnergyGrid, gridThermalAverage, poleInDelta, type EnergyGrid } from './energy-grid.js';

/** Numerical knobs of the thermal average (declared with docs in physics/relic/relic.ts). */
export interface ThermalAverageKnobs {
  /** Gauss-Laguerre (alpha = 1/2) nodes for the smooth case */
  readonly laguerreNodes: number;
  /** upper cut of the t = (sqrt(s) - 2m)/T integral in the piecewise case */
  readonly tMax: number;
  /** relative tolerance of the adaptive Gauss-Kronrod over the pieces */
  readonly relTol: number;
  /** half-width of the tan-mapped core around a pole, in units of its half-width w in t */
  readonly poleCoreWidths: number;
  /** Gauss-Legendre nodes per piece of the per-point sigma(E) grid (table path near poles and thresholds) */
  readonly gridNodes: number;
}

/** thermal scale of the integrand in t (the e^{-t} factor) */
const THERMAL_SCALE = 1;
/** ratio of successive plain breakpoints away from a pole */
const GRADING = 4;
/** longest wing chunk in v = ln|t - t_p| / w (keeps the Breit-Wigner poles at Im v = pi/2 well outside) */
const WING_CHUNK = 3;
/**
 * A listed sub-threshold pole whose singularity lies within this distance of t = 0 makes the
 * integrand non-smooth for the Laguerre rule: measured 12-node Laguerre error vs the graded rule,
 * pole at distance d in t: 4e-1 (d = 0.05), 2e-4 (1), 5e-8 (3), 1e-9 (5), < 1e-12 (10).
 */
const SUBTHRESHOLD_REACH = 10;

const enum PieceMap {
  /** t itself */
  Plain,
  /** s = M^2 + M Gamma tan(theta) */
  Tan,
  /** t = t_p + w e^v */
  WingUp,
  /** t = t_p - w e^v */
  WingDown,
}

/**
 * One piece of the t-range, [a, b] in t, and its map from y in [0, 1]: y -> q (linear, or
 * q = q0 + (q1 - q0) y^2 when the piece starts at a square-root edge) -> t.
 */
interface Piece {
  readonly a: number;
  readonly b: number;
  readonly map: PieceMap;
  /** square-root edge at t = a */
  readonly edge: boolean;
  /** the piece's own variable at t = a and at t = b (t, theta or v) */
  readonly q0: number;
  readonly q1: number;
  /** Tan: M^2 and M Gamma (s); wings: t_p and w (t) */
  readonly p0: number;
  readonly p1: number;
}

/** A pole as seen in t at one x. */
interface PoleInT {
  readonly tp: number;
  readonly w: number;
  readonly massGeV: number;
  readonly widthGeV: number;
}

/** Thermal average at one x, GeV^-2. */
export function thermalAverage(ann: Annihilation, x: number, knobs: ThermalAverageKnobs): number {
  if (!(x > 0) || !Number.isFinite(x)) return NaN;
  const m = ann.mChiGeV;
  const pieces = piecesOf(ann, x, knobs);
  const norm = 4 / (besselK2Scaled(x) ** 2);
  if (pieces === null) return norm * laguerreSum(ann, x, knobs.laguerreNodes);
  // F(t) without the constant prefactor
  const f = (t: number): number => {
    const r = t / (2 * x);
    const s = 4 * m * m * (1 + r) * (1 + r);
    const sigma = ann.sigmaTotalGeV2(s);
    if (sigma === 0) return 0;
    return sigma * (t / x) * (1 + 0.5 * r) * (1 + r) * (1 + r) * besselK1Scaled(2 * x + t) * Math.exp(-t);
  };
  const last = pieces.length - 1;
  const master = (xi: number): number => {
    const k = Math.min(last, Math.floor(xi));
    return mappedIntegrand(f, pieces[k]!, xi - k, m, x);
  };
  const breakpoints: number[] = [];
  for (let k = 1; k <= last; k++) breakpoints.push(k);
  const total = integrate(master, 0, pieces.length, { relTol: knobs.relTol, breakpoints, maxIntervals: 50 * pieces.length + 200 }).value;
  return norm * total;
}

/** Smooth case: sum_i w_i F(t_i) / (t_i^{1/2} e^{-t_i}) with the alpha = 1/2 Laguerre rule. */
function laguerreSum(ann: Annihilation, x: number, n: number): number {
  return laguerreRuleSum(ann, x, gaussLaguerre(n, 0.5));
}

function laguerreRuleSum(ann: Annihilation, x: number, rule: GaussRule): number {
  const n = rule.nodes.length;
  const m = ann.mChiGeV;
  const invX = 1 / x;
  // every node has z = 2x + t >= 2x: the cheapest form of sqrt(z) K~_1(z) valid there (as in
  // physics/relic/energy-grid.ts), K~_1(z) sqrt(t) = sqrt(z) K~_1(z) sqrt(t/z)
  const form = 2 * x >= ASYMPTOTIC_Z_MIN ? 2 : 2 * x >= LARGE_Z_MIN ? 1 : 0;
  let sum = 0;
  for (let i = 0; i < n; i++) {
    const t = rule.nodes[i]!;
    const r = 0.5 * t * invX;
    const s = 4 * m * m * (1 + r) * (1 + r);
    const sigma = ann.sigmaTotalGeV2(s);
    if (sigma === 0) continue;
    const u = 1 / (2 * x + t);
    const k1SqrtT = form === 2
      ? sqrtZK1ScaledAsymptotic(u) * Math.sqrt(t * u)
      : form === 1 ? sqrtZK1ScaledOfInverse(u) * Math.sqrt(t * u) : besselK1Scaled(2 * x + t) * Math.sqrt(t);
    // F / (sqrt(t) e^{-t}) = sigma sqrt(t)/x (1 + t/4x)(1 + t/2x)^2 K~_1(2x + t)
    sum += rule.weights[i]! * sigma * invX * (1 + 0.5 * r) * (1 + r) * (1 + r) * k1SqrtT;
  }
  return sum;
}

/** The poles of ann in t at this x: t_p +- i w from sqrt(s) = M sqrt(1 +- i Gamma/M). */
function polesInT(ann: Annihilation, x: number): PoleInT[] {
  const m = ann.mChiGeV;
  const out: PoleInT[] = [];
  for (const pole of ann.poles) {
    const mm = pole.massGeV;
    if (!(mm > 2 * m) || !(pole.widthGeV > 0)) continue;
    const g = pole.widthGeV / mm;
    // sqrt(1 + i g) = re + i im
    const re = Math.sqrt(0.5 * (Math.sqrt(1 + g * g) + 1));
    const im = g / (2 * re);
    out.push({ tp: ((mm * re - 2 * m) * x) / m, w: (mm * im * x) / m, massGeV: mm, widthGeV: pole.widthGeV });
  }
  return out;
}

/** The pieces of [0, tMax], or null when no threshold lies in it and no pole is near (smooth case). */
function piecesOf(ann: Annihilation, x: number, knobs: ThermalAverageKnobs): Piece[] | null {
  const m = ann.mChiGeV;
  const tMax = knobs.tMax;
  const c = knobs.poleCoreWidths;
  const edges: number[] = [0];
  for (const e of ann.thresholdsGeV) {
    const t = ((e - 2 * m) * x) / m;
    if (t > 0 && t < tMax) edges.push(t);
  }
  // a pole matters when its singularity lies within tMax of the range
  const poles = polesInT(ann, x).filter((p) => p.tp < 2 * tMax && p.w < tMax);
  // a pole below threshold: pieces graded by GRADING from t = 0, the first as long as the
  // singularity's distance from t = 0 (square-root mapped like every piece starting at 0)
  const below: number[] = [];
  const pole = new Float64Array(2);
  for (const p of ann.subthresholdPoles ?? []) {
    if (!(p.massGeV > 0) || !(p.widthGeV >= 0)) continue;
    poleInDelta(m, p.massGeV, p.widthGeV, pole);
    const d = (Math.hypot(pole[0]!, pole[1]!) * x) / m;
    if (d < SUBTHRESHOLD_REACH) for (let c = Math.max(d, 1e-12 * tMax); c < tMax; c *= GRADING) below.push(c);
  }
  if (edges.length === 1 && poles.length === 0 && below.length === 0) return null;
  const cuts = [...edges, ...below, tMax];
  for (const p of poles) {
    const narrow = c * p.w < THERMAL_SCALE;
    const r = narrow ? THERMAL_SCALE : c * p.w;
    cuts.push(p.tp);
    if (narrow) {
      cuts.push(p.tp - c * p.w, p.tp + c * p.w);
      // wing chunks in v = ln(|t - t_p| / w), from ln c to ln(R / w)
      const v0 = Math.log(c);
      const v1 = Math.log(r / p.w);
      const chunks = Math.ceil((v1 - v0) / WING_CHUNK);
      for (let j = 1; j < chunks; j++) {
        const d = p.w * Math.exp(v0 + ((v1 - v0) * j) / chunks);
        cuts.push(p.tp - d, p.tp + d);
      }
    }
    for (let d = r; d < 2 * tMax; d *= GRADING) cuts.push(p.tp - d, p.tp + d);
  }
  const sorted = [...new Set(cuts.filter((t) => t >= 0 && t <= tMax))].sort((p, q) => p - q);
  const edgeSet = new Set(edges);
  const pieces: Piece[] = [];
  for (let i = 0; i + 1 < sorted.length; i++) {
    const a = sorted[i]!;
    const b = sorted[i + 1]!;
    if (!(b > a)) continue;
    const mid = 0.5 * (a + b);
    const edge = edgeSet.has(a);
    // the narrowest pole whose core or wing holds the piece decides the map
    let best: PoleInT | null = null;
    for (const p of poles) {
      if (c * p.w < THERMAL_SCALE && Math.abs(mid - p.tp) < THERMAL_SCALE && (best === null || p.w < best.w)) best = p;
    }
    if (best === null) {
      pieces.push({ a, b, map: PieceMap.Plain, edge, q0: a, q1: b, p0: 0, p1: 0 });
    } else if (Math.abs(mid - best.tp) < c * best.w) {
      const m2 = best.massGeV * best.massGeV;
      const mg = best.massGeV * best.widthGeV;
      const sOf = (t: number): number => (2 * m + (t * m) / x) ** 2;
      pieces.push({ a, b, map: PieceMap.Tan, edge, q0: Math.atan((sOf(a) - m2) / mg), q1: Math.atan((sOf(b) - m2) / mg), p0: m2, p1: mg });
    } else {
      const up = mid > best.tp;
      const vOf = (t: number): number => Math.log(Math.abs(t - best.tp) / best.w);
      pieces.push({ a, b, map: up ? PieceMap.WingUp : PieceMap.WingDown, edge, q0: vOf(a), q1: vOf(b), p0: best.tp, p1: best.w });
    }
  }
  return pieces;
}

/** F dt/dy on piece p at y in [0, 1]. */
function mappedIntegrand(f: (t: number) => number, p: Piece, y: number, m: number, x: number): number {
  // y -> q with the square-root edge (t = a, q = q0) at y = 0 removed by q = q0 + (q1 - q0) y^2
  const span = p.q1 - p.q0;
  const q = p.edge ? p.q0 + span * y * y : p.q0 + span * y;
  const dq = p.edge ? 2 * span * y : span;
  if (p.map === PieceMap.Plain) return dq * f(q);
  if (p.map === PieceMap.Tan) {
    const cos = Math.cos(q);
    const e = Math.sqrt(p.p0 + p.p1 * Math.tan(q));
    // rounding can put t a hair outside the piece; the integrand is continuous there
    const t = Math.min(p.b, Math.max(p.a, ((e - 2 * m) * x) / m));
    // dt/dtheta = (x/m) (1/(2 sqrt s)) M Gamma / cos^2(theta)
    return (dq * f(t) * ((x / m) * p.p1)) / (2 * e * cos * cos);
  }
  // wings: t = t_p +- w e^v, |dt/dv| = w e^v; on the lower wing v falls as t rises (q1 < q0), and
  // the sign restores dt/dy > 0
  const d = p.p1 * Math.exp(q);
  return p.map === PieceMap.WingUp ? dq * d * f(p.p0 + d) : -dq * d * f(p.p0 - d);
}

// ---------------------------------------------------------------- table in ln x

/** <sigma v>(x) tabulated once per model point. */
export interface SigmaVTable {
  /** first node, x */
  readonly xMin: number;
  /** last node, x; held constant beyond */
  readonly xMax: number;
  /** number of nodes (after refinement) */
  readonly nodes: number;
  /** <sigma v>(x) in GeV^-2 (direct evaluation below xMin, spline inside, constant above xMax) */
  at(x: number): number;
  /** true when every node is exactly zero (no annihilation at any sampled temperature) */
  readonly allZero: boolean;
  /** the same table with its nodes refined under `refine` (the existing nodes are reused) */
  refined(refine: TableRefinement): SigmaVTable;
}

/**
 * Error control of the table: every interval of the starting grid is checked at its midpoint in
 * ln x, where the cubic through the four nearest nodes must match the direct value to
 * relTol * max(1, x / xWeight) in ln<sigma v>; otherwise the interval is halved and both halves are
 * checked again. The midpoint is kept as a node either way. Intervals below x_f / 2 are left
 * unchecked (the solver starts near x_f - 3). The tolerance grows as x / xWeight
 * because an error of <sigma v> at x > x_f changes 1/Y_0 with weight ~ x_f / x per unit ln x
 * (relic.md eq. 3.2: int lambda <sigma v> dx / x^2).
 */
export interface TableRefinement {
  readonly relTol: number;
  /** x_f estimate: the tolerance grows as x / xWeight above it; intervals below xWeight / 2 are not checked */
  readonly xWeight: number;
  /** smallest interval in ln x that is still halved */
  readonly minStep: number;
}

/** Smallest <sigma v> carried in the log-spline (GeV^-2); zeros are floored here. */
const LOG_FLOOR = 1e-300;
/** at most this many nodes per table (guards pathological sigma(s)) */
const MAX_TABLE_NODES = 400;

/**
 * Tabulates <sigma v> on `nodes` points uniform in ln x on [xMin, xMax] (nodes >= 4), refined
 * where the interpolation misses the direct value when `refine` is given.
 */
export function tabulateThermalAverage(
  ann: Annihilation,
  xMin: number,
  xMax: number,
  nodes: number,
  knobs: ThermalAverageKnobs,
  refine?: TableRefinement,
): SigmaVTable {
  if (!(nodes >= 4) || !(xMax > xMin) || !(xMin > 0)) {
    throw new RangeError(`tabulateThermalAverage: need nodes >= 4 and 0 < xMin < xMax, got nodes=${nodes}, xMin=${xMin}, xMax=${xMax}`);
  }
  const lnValue = new TableAverager(ann, xMin, xMax, knobs);
  const u0 = Math.log(xMin);
  const uEnd = Math.log(xMax);
  const du = (uEnd - u0) / (nodes - 1);
  const us: number[] = [];
  const ys: number[] = [];
  for (let i = 0; i < nodes; i++) {
    const u = i === nodes - 1 ? uEnd : u0 + i * du;
    us.push(u);
    ys.push(lnValue.at(u));
  }
  if (refine) refineTable(us, ys, lnValue, refine);
  return new SplineTable(ann, knobs, xMin, xMax, us, ys, lnValue);
}

/**
 * ln<sigma v> at u = ln x for x in [xMin, xMax], the table's evaluator (floored at LOG_FLOOR): the
 * Laguerre rule where the integrand is smooth at this x (same test as the direct path: no threshold
 * within tMax, no pole within 2 tMax in t; a listed sub-threshold pole must lie beyond 2 tMax too),
 * otherwise the per-point sigma(E) grid (physics/relic/energy-grid.ts), built on first need and
 * reused for every later x. A class, not a closure: one object per point, no function objects.
 */
class TableAverager {
  private readonly ann: Annihilation;
  private readonly m: number;
  private readonly xMin: number;
  private readonly xMax: number;
  private readonly tMax: number;
  private readonly gridNodes: number;
  private readonly rule: GaussRule;
  private readonly thresholds: Float64Array;
  private readonly poleRe: Float64Array;
  private readonly poleIm: Float64Array;
  /** the grid serves x only below the last x at which some singular point is within reach */
  private readonly xGrid: number;
  private grid: EnergyGrid | null = null;

  constructor(ann: Annihilation, xMin: number, xMax: number, knobs: ThermalAverageKnobs) {
    const m = ann.mChiGeV;
    const tMax = knobs.tMax;
    this.ann = ann;
    this.m = m;
    this.xMin = xMin;
    this.xMax = xMax;
    this.tMax = tMax;
    this.gridNodes = knobs.gridNodes;
    this.rule = gaussLaguerre(knobs.laguerreNodes, 0.5);
    // singular points in delta = sqrt(s) - 2m: thresholds (reach tMax), poles (reach 2 tMax, and only
    // while their half-width in t is below tMax, as in piecesOf)
    const thresholds: number[] = [];
    for (const e of ann.thresholdsGeV) if (e - 2 * m > 0) thresholds.push(e - 2 * m);
    const poleRe: number[] = [];
    const poleIm: number[] = [];
    const pole = new Float64Array(2);
    for (const p of ann.poles) {
      if (!(p.massGeV > 2 * m) || !(p.widthGeV > 0)) continue;
      poleInDelta(m, p.massGeV, p.widthGeV, pole);
      poleRe.push(pole[0]!);
      poleIm.push(pole[1]!);
    }
    for (const p of ann.subthresholdPoles ?? []) {
      if (!(p.massGeV > 0) || !(p.widthGeV >= 0)) continue;
      poleInDelta(m, p.massGeV, p.widthGeV, pole);
      // distance of the singularity from the threshold edge, as a pole at that delta whose reach
      // is SUBTHRESHOLD_REACH / 2 tMax of an above-threshold pole's (tested as poleRe r < 2 tMax)
      poleRe.push((Math.hypot(pole[0]!, pole[1]!) * 2 * tMax) / SUBTHRESHOLD_REACH);
      poleIm.push(0);
    }
    let xGrid = xMin;
    for (const d of thresholds) xGrid = Math.max(xGrid, (tMax * m) / d);
    for (let i = 0; i < poleRe.length; i++) xGrid = Math.max(xGrid, Math.min((2 * tMax * m) / poleRe[i]!, (tMax * m) / poleIm[i]!));
    this.thresholds = Float64Array.from(thresholds);
    this.poleRe = Float64Array.from(poleRe);
    this.poleIm = Float64Array.from(poleIm);
    this.xGrid = xGrid;
  }

  /** ln max(<sigma v>(e^u), LOG_FLOOR) */
  at(u: number): number {
    const x = Math.exp(u);
    const r = x / this.m;
    const tMax = this.tMax;
    let smooth = true;
    for (let i = 0; i < this.thresholds.length && smooth; i++) if (this.thresholds[i]! * r < tMax) smooth = false;
    for (let i = 0; i < this.poleRe.length && smooth; i++) if (this.poleRe[i]! * r < 2 * tMax && this.poleIm[i]! * r < tMax) smooth = false;
    let value: number;
    if (smooth) {
      value = (4 / besselK2Scaled(x) ** 2) * laguerreRuleSum(this.ann, x, this.rule);
    } else {
      this.grid ??= buildEnergyGrid(this.ann, this.xMin, Math.min(this.xMax, this.xGrid), tMax, this.gridNodes);
      value = gridThermalAverage(this.grid, x, tMax);
    }
    return Math.log(Math.max(value, LOG_FLOOR));
  }
}

/** The spline table through (us, ys); `lnValue` evaluates ln<sigma v> at further nodes. */
class SplineTable implements SigmaVTable {
  readonly xMin: number;
  readonly xMax: number;
  readonly nodes: number;
  readonly allZero: boolean;
  private readonly ann: Annihilation;
  private readonly knobs: ThermalAverageKnobs;
  private readonly us: readonly number[];
  private readonly ys: readonly number[];
  private readonly lnValue: TableAverager;
  private readonly u0: number;
  // plain arrays of doubles, not Float64Arrays: a typed array above 64 bytes costs ~1 us to allocate
  // (off-heap backing store), several per point; element reads are as fast
  private readonly u: readonly number[];
  private readonly y: readonly number[];
  private readonly m2: readonly number[];
  private readonly endValue: number;
  /**
   * interval of the previous at() call: the solver and the tail read x in increasing order, so it
   * usually holds the next x too (checked exactly, else the binary search; same interval either way)
   */
  private lastLo = 0;

  constructor(ann: Annihilation, knobs: ThermalAverageKnobs, xMin: number, xMax: number, us: readonly number[], ys: readonly number[], lnValue: TableAverager) {
    this.ann = ann;
    this.knobs = knobs;
    this.xMin = xMin;
    this.xMax = xMax;
    this.us = us;
    this.ys = ys;
    this.lnValue = lnValue;
    this.nodes = us.length;
    this.u0 = Math.log(xMin);
    this.allZero = ys.every((y) => y === Math.log(LOG_FLOOR));
    // the table owns us and ys (tabulateThermalAverage and refined() pass fresh arrays)
    this.u = us;
    this.y = ys;
    this.m2 = notAKnotSecondDerivatives(us, ys);
    this.endValue = Math.exp(this.y[this.nodes - 1]!);
  }

  at(x: number): number {
    const ux = Math.log(x);
    const u = this.u;
    const y = this.y;
    const m2 = this.m2;
    const last = this.nodes - 1;
    if (!(ux >= this.u0)) return x > 0 ? thermalAverage(this.ann, x, this.knobs) : NaN;
    if (ux >= u[last]!) return this.endValue;
    // the interval [u_i, u_i+1) holding ux: the previous one or the next, else binary search
    let lo = this.lastLo;
    if (!(u[lo]! <= ux && ux < u[lo + 1]!)) {
      lo++;
      if (!(lo < last && u[lo]! <= ux && ux < u[lo + 1]!)) {
        lo = 0;
        let hi = last;
        while (hi - lo > 1) {
          const mid = (lo + hi) >> 1;
          if (u[mid]! <= ux) lo = mid;
          else hi = mid;
        }
      }
      this.lastLo = lo;
    }
    const h = u[lo + 1]! - u[lo]!;
    const b = (ux - u[lo]!) / h;
    const a = 1 - b;
    return Math.exp(a * y[lo]! + b * y[lo + 1]! + ((a * a * a - a) * m2[lo]! + (b * b * b - b) * m2[lo + 1]!) * ((h * h) / 6));
  }

  refined(refine: TableRefinement): SigmaVTable {
    const usR = [...this.us];
    const ysR = [...this.ys];
    refineTable(usR, ysR, this.lnValue, refine);
    return new SplineTable(this.ann, this.knobs, this.xMin, this.xMax, usR, ysR, this.lnValue);
  }
}

/** Inserts checked midpoints into (us, ys) until the local cubic predicts each to tolerance. */
function refineTable(us: number[], ys: number[], lnValue: TableAverager, r: TableRefinement): void {
  // intervals still to check, as their left node's u; processed left to right
  const pending: number[] = us.slice(0, -1).reverse();
  while (pending.length > 0 && us.length < MAX_TABLE_NODES) {
    const uL = pending.pop()!;
    const i = us.indexOf(uL);
    const uR = us[i + 1]!;
    // the solver starts near x_f - 3: <sigma v> below x_f / 2 only feeds the x_f guess
    if (Math.exp(uR) < 0.5 * r.xWeight) continue;
    const uMid = 0.5 * (uL + uR);
    const predicted = localCubic(us, ys, i, uMid);
    const yMid = lnValue.at(uMid);
    us.splice(i + 1, 0, uMid);
    ys.splice(i + 1, 0, yMid);
    const tol = r.relTol * Math.max(1, Math.exp(uMid) / r.xWeight);
    // both sides at the floor (no annihilation there) need no refinement
    if (Math.abs(yMid - predicted) > tol && uR - uL > 2 * r.minStep) pending.push(uMid, uL);
  }
}

/** Cubic through the nodes i-1, i, i+1, i+2 (shifted inside at the ends), evaluated at u. */
function localCubic(us: readonly number[], ys: readonly number[], i: number, u: number): number {
  const first = Math.max(0, Math.min(i - 1, us.length - 4));
  let sum = 0;
  for (let j = first; j < first + 4; j++) {
    let l = 1;
    for (let k = first; k < first + 4; k++) if (k !== j) l *= (u - us[k]!) / (us[j]! - us[k]!);
    sum += l * ys[j]!;
  }
  return sum;
}

/**
 * Work arrays of notAKnotSecondDerivatives (h, diagonal, upper, lower, right side), grown on
 * demand; each call writes every entry it reads (indices below n - 1 and n - 2) before reading it.
 * The solve is synchronous and calls nothing else, so sharing them is safe, and it saves five
 * typed-array allocations per spline.
 */
let workH = new Float64Array(64);
let workDiag = new Float64Array(64);
let workUpper = new Float64Array(64);
let workLower = new Float64Array(64);
let workR = new Float64Array(64);

/**
 * Second derivatives of the cubic spline through (u, y) (any increasing u), with not-a-knot ends
 * (third derivative continuous at the second and the second-to-last node).
 */
function notAKnotSecondDerivatives(u: readonly number[], y: readonly number[]): number[] {
  const n = y.length;
  const m: number[] = [];
  for (let i = 0; i < n; i++) m.push(0);
  if (workH.length < n) {
    workH = new Float64Array(2 * n);
    workDiag = new Float64Array(2 * n);
    workUpper = new Float64Array(2 * n);
    workLower = new Float64Array(2 * n);
    workR = new Float64Array(2 * n);
  }
  const h = workH;
  for (let i = 0; i + 1 < n; i++) h[i] = u[i + 1]! - u[i]!;
  // unknowns M1..M_{n-2}; M0 and M_{n-1} eliminated with the not-a-knot conditions
  const k = n - 2;
  const diag = workDiag;
  const upper = workUpper;
  const lower = workLower;
  const r = workR;
  for (let j = 0; j < k; j++) {
    const i = j + 1;
    lower[j] = h[i - 1]!;
    diag[j] = 2 * (h[i - 1]! + h[i]!);
    upper[j] = h[i]!;
    r[j] = 6 * ((y[i + 1]! - y[i]!) / h[i]! - (y[i]! - y[i - 1]!) / h[i - 1]!);
  }
  const h0 = h[0]!;
  const h1 = h[1]!;
  const ha = h[n - 3]!;
  const hb = h[n - 2]!;
  if (k === 2) {
    // n = 4: one cubic through all points; both rows carry their end condition
    const d0 = ((h0 + h1) * (h0 + 2 * h1)) / h1;
    const u0 = ((h1 - h0) * (h1 + h0)) / h1;
    const l1 = ((ha - hb) * (ha + hb)) / ha;
    const d1 = ((ha + hb) * (2 * ha + hb)) / ha;
    const det = d0 * d1 - u0 * l1;
    m[1] = (r[0]! * d1 - u0 * r[1]!) / det;
    m[2] = (d0 * r[1]! - l1 * r[0]!) / det;
  } else {
    diag[0] = ((h0 + h1) * (h0 + 2 * h1)) / h1;
    upper[0] = ((h1 - h0) * (h1 + h0)) / h1;
    lower[k - 1] = ((ha - hb) * (ha + hb)) / ha;
    diag[k - 1] = ((ha + hb) * (2 * ha + hb)) / ha;
    // Thomas algorithm
    for (let j = 1; j < k; j++) {
      const w = lower[j]! / diag[j - 1]!;
      diag[j] = diag[j]! - w * upper[j - 1]!;
      r[j] = r[j]! - w * r[j - 1]!;
    }
    m[k] = r[k - 1]! / diag[k - 1]!;
    for (let j = k - 2; j >= 0; j--) m[j + 1] = (r[j]! - upper[j]! * m[j + 2]!) / diag[j]!;
  }
  m[0] = m[1]! - (h0 * (m[2]! - m[1]!)) / h1;
  m[n - 1] = m[n - 2]! + (hb * (m[n - 2]! - m[n - 3]!)) / ha;
  return m;
}
