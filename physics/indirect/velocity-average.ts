/**
 * The annihilation cross section today: the average of the full sigma*v_Mol(s) over the relative
 * velocities of dark-matter pairs in a halo, with branching ratios per final state.
 *
 * What: <sigma v> = Int_0^inf sigma v(s(v)) 4 pi v^2 (pi w^2)^{-3/2} e^{-v^2/w^2} dv, the relative
 * velocity v of two particles that each follow a Maxwellian of one-dimensional dispersion sigma
 * (so w = 2 sigma; shared notes indirect.md B8, where w = sqrt2 v_0 and v_0 = sqrt2 sigma), with
 * s = m_chi^2 (4 + v^2) (non-relativistic, B8). Per channel likewise; BR_f = <sigma v>_f / <sigma v>.
 * For sigma v = a + b v^2 this gives a + 6 b sigma^2 = a + 3 b v_0^2 (B8).
 *
 * Method: never a + b v^2 across a pole (B8, resonance caveat).
 *  - Fast path: with tau = v^2 / w^2 the average is (2/sqrt(pi)) Int tau^{1/2} e^{-tau} sigma v dtau,
 *    a generalized Gauss-Laguerre rule (alpha = 1/2) of FAST_NODES nodes, used only when every
 *    s-channel pole and channel threshold above 2 m_chi lies beyond CLEARANCE_W2 in |tau| and the
 *    rule agrees with the CHECK_NODES rule to CHECK_REL_TOL (this catches poles just below
 *    threshold, which the Annihilation contract does not list).
 *  - Otherwise: adaptive Gauss-Kronrod in v on [0, V_MAX_W w] with breakpoints at each pole crossing
 *    v_p = w sqrt(tau_p), on a geometric ladder v_p +- dv 4^k around it (dv = the pole half-width in
 *    v), and at channel thresholds; one adaptive integral per channel.
 *
 * Validity: non-relativistic halo velocities (v << 1), isotropic Maxwellian without escape-velocity
 * truncation; no Sommerfeld factor. Accuracy: relative 1e-9 on the fast path (smooth sigma v), and
 * the adaptive tolerance ADAPTIVE_REL_TOL (1e-7) otherwise; checked against mpmath averages of Breit-Wigner
 * and threshold cross sections (tests/fixtures/indirect/maxwell-average.json).
 *
 * References: shared notes indirect.md B8 (Maxwellian relative-velocity distribution, p-wave
 * suppression); Gondolo & Gelmini 1991, Nucl. Phys. B360, 145 (v_Mol).
 */
import type { Annihilation } from '../annihilation-model.js';
import { C_KM_S } from '../constants.js';
import { gaussLaguerre, integrate } from '../numerics/quadrature.js';

/** Nodes of the fast Gauss-Laguerre rule (numerical knob). */
export const FAST_NODES = 16;
/** Nodes of the check rule compared with the fast rule (numerical knob). */
export const CHECK_NODES = 8;
/** Largest relative difference between the two rules accepted on the fast path (numerical knob). */
export const CHECK_REL_TOL = 1e-8;
/**
 * Poles and thresholds closer than this to tau = 0 (in units of w^2, |complex tau| for poles) send
 * the average to the adaptive path (numerical knob). The 16-node rule spans tau < ~50.
 */
export const CLEARANCE_W2 = 300;
/** Upper end of the adaptive v integral in units of w: e^{-100} of the weight is left out. */
export const V_MAX_W = 10;
/**
 * Relative tolerance of the adaptive path (numerical knob). Near a narrow pole the integrand itself
 * carries rounding noise: s - M^2 ~ M Gamma is computed from s ~ 4 m^2 with relative error
 * ~1e-16 s / (M Gamma), 1e-7 for Gamma/M = 1e-9 at m = 100 GeV, so tighter tolerances cannot be met.
 */
export const ADAPTIVE_REL_TOL = 1e-7;
/** Subinterval budget of each adaptive integral (numerical knob). */
export const ADAPTIVE_MAX_INTERVALS = 400;

export interface VelocityAverage {
  /** <sigma v_Mol> summed over channels, GeV^-2 */
  readonly totalGeV2: number;
  /** per channel, same order as Annihilation.channels, GeV^-2 */
  readonly byChannelGeV2: Float64Array;
  /** 'gauss_laguerre' (smooth integrand) or 'adaptive' (pole or threshold within the halo velocities) */
  readonly method: 'gauss_laguerre' | 'adaptive';
  /** false when an adaptive integral missed its tolerance */
  readonly converged: boolean;
}

/** w = 2 sigma_1D / c: the scale of the relative-velocity Maxwellian (units of c). */
export function relativeVelocityScale(sigmaVKmS: number): number {
  return (2 * sigmaVKmS) / C_KM_S;
}

const TWO_OVER_SQRT_PI = 2 / Math.sqrt(Math.PI);

function fastAverage(ann: Annihilation, w: number, nodes: number, out: Float64Array, byChannel: Float64Array): number {
  const rule = gaussLaguerre(nodes, 0.5);
  const m2 = ann.mChiGeV * ann.mChiGeV;
  const w2 = w * w;
  byChannel.fill(0);
  let total = 0;
  for (let i = 0; i < nodes; i++) {
    const weight = TWO_OVER_SQRT_PI * (rule.weights[i] as number);
    total += weight * ann.sigmaVByChannelGeV2(m2 * (4 + w2 * (rule.nodes[i] as number)), out);
    for (let c = 0; c < out.length; c++) byChannel[c] = (byChannel[c] as number) + weight * (out[c] as number);
  }
  return total;
}

/** Breakpoints in v (units of c) for the adaptive path: pole crossings with their ladders, thresholds. */
function adaptiveBreakpoints(ann: Annihilation, w: number): number[] {
  const m2 = ann.mChiGeV * ann.mChiGeV;
  const vMax = V_MAX_W * w;
  const points: number[] = [];
  for (const pole of ann.poles) {
    const M = pole.massGeV;
    const delta = ((M - 2 * ann.mChiGeV) * (M + 2 * ann.mChiGeV)) / m2; // v^2 at the pole crossing
    if (!(delta > 0)) continue;
    const vp = Math.sqrt(delta);
    if (vp >= vMax) continue;
    const gamma = (M * pole.widthGeV) / m2; // half-width of the pole in v^2
    const dv = Math.max(Math.min(gamma / (2 * vp), Math.sqrt(gamma)), vp * 1e-12);
    points.push(vp);
    for (let step = dv; step < vMax; step *= 4) {
      if (vp - step > 0) points.push(vp - step);
      if (vp + step < vMax) points.push(vp + step);
    }
  }
  for (const tGeV of ann.thresholdsGeV) {
    const vt2 = ((tGeV - 2 * ann.mChiGeV) * (tGeV + 2 * ann.mChiGeV)) / m2;
    if (vt2 > 0 && Math.sqrt(vt2) < vMax) points.push(Math.sqrt(vt2));
  }
  return points.sort((a, b) => a - b);
}

function adaptiveAverage(ann: Annihilation, w: number, out: Float64Array, byChannel: Float64Array): { total: number; converged: boolean } {
  const m2 = ann.mChiGeV * ann.mChiGeV;
  const norm = TWO_OVER_SQRT_PI * 2 / (w * w * w); // 4 pi (pi w^2)^{-3/2} = 4 / (sqrt(pi) w^3)
  const breakpoints = adaptiveBreakpoints(ann, w);
  const weight = (v: number): number => norm * v * v * Math.exp(-(v * v) / (w * w));
  const totalResult = integrate((v) => weight(v) * ann.sigmaVByChannelGeV2(m2 * (4 + v * v), out), 0, V_MAX_W * w, {
    relTol: ADAPTIVE_REL_TOL, breakpoints, maxIntervals: ADAPTIVE_MAX_INTERVALS,
  });
  let converged = totalResult.converged;
  // each channel to the relative tolerance; the absolute floor only stops work on channels that are
  // negligible (< 1e-12 of the total) or identically zero
  const absTol = 1e-12 * Math.abs(totalResult.value);
  for (let c = 0; c < byChannel.length; c++) {
    const r = integrate((v) => {
      ann.sigmaVByChannelGeV2(m2 * (4 + v * v), out);
      return weight(v) * (out[c] as number);
    }, 0, V_MAX_W * w, { relTol: ADAPTIVE_REL_TOL, absTol, breakpoints, maxIntervals: ADAPTIVE_MAX_INTERVALS });
    byChannel[c] = r.value;
    converged &&= r.converged;
  }
  return { total: totalResult.value, converged };
}

/** True when a pole or threshold of `ann` lies within CLEARANCE_W2 of the halo velocities. */
export function nearStructure(ann: Annihilation, w: number): boolean {
  const m2 = ann.mChiGeV * ann.mChiGeV;
  const w2 = w * w;
  for (const pole of ann.poles) {
    const re = ((pole.massGeV - 2 * ann.mChiGeV) * (pole.massGeV + 2 * ann.mChiGeV)) / m2 / w2;
    const im = (pole.massGeV * pole.widthGeV) / m2 / w2;
    if (Math.hypot(re, im) < CLEARANCE_W2) return true;
  }
  for (const tGeV of ann.thresholdsGeV) {
    const t = ((tGeV - 2 * ann.mChiGeV) * (tGeV + 2 * ann.mChiGeV)) / m2 / w2;
    if (t < CLEARANCE_W2) return true;
  }
  return false;
}

/**
 * Maxwellian average of sigma v_Mol over relative velocities with scale w = 2 sigma_1D / c
 * (see relativeVelocityScale). Deterministic: the same inputs give bit-identical output.
 */
export function maxwellAverage(ann: Annihilation, w: number): VelocityAverage {
  if (!(Number.isFinite(w) && w > 0 && w < 0.1)) {
    throw new RangeError(`maxwellAverage: relative-velocity scale w must be in (0, 0.1) (non-relativistic halo), got ${w}`);
  }
  const n = ann.channels.length;
  const out = new Float64Array(n);
  const byChannel = new Float64Array(n);
  if (n === 0) return Object.freeze({ totalGeV2: 0, byChannelGeV2: byChannel, method: 'gauss_laguerre', converged: true });
  if (!nearStructure(ann, w)) {
    const check = fastAverage(ann, w, CHECK_NODES, out, byChannel);
    const total = fastAverage(ann, w, FAST_NODES, out, byChannel);
    if (Math.abs(total - check) <= CHECK_REL_TOL * Math.abs(total)) {
      return Object.freeze({ totalGeV2: total, byChannelGeV2: byChannel, method: 'gauss_laguerre', converged: true });
    }
  }
  const { total, converged } = adaptiveAverage(ann, w, out, byChannel);
  return Object.freeze({ totalGeV2: total, byChannelGeV2: byChannel, method: 'adaptive', converged });
}
