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
 *  - Smooth case (no channel threshold and no s-channel pole with t < tMax): generalized
 *    Gauss-Laguerre with weight t^{1/2} e^{-t} (laguerreNodes nodes). An s-wave sigma ~ 1/beta makes
 *    F ~ sqrt(t) e^{-t}, so F / (sqrt(t) e^{-t}) is smooth and the rule converges exponentially.
 *  - Otherwise (Griest & Seckel 1991, PRD 43, 3191, exceptions ii and iii; relic.md §2.4):
 *    [0, tMax] is cut at every threshold and at the ends of a window |s - M^2| < poleWindowWidths M
 *    Gamma around every pole. Inside a window s = M^2 + M Gamma tan(theta) absorbs the Breit-Wigner
 *    peak (smooth integrand in theta for any Gamma); every piece that starts at a square-root edge
 *    (t = 0 or a threshold) is mapped by u -> a + u^2 to remove the edge. Pieces inside a pole
 *    window, and the pieces bordering one (Breit-Wigner wings), are integrated by adaptive
 *    Gauss-Kronrod (physics/numerics/quadrature.ts) to relTol (the e^{-t} factor can be sharp in
 *    theta at large x); the others are smooth after the map and take a fixed legendreNodes-point
 *    Gauss-Legendre rule.
 *    The range above tMax is dropped (its weight is < e^{-tMax} times polynomial growth).
 *  - Table: <sigma v> is computed once per model point on nodes uniform in ln x between xMin and
 *    xMax and interpolated by a cubic spline of ln<sigma v> against ln x (not-a-knot ends). Beyond
 *    xMax the value is held constant (relic.md §2.4: the v -> 0 limit; the late contribution is
 *    ~x_f/x of the depletion); below xMin the integral is evaluated directly.
 *
 * Validity: equal-mass pair, kinetic equilibrium (no early kinetic decoupling, relic.md §2.5),
 * Maxwell-Boltzmann statistics (quantum corrections ~e^{-x}/(2 sqrt 2): 2% at x = 3).
 * Accuracy: the quadrature is ~1e-9 relative (tests/relic/thermal-average.test.ts, against scipy
 * quad of eq. 2.1); the table interpolation error is measured by tests/bench/relic-bench.ts.
 */
import type { Annihilation, Pole } from '../annihilation-model.js';
import { besselK1Scaled, besselK2Scaled } from '../numerics/bessel.js';
import { gaussLaguerre, gaussLegendre, integrate } from '../numerics/quadrature.js';

/** Numerical knobs of the thermal average (declared with docs in physics/relic/relic.ts). */
export interface ThermalAverageKnobs {
  /** Gauss-Laguerre (alpha = 1/2) nodes for the smooth case */
  readonly laguerreNodes: number;
  /** Gauss-Legendre nodes per piece away from poles (after the square-root map) */
  readonly legendreNodes: number;
  /** upper cut of the t = (sqrt(s) - 2m)/T integral in the adaptive case */
  readonly tMax: number;
  /** relative tolerance of the adaptive Gauss-Kronrod pieces */
  readonly relTol: number;
  /** half-width of the tan-mapped window around a pole, in units of M Gamma (in s) */
  readonly poleWindowWidths: number;
}

/** A piece of the t-range and how it is mapped before integration. */
interface Piece {
  readonly a: number;
  readonly b: number;
  /** the integrand has a square-root edge at a (t = 0 or a channel threshold) */
  readonly sqrtEdge: boolean;
  /** the pole whose tan-window contains the piece, or null */
  readonly pole: Pole | null;
  /** the piece borders a pole window: the Breit-Wigner wing makes it adaptive */
  readonly bordersPole: boolean;
}

/** Thermal average at one x, GeV^-2. */
export function thermalAverage(ann: Annihilation, x: number, knobs: ThermalAverageKnobs): number {
  if (!(x > 0) || !Number.isFinite(x)) return NaN;
  const m = ann.mChiGeV;
  const pieces = adaptivePieces(ann, x, knobs);
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
  let total = 0;
  for (const p of pieces) total += integratePiece(f, p, m, x, knobs);
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

/** The adaptive pieces of [0, tMax], or null when no threshold or pole lies in it (smooth case). */
function adaptivePieces(ann: Annihilation, x: number, knobs: ThermalAverageKnobs): Piece[] | null {
  const m = ann.mChiGeV;
  const tOf = (sqrtS: number): number => ((sqrtS - 2 * m) * x) / m;
  const tMax = knobs.tMax;
  const thresholds: number[] = [];
  for (const e of ann.thresholdsGeV) {
    const t = tOf(e);
    if (t > 0 && t < tMax) thresholds.push(t);
  }
  const windows: { lo: number; hi: number; pole: Pole }[] = [];
  for (const pole of ann.poles) {
    const mm = pole.massGeV;
    if (!(mm > 2 * m) || !(pole.widthGeV > 0)) continue;
    const half = knobs.poleWindowWidths * mm * pole.widthGeV;
    const sLo = mm * mm - half;
    const lo = sLo > 4 * m * m ? tOf(Math.sqrt(sLo)) : 0;
    const hi = tOf(Math.sqrt(mm * mm + half));
    if (lo < tMax) windows.push({ lo, hi: Math.min(hi, tMax), pole });
  }
  if (thresholds.length === 0 && windows.length === 0) return null;
  const cuts = new Set<number>([0, tMax, ...thresholds]);
  for (const w of windows) {
    cuts.add(w.lo);
    cuts.add(w.hi);
  }
  const sorted = [...cuts].filter((t) => t >= 0 && t <= tMax).sort((p, q) => p - q);
  const edges = new Set<number>([0, ...thresholds]);
  const pieces: Piece[] = [];
  for (let i = 0; i + 1 < sorted.length; i++) {
    const a = sorted[i]!;
    const b = sorted[i + 1]!;
    if (!(b > a)) continue;
    const mid = 0.5 * (a + b);
    // the narrowest window containing the piece decides the map
    let pole: Pole | null = null;
    for (const w of windows) {
      if (mid > w.lo && mid < w.hi && (pole === null || w.pole.widthGeV * w.pole.massGeV < pole.widthGeV * pole.massGeV)) pole = w.pole;
    }
    const bordersPole = pole === null && windows.some((w) => w.lo === b || w.hi === a);
    pieces.push({ a, b, sqrtEdge: edges.has(a), pole, bordersPole });
  }
  return pieces;
}

/** Integral of f over one piece, with the tan map inside pole windows and u^2 maps at edges. */
function integratePiece(f: (t: number) => number, p: Piece, m: number, x: number, knobs: ThermalAverageKnobs): number {
  const options = { relTol: knobs.relTol, maxIntervals: 400 };
  if (p.pole === null && p.bordersPole) {
    if (!p.sqrtEdge) return integrate(f, p.a, p.b, options).value;
    return integrate((u) => 2 * u * f(p.a + u * u), 0, Math.sqrt(p.b - p.a), options).value;
  }
  if (p.pole === null) {
    // smooth after the square-root map: fixed Gauss-Legendre
    const rule = gaussLegendre(knobs.legendreNodes);
    const uMax = p.sqrtEdge ? Math.sqrt(p.b - p.a) : p.b - p.a;
    const half = 0.5 * uMax;
    let sum = 0;
    for (let i = 0; i < rule.nodes.length; i++) {
      const u = half * (1 + rule.nodes[i]!);
      // sqrt edge: t = a + u^2, dt = 2u du
      sum += rule.weights[i]! * (p.sqrtEdge ? 2 * u * f(p.a + u * u) : f(p.a + u));
    }
    return half * sum;
  }
  const mm = p.pole.massGeV;
  const mg = mm * p.pole.widthGeV;
  const sOf = (t: number): number => {
    const e = 2 * m + (t * m) / x;
    return e * e;
  };
  // theta(t) and its inverse: s = M^2 + M Gamma tan(theta), t = (sqrt(s) - 2m) x / m
  const thetaA = Math.atan((sOf(p.a) - mm * mm) / mg);
  const thetaB = Math.atan((sOf(p.b) - mm * mm) / mg);
  const inTheta = (theta: number): number => {
    const c = Math.cos(theta);
    const s = mm * mm + mg * Math.tan(theta);
    const e = Math.sqrt(s);
    // rounding can put t a hair below the piece start; the integrand is continuous there
    const t = Math.max(p.a, ((e - 2 * m) * x) / m);
    // dt/dtheta = (x/m) (1/(2 sqrt s)) M Gamma / cos^2(theta)
    return (f(t) * ((x / m) * mg)) / (2 * e * c * c);
  };
  if (!p.sqrtEdge) return integrate(inTheta, thetaA, thetaB, options).value;
  return integrate((u) => 2 * u * inTheta(thetaA + u * u), 0, Math.sqrt(thetaB - thetaA), options).value;
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
