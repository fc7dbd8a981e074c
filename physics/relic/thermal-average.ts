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
 *    Thresholds cut the range too. A piece that starts at a square-root edge (t = 0 or a channel
 *    threshold) is mapped by q = q_edge + u^2 in its own variable to remove the edge. All pieces are
 *    integrated together by adaptive Gauss-Kronrod (physics/numerics/quadrature.ts) to relTol, one
 *    unit of a master variable per piece; a well-mapped piece converges on its first G7-K15 pass.
 *    The range above tMax is dropped (its weight is < e^{-tMax} times polynomial growth).
 *  - Table: <sigma v> is computed once per model point on nodes uniform in ln x between xMin and
 *    xMax and interpolated by a cubic spline of ln<sigma v> against ln x (not-a-knot ends). Beyond
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
import { besselK1Scaled, besselK2Scaled } from '../numerics/bessel.js';
import { gaussLaguerre, integrate } from '../numerics/quadrature.js';

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
}

/** thermal scale of the integrand in t (the e^{-t} factor) */
const THERMAL_SCALE = 1;
/** ratio of successive plain breakpoints away from a pole */
const GRADING = 4;
/** longest wing chunk in v = ln|t - t_p| / w (keeps the Breit-Wigner poles at Im v = pi/2 well outside) */
const WING_CHUNK = 3;

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

/** One piece of the t-range: [a, b] in t, its map and the pole data the map needs. */
interface Piece {
  readonly a: number;
  readonly b: number;
  readonly map: PieceMap;
  /** square-root edge at t = a */
  readonly edge: boolean;
  /** pole centre and half-width in t (WingUp/WingDown), or M^2 and M Gamma in s (Tan) */
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
  const rule = gaussLaguerre(n, 0.5);
  const m = ann.mChiGeV;
  const invX = 1 / x;
  let sum = 0;
  for (let i = 0; i < n; i++) {
    const t = rule.nodes[i]!;
    const r = 0.5 * t * invX;
    const s = 4 * m * m * (1 + r) * (1 + r);
    const sigma = ann.sigmaTotalGeV2(s);
    if (sigma === 0) continue;
    // F / (sqrt(t) e^{-t}) = sigma sqrt(t)/x (1 + t/4x)(1 + t/2x)^2 K~_1(2x + t)
    sum += rule.weights[i]! * sigma * Math.sqrt(t) * invX * (1 + 0.5 * r) * (1 + r) * (1 + r) * besselK1Scaled(2 * x + t);
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
  if (edges.length === 1 && poles.length === 0) return null;
  const cuts = [...edges, tMax];
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
      pieces.push({ a, b, map: PieceMap.Plain, edge, p0: 0, p1: 0 });
    } else if (Math.abs(mid - best.tp) < c * best.w) {
      pieces.push({ a, b, map: PieceMap.Tan, edge, p0: best.massGeV * best.massGeV, p1: best.massGeV * best.widthGeV });
    } else {
      pieces.push({ a, b, map: mid > best.tp ? PieceMap.WingUp : PieceMap.WingDown, edge, p0: best.tp, p1: best.w });
    }
  }
  return pieces;
}

/**
 * F dt/dy on piece p at y in [0, 1]: y -> q (the piece's own variable, with q = q_edge + u^2 when
 * the piece starts at a square-root edge) -> t.
 */
function mappedIntegrand(f: (t: number) => number, p: Piece, y: number, m: number, x: number): number {
  if (p.map === PieceMap.Plain) {
    if (!p.edge) return (p.b - p.a) * f(p.a + (p.b - p.a) * y);
    const span = p.b - p.a;
    return 2 * span * y * f(p.a + span * y * y);
  }
  if (p.map === PieceMap.Tan) {
    const sOf = (t: number): number => {
      const e = 2 * m + (t * m) / x;
      return e * e;
    };
    const q0 = Math.atan((sOf(p.a) - p.p0) / p.p1);
    const q1 = Math.atan((sOf(p.b) - p.p0) / p.p1);
    let theta: number;
    let dq: number;
    if (p.edge) {
      theta = q0 + (q1 - q0) * y * y;
      dq = 2 * (q1 - q0) * y;
    } else {
      theta = q0 + (q1 - q0) * y;
      dq = q1 - q0;
    }
    const cos = Math.cos(theta);
    const e = Math.sqrt(p.p0 + p.p1 * Math.tan(theta));
    // rounding can put t a hair outside the piece; the integrand is continuous there
    const t = Math.min(p.b, Math.max(p.a, ((e - 2 * m) * x) / m));
    // dt/dtheta = (x/m) (1/(2 sqrt s)) M Gamma / cos^2(theta)
    return (dq * f(t) * ((x / m) * p.p1)) / (2 * e * cos * cos);
  }
  // wings: t = t_p + sign w e^v; the piece's square-root edge (at t = a) sits at the v start on the
  // upper wing and at the v end on the lower one
  const up = p.map === PieceMap.WingUp;
  const vA = Math.log(Math.abs(p.a - p.p0) / p.p1);
  const vB = Math.log(Math.abs(p.b - p.p0) / p.p1);
  let v: number;
  let dv: number;
  if (!p.edge) {
    v = vA + (vB - vA) * y;
    dv = vB - vA;
  } else {
    // q = vA + (vB - vA) y^2 keeps the edge (t = a, v = vA) at y = 0 on either side
    v = vA + (vB - vA) * y * y;
    dv = 2 * (vB - vA) * y;
  }
  const d = p.p1 * Math.exp(v);
  const t = up ? p.p0 + d : p.p0 - d;
  // |dt/dv| = d; on the lower wing v runs backwards in t (vB < vA), the sign of dv restores order
  return (up ? 1 : -1) * dv * d * f(t);
}

// ---------------------------------------------------------------- table in ln x

/** <sigma v>(x) tabulated once per model point. */
export interface SigmaVTable {
  /** first node, x */
  readonly xMin: number;
  /** last node, x; held constant beyond */
  readonly xMax: number;
  /** number of nodes */
  readonly nodes: number;
  /** <sigma v>(x) in GeV^-2 (direct evaluation below xMin, spline inside, constant above xMax) */
  at(x: number): number;
  /** true when every node is exactly zero (no annihilation at any sampled temperature) */
  readonly allZero: boolean;
}

/** Smallest <sigma v> carried in the log-spline (GeV^-2); zeros are floored here. */
const LOG_FLOOR = 1e-300;

/** Tabulates <sigma v> on `nodes` points uniform in ln x on [xMin, xMax] (nodes >= 4). */
export function tabulateThermalAverage(
  ann: Annihilation,
  xMin: number,
  xMax: number,
  nodes: number,
  knobs: ThermalAverageKnobs,
): SigmaVTable {
  if (!(nodes >= 4) || !(xMax > xMin) || !(xMin > 0)) {
    throw new RangeError(`tabulateThermalAverage: need nodes >= 4 and 0 < xMin < xMax, got nodes=${nodes}, xMin=${xMin}, xMax=${xMax}`);
  }
  const u0 = Math.log(xMin);
  const du = (Math.log(xMax) - u0) / (nodes - 1);
  const y = new Float64Array(nodes);
  let allZero = true;
  for (let i = 0; i < nodes; i++) {
    const v = thermalAverage(ann, Math.exp(u0 + i * du), knobs);
    if (v !== 0) allZero = false;
    y[i] = Math.log(Math.max(v, LOG_FLOOR));
  }
  const m2 = notAKnotSecondDerivatives(y, du);
  const last = nodes - 1;
  const endValue = Math.exp(y[last]!);
  const h2 = (du * du) / 6;
  const at = (x: number): number => {
    const u = Math.log(x);
    if (!(u >= u0)) return x > 0 ? thermalAverage(ann, x, knobs) : NaN;
    const pos = (u - u0) / du;
    if (pos >= last) return endValue;
    const i = Math.floor(pos);
    const b = pos - i;
    const a = 1 - b;
    const lnValue = a * y[i]! + b * y[i + 1]! + ((a * a * a - a) * m2[i]! + (b * b * b - b) * m2[i + 1]!) * h2;
    return Math.exp(lnValue);
  };
  return Object.freeze({ xMin, xMax, nodes, at, allZero });
}

/**
 * Second derivatives of the cubic spline through y on a uniform grid of step h, with not-a-knot
 * ends (third derivative continuous at the second and the second-to-last node).
 */
function notAKnotSecondDerivatives(y: Float64Array, h: number): Float64Array {
  const n = y.length;
  const m = new Float64Array(n);
  const rhs = (i: number): number => (6 * (y[i - 1]! - 2 * y[i]! + y[i + 1]!)) / (h * h);
  if (n === 4) {
    // one cubic through all four points: M linear, M1 and M2 from the two interior equations
    const r1 = rhs(1);
    const r2 = rhs(2);
    // with M0 = 2M1 - M2 and M3 = 2M2 - M1 both rows read 6 M1 = r1, 6 M2 = r2
    m[1] = r1 / 6;
    m[2] = r2 / 6;
  } else {
    // unknowns M1..M_{n-2}; first and last rows become 6 M = r after eliminating M0, M_{n-1}
    const k = n - 2;
    const diag = new Float64Array(k);
    const upper = new Float64Array(k);
    const lower = new Float64Array(k);
    const r = new Float64Array(k);
    for (let j = 0; j < k; j++) {
      const i = j + 1;
      diag[j] = 4;
      lower[j] = 1;
      upper[j] = 1;
      r[j] = rhs(i);
    }
    diag[0] = 6;
    upper[0] = 0;
    diag[k - 1] = 6;
    lower[k - 1] = 0;
    // Thomas algorithm
    for (let j = 1; j < k; j++) {
      const w = lower[j]! / diag[j - 1]!;
      diag[j] = diag[j]! - w * upper[j - 1]!;
      r[j] = r[j]! - w * r[j - 1]!;
    }
    m[k] = r[k - 1]! / diag[k - 1]!;
    for (let j = k - 2; j >= 0; j--) m[j + 1] = (r[j]! - upper[j]! * m[j + 2]!) / diag[j]!;
  }
  m[0] = 2 * m[1]! - m[2]!;
  m[n - 1] = 2 * m[n - 2]! - m[n - 3]!;
  return m;
}
