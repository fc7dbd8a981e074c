/**
 * Nuclear form factors for elastic WIMP-nucleus scattering.
 *
 * What: the Helm spin-independent form factor F^2(q) with the Lewin & Smith parameters, and the
 * Lewin & Smith "thin shell" form factor used as a crude stand-in for spin-dependent scattering.
 *
 * Method:
 *  - Helm (Lewin & Smith 1996, Astropart. Phys. 6, 87, §4.2, eqs. 4.7-4.11): F(q) = 3 j1(q r_n) /
 *    (q r_n) exp(-q^2 s^2 / 2), r_n^2 = c^2 + (7/3) pi^2 a^2 - 5 s^2, c = 1.23 A^(1/3) - 0.60 fm,
 *    a = 0.52 fm, s = 0.9 fm (direct.md §3.2). For q r_n < 1e-2 the series 1 - x^2/10 + x^4/280
 *    replaces 3 j1(x)/x, whose direct formula cancels catastrophically.
 *  - Thin shell (Lewin & Smith 1996, §4.3, from memory): F(q) = j0(q r_n) with r_n = 1.0 A^(1/3) fm
 *    for q r_n < 2.55 or > 4.5, and |F| = 0.217 in between (the value of |j0| at both ends).
 *
 * Validity: Helm with these parameters is the convention of published SI limits; it differs from
 * Fourier-Bessel fits of electron-scattering data by up to 10-20 % in the relevant range (Duda,
 * Kemper & Gondolo 2007, JCAP 0704:012). The thin shell only orders SD rates by magnitude
 * (realistic SD structure functions differ by tens of per cent); never set limits with it.
 * Accuracy: double precision for the formulas (relative ~1e-15 away from zeros of j1).
 */
import { BASE } from '../constants.js';

// Lewin & Smith 1996 §4.2 Helm parameters (fm)
const HELM_C_COEFF_FM = 1.23;
const HELM_C_OFFSET_FM = 0.6;
const HELM_A_FM = 0.52;
const HELM_S_FM = 0.9;
// Lewin & Smith 1996 §4.3 thin-shell radius coefficient and plateau (from memory)
const THIN_SHELL_R_COEFF_FM = 1.0;
const THIN_SHELL_PLATEAU = 0.217;
/** q r_n at the edges of the thin-shell plateau, where F^2 has kinks (quadratures split there). */
export const THIN_SHELL_PLATEAU_EDGES: readonly [number, number] = [2.55, 4.5];

/** Helm effective radius r_n for mass number a, fm. */
export function helmRadiusFm(a: number): number {
  const c = HELM_C_COEFF_FM * Math.cbrt(a) - HELM_C_OFFSET_FM;
  return Math.sqrt(c * c + (7 / 3) * Math.PI * Math.PI * HELM_A_FM * HELM_A_FM - 5 * HELM_S_FM * HELM_S_FM);
}

/** Momentum transfer q = sqrt(2 m_A E_R) in fm^-1 for nuclear mass in GeV and recoil energy in keV. */
export function momentumTransferFm(massGeV: number, recoilKeV: number): number {
  return Math.sqrt(2 * massGeV * recoilKeV * 1e-6) / BASE.hbarC.value;
}

/** 3 j1(x) / x with its small-x series. */
function threeJ1OverX(x: number): number {
  if (x < 1e-2) {
    const x2 = x * x;
    return 1 - x2 / 10 + (x2 * x2) / 280;
  }
  return (3 * (Math.sin(x) - x * Math.cos(x))) / (x * x * x);
}

/** Helm form factor squared for momentum transfer qFm (fm^-1) and effective radius rnFm (fm). */
export function helmFormFactorSq(qFm: number, rnFm: number): number {
  const f = threeJ1OverX(qFm * rnFm) * Math.exp(-0.5 * qFm * qFm * HELM_S_FM * HELM_S_FM);
  return f * f;
}

/** Thin-shell radius for mass number a, fm. */
export function thinShellRadiusFm(a: number): number {
  return THIN_SHELL_R_COEFF_FM * Math.cbrt(a);
}

/** Recoil energies (keV) of the thin-shell plateau edges for nuclear mass massGeV and radius rnFm. */
export function thinShellKinksKeV(massGeV: number, rnFm: number): number[] {
  return THIN_SHELL_PLATEAU_EDGES.map((x) => ((x / rnFm) * BASE.hbarC.value) ** 2 / (2 * massGeV) * 1e6);
}

/** Lewin & Smith thin-shell form factor squared (crude spin-dependent stand-in). */
export function thinShellFormFactorSq(qFm: number, rnFm: number): number {
  const x = qFm * rnFm;
  if (x >= THIN_SHELL_PLATEAU_EDGES[0] && x <= THIN_SHELL_PLATEAU_EDGES[1]) return THIN_SHELL_PLATEAU * THIN_SHELL_PLATEAU;
  const j0 = x < 1e-4 ? 1 - (x * x) / 6 : Math.sin(x) / x;
  return j0 * j0;
}
