/**
 * Effective numbers of relativistic degrees of freedom of the Standard-Model plasma:
 * g_eff(T) (energy density, g_rho), h_eff(T) (entropy, g_s), d ln h_eff / d ln T, and the
 * combination g_*^{1/2}(T) = (h_eff / sqrt(g_eff)) (1 + (1/3) d ln h_eff / d ln T) that enters the
 * Boltzmann equation (Gondolo & Gelmini 1991, Nucl. Phys. B360, 145; shared notes relic.md eq. 1.4).
 *
 * Method: the closed-form fit of Saikawa & Shirai 2018 (JCAP 1805:035, arXiv:1803.01038,
 * Appendix C), coefficients as transcribed in relic.md §5.4:
 *  - T >= 0.12 GeV: ratios of degree-11 polynomials in t = ln(T/GeV);
 *  - T < 0.12 GeV: sums of fitted Boltzmann-like functions of m_k/T for e, mu, pi0, pi+- and four
 *    effective hadronic states.
 * d ln h/d ln T is differentiated analytically inside each branch, on its own side of 0.12 GeV.
 * The branches do not meet exactly (g 19.763 vs 19.768 at 0.12 GeV); differentiating across the
 * junction would give nonsense (relic.md §5.4), so callers integrating over T should put a
 * breakpoint at DOF_FIT_JUNCTION_GEV.
 *
 * Validity: the fit covers 1e-5 GeV <= T <~ 1e16 GeV; below 1e-5 GeV the low-T branch tends to its
 * constant limits 3.383 / 3.931 (N_eff ~ 3.045), which is what the Boltzmann tail needs. Inputs must
 * be finite and > 0 (NaN otherwise).
 * Accuracy: the fit is within ~1% of the Saikawa-Shirai data table except at 0.13-0.5 GeV, where it
 * lies 1.3-3% low (relic.md §5.4); Omega h^2 with the fit differs from the table result by
 * +0.3/+0.1/+0.2% at m = 10/100/1000 GeV (relic.md §5.5). The table's own QCD-region uncertainty
 * (±g column, relic.md §5.3) is larger still.
 */

/** Temperature (GeV) where the fit switches from the low-T to the high-T branch. */
export const DOF_FIT_JUNCTION_GEV = 0.12;

// ---------------------------------------------------------------- high-T branch (T >= 0.12 GeV)
// Saikawa & Shirai 2018, Appendix C, eqs. (C.1)-(C.2): g_rho = A/B, g_s = g_rho / (1 + C/D).
const A = [1, 1.11724, 3.12672e-1, -4.68049e-2, -2.65004e-2, -1.1976e-3, 1.82812e-4, 1.36436e-4, 8.55051e-5, 1.2284e-5, 3.82259e-7, -6.87035e-9];
const B = [1.43382e-2, 1.37559e-2, 2.92108e-3, -5.38533e-4, -1.62496e-4, -2.87906e-5, -3.84278e-6, 2.78776e-6, 7.40342e-7, 1.1721e-7, 3.72499e-9, -6.74107e-11];
const C = [1, 6.07869e-1, -1.54485e-1, -2.24034e-1, -2.82147e-2, 2.9062e-2, 6.86778e-3, -1.00005e-3, -1.69104e-4, 1.06301e-5, 1.69528e-6, -9.33311e-8];
const D = [7.07388e1, 9.18011e1, 3.31892e1, -1.39779, -1.52558, -1.97857e-2, -1.60146e-1, 8.22615e-5, 2.02651e-2, -1.82134e-5, 7.83943e-5, 7.13518e-5];

/** Polynomial value and derivative by Horner: out = [p(t), p'(t)]. */
function horner(c: readonly number[], t: number, out: Float64Array): void {
  let p = c[c.length - 1]!;
  let dp = 0;
  for (let i = c.length - 2; i >= 0; i--) {
    dp = dp * t + p;
    p = p * t + c[i]!;
  }
  out[0] = p;
  out[1] = dp;
}

// ---------------------------------------------------------------- low-T branch (T < 0.12 GeV)
// Saikawa & Shirai 2018, Appendix C, eqs. (C.3)-(C.8). Each function is e^{-a x} P(x) with cubic P.
interface Shape {
  readonly a: number;
  readonly p: readonly [number, number, number, number];
}
const F_RHO: Shape = { a: 1.04855, p: [1, 1.03757, 0.50863, 0.0893988] };
const B_RHO: Shape = { a: 1.03149, p: [1, 1.03317, 0.398264, 0.0648056] };
const F_S: Shape = { a: 1.0419, p: [1, 1.034, 0.456426, 0.0595249] };
const B_S: Shape = { a: 1.03365, p: [1, 1.03397, 0.342548, 0.0506182] };

/** masses of the fit's species, GeV (Saikawa & Shirai 2018, Appendix C; m_1..m_4 are effective) */
const M_E = 5.11e-4;
const M_MU = 0.1056;
const M_PI0 = 0.135;
const M_PIC = 0.14;
const M_1 = 0.5;
const M_2 = 0.77;
const M_3 = 1.2;
const M_4 = 2.0;

/** e^{-a x} P(x) and its x-derivative into out. */
function shape(s: Shape, x: number, out: Float64Array): void {
  const [p0, p1, p2, p3] = s.p;
  const e = Math.exp(-s.a * x);
  const poly = p0 + x * (p1 + x * (p2 + x * p3));
  const dpoly = p1 + x * (2 * p2 + x * 3 * p3);
  out[0] = e * poly;
  out[1] = e * (dpoly - s.a * poly);
}

/** The three fit quantities at one temperature. */
export interface Dof {
  /** g_eff = g_rho */
  readonly gEff: number;
  /** h_eff = g_s */
  readonly hEff: number;
  /** d ln h_eff / d ln T, analytic within the branch */
  readonly dLnHdLnT: number;
}

const w1 = new Float64Array(2);
const w2 = new Float64Array(2);
const w3 = new Float64Array(2);
const w4 = new Float64Array(2);

/** g_eff, h_eff and d ln h_eff / d ln T at temperature T (GeV) written into out[0..2]. */
export function dofInto(tGeV: number, out: Float64Array): void {
  if (!(tGeV > 0) || tGeV === Infinity) {
    out[0] = NaN;
    out[1] = NaN;
    out[2] = NaN;
    return;
  }
  if (tGeV >= DOF_FIT_JUNCTION_GEV) highBranch(Math.log(tGeV), out);
  else lowBranch(tGeV, out);
}

/** High-T branch formulas at t = ln(T/GeV) (also evaluated slightly beyond for one-sided slopes). */
function highBranch(t: number, out: Float64Array): void {
  horner(A, t, w1);
  horner(B, t, w2);
  horner(C, t, w3);
  horner(D, t, w4);
  const g = w1[0]! / w2[0]!;
  const ratio = w3[0]! / w4[0]!;
  out[0] = g;
  out[1] = g / (1 + ratio);
  // d ln h/dt = A'/A - B'/B - (C'D - C D') / (D (D + C))
  out[2] = w1[1]! / w1[0]! - w2[1]! / w2[0]! - (w3[1]! * w4[0]! - w3[0]! * w4[1]!) / (w4[0]! * (w4[0]! + w3[0]!));
}

/** Low-T branch formulas at T in GeV. */
function lowBranch(tGeV: number, out: Float64Array): void {
  const inv = 1 / tGeV;
  // g_rho (its derivative is not needed)
  const xe = M_E * inv;
  shape(F_S, xe, w1);
  const sE = 1 + 1.75 * w1[0]!;
  const fsE = w1[0]!;
  const dfsE = w1[1]!;
  let g = 2.03 + 1.353 * Math.pow(sE, 4 / 3);
  shape(F_RHO, xe, w2);
  g += 3.495 * w2[0]!;
  shape(F_RHO, M_MU * inv, w2);
  g += 3.446 * w2[0]!;
  for (const [coef, mass] of BOSONS_RHO) {
    shape(B_RHO, mass * inv, w2);
    g += coef * w2[0]!;
  }
  // g_s and d g_s / d ln T = sum_k c_k (-x_k) f'(x_k); S(x_e) contributes 1.923 * 1.75 f_s'(x_e)
  let h = 2.008 + 1.923 * sE + 3.442 * fsE;
  let dh = -xe * (1.923 * 1.75 + 3.442) * dfsE;
  const xmu = M_MU * inv;
  shape(F_S, xmu, w3);
  h += 3.468 * w3[0]!;
  dh -= 3.468 * xmu * w3[1]!;
  for (const [coef, mass] of BOSONS_S) {
    const x = mass * inv;
    shape(B_S, x, w3);
    h += coef * w3[0]!;
    dh -= coef * x * w3[1]!;
  }
  out[0] = g;
  out[1] = h;
  out[2] = dh / h;
}

/** (coefficient, mass GeV) of the bosonic terms of g_rho, Saikawa & Shirai 2018 eq. (C.3) */
const BOSONS_RHO: readonly [number, number][] = [
  [1.05, M_PI0], [2.08, M_PIC], [4.165, M_1], [30.55, M_2], [89.4, M_3], [8209, M_4],
];
/** (coefficient, mass GeV) of the bosonic terms of g_s, Saikawa & Shirai 2018 eq. (C.4) */
const BOSONS_S: readonly [number, number][] = [
  [1.034, M_PI0], [2.068, M_PIC], [4.16, M_1], [30.55, M_2], [90, M_3], [6209, M_4],
];

const scratch = new Float64Array(3);

/** g_eff, h_eff and d ln h_eff / d ln T at temperature T (GeV). */
export function dof(tGeV: number): Dof {
  dofInto(tGeV, scratch);
  return Object.freeze({ gEff: scratch[0]!, hEff: scratch[1]!, dLnHdLnT: scratch[2]! });
}

/** g_eff(T) = g_rho, T in GeV. */
export function gEff(tGeV: number): number {
  dofInto(tGeV, scratch);
  return scratch[0]!;
}

/** h_eff(T) = g_s, T in GeV. */
export function hEff(tGeV: number): number {
  dofInto(tGeV, scratch);
  return scratch[1]!;
}

/** d ln h_eff / d ln T, T in GeV, analytic on each side of DOF_FIT_JUNCTION_GEV. */
export function dLnHdLnT(tGeV: number): number {
  dofInto(tGeV, scratch);
  return scratch[2]!;
}

/** g_*^{1/2}(T) = (h_eff / sqrt(g_eff)) (1 + (1/3) d ln h_eff / d ln T), relic.md eq. (1.4). */
export function gStarHalf(tGeV: number): number {
  dofInto(tGeV, scratch);
  return (scratch[1]! / Math.sqrt(scratch[0]!)) * (1 + scratch[2]! / 3);
}

// ---------------------------------------------------------------- interpolated fast path
// The Boltzmann solver evaluates the dof ~1e3 times per model point; the low-T branch alone costs
// ~20 exponentials per call. So h_eff and g_*^{1/2} are also tabulated once, at module load, on a
// uniform grid in ln T (spacing ~FAST_STEP) on each side of the junction separately, and
// interpolated by cubic Hermite polynomials: ln h with its analytic slope d ln h/d ln T, g_*^{1/2}
// with a central-difference slope taken on its own branch. Interpolation error < 1e-7 relative
// (tests/relic/dof.test.ts), far below the fit's own accuracy. Outside [FAST_T_MIN, FAST_T_MAX]
// the exact fit is used.

const FAST_T_MIN = 1e-5;
const FAST_T_MAX = 1e6;
const FAST_STEP = 0.02;

interface FastSegment {
  readonly u0: number;
  readonly du: number;
  readonly n: number;
  /** per node: ln h, d ln h/du, g*^1/2, d g*^1/2/du */
  readonly data: Float64Array;
}

function buildSegment(u0: number, u1: number, branch: (u: number, out: Float64Array) => void): FastSegment {
  const n = Math.max(2, Math.ceil((u1 - u0) / FAST_STEP) + 1);
  const du = (u1 - u0) / (n - 1);
  const data = new Float64Array(4 * n);
  const o = new Float64Array(3);
  const gsh = (u: number): number => {
    branch(u, o);
    return (o[1]! / Math.sqrt(o[0]!)) * (1 + o[2]! / 3);
  };
  const eps = 1e-4;
  for (let i = 0; i < n; i++) {
    const u = u0 + i * du;
    branch(u, o);
    data[4 * i] = Math.log(o[1]!);
    data[4 * i + 1] = o[2]!;
    data[4 * i + 2] = (o[1]! / Math.sqrt(o[0]!)) * (1 + o[2]! / 3);
    data[4 * i + 3] = (gsh(u + eps) - gsh(u - eps)) / (2 * eps);
  }
  return { u0, du, n, data };
}

const FAST_LOW = buildSegment(Math.log(FAST_T_MIN), Math.log(DOF_FIT_JUNCTION_GEV), (u, o) => lowBranch(Math.exp(u), o));
const FAST_HIGH = buildSegment(Math.log(DOF_FIT_JUNCTION_GEV), Math.log(FAST_T_MAX), highBranch);

/** Segment and cubic-Hermite weights of the last located T: [h00, h10 du, h01, h11 du] (module scratch). */
const hermite = new Float64Array(4);
let hermiteSeg = FAST_HIGH;
let hermiteK = 0;

/** Locates T (inside [FAST_T_MIN, FAST_T_MAX]) on its branch's table and fills the Hermite weights. */
function locate(tGeV: number): void {
  const u = Math.log(tGeV);
  const seg = tGeV >= DOF_FIT_JUNCTION_GEV ? FAST_HIGH : FAST_LOW;
  let pos = (u - seg.u0) / seg.du;
  if (pos < 0) pos = 0;
  let i = Math.floor(pos);
  if (i >= seg.n - 1) i = seg.n - 2;
  const s = pos - i;
  const s2 = s * s;
  const s3 = s2 * s;
  hermite[0] = 2 * s3 - 3 * s2 + 1;
  hermite[1] = (s3 - 2 * s2 + s) * seg.du;
  hermite[2] = -2 * s3 + 3 * s2;
  hermite[3] = (s3 - s2) * seg.du;
  hermiteSeg = seg;
  hermiteK = 4 * i;
}

/** The located cubic of one tabulated quantity: value at column `col`, derivative at col + 1. */
function interpolated(col: number): number {
  const d = hermiteSeg.data;
  const k = hermiteK + col;
  return hermite[0]! * d[k]! + hermite[1]! * d[k + 1]! + hermite[2]! * d[k + 4]! + hermite[3]! * d[k + 5]!;
}

/** g_*^{1/2} from the exact fit, outside the tabulated range. */
function exactGStarHalf(tGeV: number): number {
  dofInto(tGeV, scratch);
  return (scratch[1]! / Math.sqrt(scratch[0]!)) * (1 + scratch[2]! / 3);
}

/**
 * Interpolated h_eff (out[0]) and g_*^{1/2} (out[1]) at T in GeV, for hot loops. Same fit, same
 * branch junction, < 1e-7 relative from dofInto.
 */
export function fastDofInto(tGeV: number, out: Float64Array): void {
  if (!(tGeV >= FAST_T_MIN && tGeV <= FAST_T_MAX)) {
    out[1] = exactGStarHalf(tGeV);
    out[0] = scratch[1]!;
    return;
  }
  locate(tGeV);
  out[0] = Math.exp(interpolated(0));
  out[1] = interpolated(2);
}

/**
 * Interpolated g_*^{1/2} alone at T in GeV: the out[1] of fastDofInto without the exponential that
 * h_eff needs (the Boltzmann tail integral reads only g_*^{1/2}).
 */
export function fastGStarHalf(tGeV: number): number {
  if (!(tGeV >= FAST_T_MIN && tGeV <= FAST_T_MAX)) return exactGStarHalf(tGeV);
  locate(tGeV);
  return interpolated(2);
}

// ---------------------------------------------------------------- integral of g_*^{1/2} over T
// The Boltzmann tail needs int lambda <sigma v> dx / x^2 beyond the end of the <sigma v> table,
// where <sigma v> is constant; with T = m/x that is sqrt(pi/45) M_Pl <sigma v> int_0^T g_*^{1/2} dT'.
// The cumulative integral is tabulated once on the fast-path nodes: per cell, 4-point
// Gauss-Legendre (exact for the cubic Hermite interpolant times e^u to ~1e-12 at cell width 0.02)
// of g_*^{1/2}(u) e^u du; below FAST_T_MIN g_*^{1/2} is constant (its low-T limit).

/** 4-point Gauss-Legendre on [0, 1]: nodes and weights (Abramowitz & Stegun 1964, Table 25.4) */
const GL4_NODES = [0.0694318442029737, 0.3300094782075719, 0.6699905217924281, 0.9305681557970263];
const GL4_WEIGHTS = [0.1739274225687269, 0.3260725774312731, 0.3260725774312731, 0.1739274225687269];

/** g_*^{1/2} from the Hermite cell i of seg at fraction s in [0, 1] */
function hermiteGStarHalf(seg: FastSegment, i: number, s: number): number {
  const s2 = s * s;
  const s3 = s2 * s;
  const d = seg.data;
  const k = 4 * i;
  return (2 * s3 - 3 * s2 + 1) * d[k + 2]! + (s3 - 2 * s2 + s) * seg.du * d[k + 3]! + (-2 * s3 + 3 * s2) * d[k + 6]! + (s3 - s2) * seg.du * d[k + 7]!;
}

/** int over cell i of seg from its start to fraction s of g_*^{1/2} e^u du */
function cellIntegral(seg: FastSegment, i: number, s: number): number {
  let sum = 0;
  for (let j = 0; j < 4; j++) {
    const sj = s * GL4_NODES[j]!;
    sum += GL4_WEIGHTS[j]! * hermiteGStarHalf(seg, i, sj) * Math.exp(seg.u0 + (i + sj) * seg.du);
  }
  return sum * s * seg.du;
}

/** cumulative int_0^{T_i} g_*^{1/2} dT at the nodes of seg, starting from `start` */
function cumulative(seg: FastSegment, start: number): Float64Array {
  const out = new Float64Array(seg.n);
  out[0] = start;
  for (let i = 0; i + 1 < seg.n; i++) out[i + 1] = out[i]! + cellIntegral(seg, i, 1);
  return out;
}

const G_STAR_HALF_LOW_LIMIT = FAST_LOW.data[2]!;
const CUM_LOW = cumulative(FAST_LOW, G_STAR_HALF_LOW_LIMIT * FAST_T_MIN);
const CUM_HIGH = cumulative(FAST_HIGH, CUM_LOW[FAST_LOW.n - 1]!);

/**
 * int_0^T g_*^{1/2}(T') dT' in GeV, from the interpolated fast path (same fit and junction;
 * relative error < 1e-7 like fastDofInto). Above FAST_T_MAX the exact fit is integrated.
 */
export function gStarHalfIntegral(tGeV: number): number {
  if (!(tGeV > 0)) return tGeV === 0 ? 0 : NaN;
  if (tGeV <= FAST_T_MIN) return G_STAR_HALF_LOW_LIMIT * tGeV;
  if (tGeV > FAST_T_MAX) {
    // only for m > 1e10 GeV: Simpson in ln T on the exact fit (smooth there)
    const u0 = Math.log(FAST_T_MAX);
    const u1 = Math.log(tGeV);
    const n = 2 * Math.ceil((u1 - u0) / FAST_STEP / 2) + 2;
    const h = (u1 - u0) / n;
    let sum = 0;
    for (let j = 0; j <= n; j++) {
      const u = u0 + j * h;
      const w = j === 0 || j === n ? 1 : j % 2 === 1 ? 4 : 2;
      sum += w * gStarHalf(Math.exp(u)) * Math.exp(u);
    }
    return CUM_HIGH[FAST_HIGH.n - 1]! + (sum * h) / 3;
  }
  const seg = tGeV >= DOF_FIT_JUNCTION_GEV ? FAST_HIGH : FAST_LOW;
  const cum = seg === FAST_HIGH ? CUM_HIGH : CUM_LOW;
  const pos = Math.max(0, (Math.log(tGeV) - seg.u0) / seg.du);
  const i = Math.min(seg.n - 2, Math.floor(pos));
  return cum[i]! + cellIntegral(seg, i, pos - i);
}
