/**
 * Mediator widths: the minimal total width of the s-channel mediator.
 *
 * What: the partial widths of the mediator into a dark-matter pair, every open quark pair, every
 * open charged-lepton pair (only when g_l > 0) and, for spin-0 mediators, the loop-induced gluon
 * pair; the total width is their sum (the "minimal width" of Abdallah et al. 2015, Phys. Dark
 * Univ. 9-10, 8, and Abercrombie et al. 2015, arXiv:1507.00966, Sec. 2).
 *
 * Method: tree-level two-body widths of the shared notes indirect.md A5, with the couplings of A0
 * (spin-1 universal g_q / g_l; spin-0 Yukawa-like c_f = g m_f / v). The gluon width uses the
 * one-loop quark triangle with the complex loop function f(tau) (above the 2 m_q threshold the
 * quark loop has an absorptive part), summed coherently over all quarks, at a fixed alpha_s.
 * Majorana dark matter with the (g_chi/2) chibar Gamma chi normalisation (indirect.md A6):
 * Gamma(M -> chi chi) = Gamma_Dirac / 2 for S, P, A; zero for V (the vector current vanishes).
 *
 * Validity: tree level plus the leading-order gluon loop; no QCD corrections to the quark widths,
 * alpha_s is not run (BASE.alphaS), quark masses are those of physics/constants.ts (running
 * masses for u..b, pole mass for t) unless a fermion list is passed. Widths into W, Z, h and
 * neutrinos are not included (the model has no such couplings). A total width above ~0.3 M makes
 * the fixed-width Breit-Wigner of the cross-section stage unreliable (the evaluation flags it).
 *
 * Accuracy: exact for the stated formulas (closed forms, double precision); checked against an
 * independent mpmath evaluation (tests/fixtures/annihilation) and the benchmark widths of
 * indirect.md A3.
 *
 * References: Djouadi 2008, Phys. Rept. 457, 1 (SM Higgs gluonic width, loop functions A_S, heavy
 * quark limit 4/3) and Phys. Rept. 459, 1 (pseudoscalar, heavy-quark limit 2); Abercrombie et al.
 * 2015 (arXiv:1507.00966) Sec. 2 for the tree-level widths.
 */
import { BASE, LEPTONS, QUARKS, type Fermion } from './constants.js';
import type { ModelPoint } from './model.js';

export interface MediatorWidth {
  /** total (minimal) width, GeV */
  readonly totalGeV: number;
  /**
   * open partial widths, GeV, keyed by final state: 'dm' (dark-matter pair), a fermion name from
   * physics/constants ('b', 'tau', ...) or 'gg' (gluon pair, spin-0 only)
   */
  readonly partialsGeV: Readonly<Record<string, number>>;
}

/** Optional inputs other than the model point. */
export interface WidthOptions {
  /** strong coupling for the gluon width; default BASE.alphaS (0.1, fixed) */
  readonly alphaS?: number;
  /** electroweak vev for the spin-0 Yukawa couplings, GeV; default BASE.higgsVev */
  readonly vevGeV?: number;
}

/** The fermions the mediator can couple to by default: all quarks and charged leptons. */
export const DEFAULT_FERMIONS: readonly Fermion[] = Object.freeze([...QUARKS, ...LEPTONS]);

/** Complex number as a pair; only the gluon loop needs complex arithmetic. */
interface Complex {
  readonly re: number;
  readonly im: number;
}

/**
 * The triangle function f(tau) of the gluon loop, tau = M^2 / (4 m_q^2): arcsin^2(sqrt tau) below
 * the quark threshold, -(1/4)[ln((1+b)/(1-b)) - i pi]^2 with b = sqrt(1 - 1/tau) above it
 * (Djouadi 2008, Phys. Rept. 457, 1, eq. 2.21 in its notation [memory for the equation number]).
 */
export function triangleF(tau: number): Complex {
  if (tau <= 1) {
    const a = Math.asin(Math.sqrt(tau));
    return { re: a * a, im: 0 };
  }
  const b = Math.sqrt(1 - 1 / tau);
  // ln((1+b)/(1-b)) = 2 atanh(b); written with log1p so that b close to 1 keeps its digits
  const l = Math.log1p(b) - Math.log1p(-b);
  return { re: -0.25 * (l * l - Math.PI * Math.PI), im: 0.25 * 2 * l * Math.PI };
}

/** Scalar loop amplitude A_S(tau) = 2 [tau + (tau - 1) f(tau)] / tau^2; tends to 4/3 for heavy quarks. */
export function loopAmplitudeScalar(tau: number): Complex {
  const fv = triangleF(tau);
  const k = 2 / (tau * tau);
  return { re: k * (tau + (tau - 1) * fv.re), im: k * (tau - 1) * fv.im };
}

/** Pseudoscalar loop amplitude A_P(tau) = 2 f(tau) / tau; tends to 2 for heavy quarks. */
export function loopAmplitudePseudoscalar(tau: number): Complex {
  const fv = triangleF(tau);
  return { re: (2 * fv.re) / tau, im: (2 * fv.im) / tau };
}

function twoBodyBeta(massGeV: number, mMedGeV: number): number {
  const x = (4 * massGeV * massGeV) / (mMedGeV * mMedGeV);
  return x < 1 ? Math.sqrt(1 - x) : 0;
}

/** Width of a spin-0 or spin-1 mediator of mass M into a fermion pair with coupling g (A5). */
function fermionPairWidth(mediator: ModelPoint['mediator'], g: number, colours: number, mF: number, M: number): number {
  if (2 * mF >= M) return 0;
  const beta = twoBodyBeta(mF, M);
  const g2 = g * g;
  switch (mediator) {
    case 'vector':
      return (colours * g2 * M * (1 + (2 * mF * mF) / (M * M)) * beta) / (12 * Math.PI);
    case 'axial':
      return (colours * g2 * M * beta * beta * beta) / (12 * Math.PI);
    case 'scalar':
      return (colours * g2 * M * beta * beta * beta) / (8 * Math.PI);
    case 'pseudoscalar':
      return (colours * g2 * M * beta) / (8 * Math.PI);
  }
}

/**
 * Gluon-pair width of a spin-0 mediator (A5):
 * Gamma = g_q^2 alpha_s^2 M^3 / (72 pi^3 v^2) |(3/4) sum_q A(tau_q)|^2.
 */
function gluonWidth(point: ModelPoint, quarks: readonly Fermion[], alphaS: number, vevGeV: number): number {
  const M = point.m_med;
  let re = 0;
  let im = 0;
  for (const q of quarks) {
    const tau = (M * M) / (4 * q.massGeV * q.massGeV);
    const a = point.mediator === 'scalar' ? loopAmplitudeScalar(tau) : loopAmplitudePseudoscalar(tau);
    re += a.re;
    im += a.im;
  }
  re *= 0.75;
  im *= 0.75;
  return (point.g_q * point.g_q * alphaS * alphaS * M * M * M * (re * re + im * im)) / (72 * Math.PI ** 3 * vevGeV * vevGeV);
}

/**
 * The minimal width of the mediator of `point`: the sum of all open partial widths. `fermions`
 * overrides the fermion list (masses, colours) of physics/constants.ts, e.g. to reproduce a
 * published test vector with other quark masses; leptons in it count only when g_l > 0.
 */
export function mediatorWidth(
  point: ModelPoint,
  fermions: readonly Fermion[] = DEFAULT_FERMIONS,
  options: WidthOptions = {},
): MediatorWidth {
  const M = point.m_med;
  const alphaS = options.alphaS ?? BASE.alphaS.value;
  const vevGeV = options.vevGeV ?? BASE.higgsVev.value;
  const spin0 = point.mediator === 'scalar' || point.mediator === 'pseudoscalar';
  const partials: Record<string, number> = {};

  const dmAllowed = !(point.dm === 'majorana' && point.mediator === 'vector');
  const dmDirac = fermionPairWidth(point.mediator, point.g_chi, 1, point.m_chi, M);
  if (dmAllowed && dmDirac > 0) partials.dm = point.dm === 'majorana' ? dmDirac / 2 : dmDirac;

  for (const f of fermions) {
    const gBare = f.kind === 'quark' ? point.g_q : point.g_l;
    if (gBare === 0) continue;
    const g = spin0 ? (gBare * f.massGeV) / vevGeV : gBare;
    const w = fermionPairWidth(point.mediator, g, f.colours, f.massGeV, M);
    if (w > 0) partials[f.name] = w;
  }

  if (spin0 && point.g_q !== 0) {
    const quarks = fermions.filter((f) => f.kind === 'quark');
    if (quarks.length > 0) partials.gg = gluonWidth(point, quarks, alphaS, vevGeV);
  }

  let total = 0;
  for (const key of Object.keys(partials)) total += partials[key] as number;
  return Object.freeze({ totalGeV: total, partialsGeV: Object.freeze(partials) });
}
