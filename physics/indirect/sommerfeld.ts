/**
 * Sommerfeld enhancement of s-wave annihilation today (optional; off unless the spec asks for it).
 *
 * What: dark-matter pairs moving slowly through a halo feel the attractive Yukawa potential
 * V(r) = -alpha e^{-m_phi r} / r of the exchanged mediator before they annihilate; the s-wave cross
 * section is multiplied by S(v_rel) = |psi(0)|^2. S is taken in the Hulthen approximation of the
 * Yukawa potential (Cassel 2010, J. Phys. G 37, 105009, arXiv:0903.5307; Slatyer 2010, JCAP 1002:028;
 * shared notes indirect.md B8):
 *
 *   a = v_rel / (2 alpha),  c = 6 alpha m_chi / (pi^2 m_phi),
 *   S = (pi/a) sinh(2 pi a c) / [cosh(2 pi a c) - cos(2 pi sqrt(c - a^2 c^2))]
 *   (cosh(2 pi sqrt(a^2 c^2 - c)) in place of the cosine when c < a^2 c^2),
 *
 * exact in the Coulomb limit m_phi -> 0, where S = (2 pi alpha / v)/(1 - e^{-2 pi alpha / v}).
 * The halo average is <S>_w = Int S(v) 4 pi v^2 (pi w^2)^{-3/2} e^{-v^2/w^2} dv over the relative-velocity
 * Maxwellian of velocity-average.ts, by adaptive Gauss-Kronrod in v with breakpoints where S changes
 * regime (v = m_phi/m_chi, where it saturates, and v = 2 pi alpha, below which it grows as 1/v).
 *
 * Which models: alpha = g_chi^2 / (4 pi) for a scalar mediator (Dirac and Majorana: with the
 * (g_chi/2) Majorana normalisation of physics/model.ts the potential equals the Dirac one) and for a
 * vector mediator between chi and chibar (Dirac). A Majorana fermion has no vector current (no
 * potential); pseudoscalar and axial-vector exchange give spin-dependent potentials singular as
 * 1/r^3, to which the formula does not apply (indirect.md B8): no factor there.
 *
 * Validity: s-wave only; the velocity-dependent rest of sigma v is not enhanced (p-wave has a factor of
 * its own, Cassel 2010, not included). The Hulthen form is within a few per cent of the exact Yukawa
 * factor away from the resonances c ~ n^2 (0.1-2.6 % in the indirect.md B8 table) and 10-20 % off
 * near them. No bound-state
 * formation; the relic abundance is computed without any factor. Accuracy of the average:
 * SOMMERFELD_REL_TOL, against scipy quad (tests/fixtures/indirect/sommerfeld.json).
 */
import type { ModelPoint } from '../model.js';
import { integrate } from '../numerics/quadrature.js';

/** Relative tolerance of the adaptive halo average of S (numerical knob). */
export const SOMMERFELD_REL_TOL = 1e-8;
/** Subinterval budget of that average (numerical knob); the resonant 1/v^2 rise needs a few dozen. */
export const SOMMERFELD_MAX_INTERVALS = 400;
/** Upper end of the v integral in units of w (e^{-100} of the weight is left out), as velocity-average.ts. */
const V_MAX_W = 10;

/**
 * S(v_rel) for an attractive Yukawa potential of strength alpha and range 1/m_phi between two
 * particles of mass m_chi (Hulthen approximation); v_rel in units of c.
 */
export function sommerfeldHulthen(vRel: number, alpha: number, mChiGeV: number, mPhiGeV: number): number {
  const a = vRel / (2 * alpha);
  const c = (6 * alpha * mChiGeV) / (Math.PI * Math.PI * mPhiGeV);
  const x = 2 * Math.PI * a * c;
  const d = c - a * a * c * c;
  // numerator and denominator divided by e^x / 2, so that nothing overflows for large x, and the
  // denominator written as a sum or product of terms that do not cancel (at small x and c its
  // terms of order 1 would otherwise cancel down to ~x^2, leaving noise for S ~ 1)
  const num = -Math.expm1(-2 * x);
  let den: number;
  if (d >= 0) {
    // 1 + e^{-2x} - 2 e^{-x} cos t = (1 - e^{-x})^2 + 4 e^{-x} sin^2(t/2), t = 2 pi sqrt(d)
    const oneMinus = -Math.expm1(-x);
    const half = Math.sin(Math.PI * Math.sqrt(d));
    den = oneMinus * oneMinus + 4 * Math.exp(-x) * half * half;
  } else {
    // y = 2 pi sqrt(a^2 c^2 - c) < x: 1 + e^{-2x} - e^{y-x} - e^{-y-x} = (1 - e^{-(x-y)})(1 - e^{-(x+y)}),
    // x - y in the rationalised form, which keeps its digits when both are large (the Coulomb side,
    // where x - y -> pi/a)
    const xMinusY = (2 * Math.PI * c) / (a * c + Math.sqrt(-d));
    den = -Math.expm1(-xMinusY) * -Math.expm1(xMinusY - 2 * x);
  }
  return ((Math.PI / a) * num) / den;
}

/** Coupling of the Yukawa potential between the annihilating pair, or null when no s-wave factor applies. */
export function sommerfeldAlpha(point: ModelPoint): number | null {
  if (point.mediator === 'scalar' || (point.mediator === 'vector' && point.dm === 'dirac')) return (point.g_chi * point.g_chi) / (4 * Math.PI);
  return null;
}

export interface SommerfeldAverage {
  /** <S> over the relative-velocity Maxwellian of scale w */
  readonly mean: number;
  readonly converged: boolean;
}

/** <S>_w: the Maxwellian average of S(v_rel) with w = 2 sigma_1D / c (velocity-average.ts relativeVelocityScale). */
export function maxwellSommerfeld(w: number, alpha: number, mChiGeV: number, mPhiGeV: number): SommerfeldAverage {
  if (!(alpha > 0)) return { mean: 1, converged: true };
  const norm = 4 / (Math.sqrt(Math.PI) * w * w * w); // 4 pi (pi w^2)^{-3/2}
  const vMax = V_MAX_W * w;
  const r = integrate(
    (v) => (v === 0 ? 0 : norm * v * v * Math.exp(-(v * v) / (w * w)) * sommerfeldHulthen(v, alpha, mChiGeV, mPhiGeV)),
    0, vMax,
    { relTol: SOMMERFELD_REL_TOL, maxIntervals: SOMMERFELD_MAX_INTERVALS, breakpoints: [mPhiGeV / mChiGeV, 2 * Math.PI * alpha, w] },
  );
  return { mean: r.value, converged: r.converged };
}
