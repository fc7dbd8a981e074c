/**
 * Proton and neutron cross sections combined for the target nucleus of a published limit, so that
 * limit curves can be applied to points whose dark matter couples differently to protons and
 * neutrons. Prepared once per constraint; per point only a loop over the target's isotopes (at most
 * nine, for xenon) of a few multiplications each.
 *
 * Spin-independent (shared notes direct.md §6.3; Feng, Kumar, Marfatia & Sanford, PLB 703, 124
 * (2011), from memory there): published SI limits are per nucleon for f_n = f_p. The cross section
 * to compare with such a curve is the one that gives the same summed coherent rate:
 *   sigma_eff = mu_p^2 sum_i x_i mu_Ai^2 (Z f_p + (A_i - Z) f_n)^2 / sum_i x_i mu_Ai^2 A_i^2
 * in units where sigma_N = mu_N^2 f_N^2 (direct.md §2.2); x_i = atom fraction. With f_n = f_p this is
 * sigma_p; with f_n = 0 it is 0.169 sigma_p for xenon at 100 GeV. The stored sigma_si_p / sigma_si_n
 * give |f_p|, |f_n|; the relative sign is `signFnFp` (see `couplingSigns`). Writing the sum with f_p
 * and f_n (not sigma_p times a function of f_n/f_p) keeps f_p = 0 finite: it reduces to the
 * neutron-only sum, normalised with mu_p (mu_p/mu_n differs from 1 by < 0.3 %).
 *
 * Spin-dependent (direct.md §6.4, §3.3): published SD limits are proton-only (a_n = 0) or
 * neutron-only (a_p = 0). At q -> 0 isotope i contributes x_i mu_Ai^2 (J_i+1)/J_i (a_p <S_p>_i +
 * a_n <S_n>_i)^2 (the isotope weighting of §6.3). With P = sum c_i <S_p>_i^2, N = sum c_i <S_n>_i^2,
 * X = sum c_i <S_p>_i <S_n>_i (c_i = x_i mu_Ai^2 (J_i+1)/J_i) and x = sigma_p / lim_p,
 * y = sigma_n / lim_n, the rate over the limit rate is
 *   x + y + 2 sign(a_p a_n) rho sqrt(x y),  rho = X / sqrt(P N)  (|rho| <= 1, Cauchy-Schwarz).
 * For one spin isotope rho = sign(<S_p><S_n>) and this is the sum rule of Tovey, Gaitskell, Gondolo,
 * Ramachers & Roszkowski, PLB 488, 17 (2000): (sqrt x +- sqrt y)^2 <= 1. Xenon (129Xe, 131Xe) gives
 * rho = 0.9993 at 100 GeV.
 *
 * Relative signs: the stored observables are cross sections, so signs are lost. In this model
 * (physics/model.ts) f_N = g_chi g_q K_N / M^2 with K_N > 0 a hadronic constant (scalar: m_N times
 * the Yukawa bracket; vector: 3; axial: the spin sum, the same for p and n), so sign(f_p f_n) and
 * sign(a_p a_n) do not depend on the point: `couplingSigns` reads them once from
 * physics/direct nucleonCouplings for every dark-matter kind and mediator with the scan's hadronic
 * inputs, instead of storing a sign per point.
 *
 * Validity: elastic scattering at q -> 0; differences between isotopes in kinematics, form factor or
 * SD structure function are neglected (direct.md §6.3), which is why targets are single elements.
 * Accuracy: exact for these formulas; the spin expectation values carry 10-30 % model dependence
 * (direct.md §3.3).
 */
import { BASE } from '../../physics/constants.js';
// the same public functions physics/direct/index.ts exports, imported from their modules: the index
// also loads the halo module and with it mathjs (about 1 s more start-up for `judge`, measured)
import { scalarSet, spinSet } from '../../physics/direct/hadronic.js';
import { ELEMENTS } from '../../physics/direct/isotopes.js';
import { nucleonCouplings } from '../../physics/direct/nucleon.js';
import { DM_KINDS, MEDIATOR_KINDS, type ModelPoint } from '../../physics/model.js';
import type { Hadronic } from '../../physics/setup.js';

const M_P = BASE.protonMass.value;
const M_N = BASE.neutronMass.value;
const U_GEV = BASE.atomicMassUnit.value;

/** Isotopes of one element, as flat arrays for the per-point loops. */
export interface SiTarget {
  readonly symbol: string;
  readonly z: number;
  /** nuclear masses, GeV */
  readonly massGeV: Float64Array;
  readonly atomFraction: Float64Array;
  readonly neutrons: Float64Array;
  readonly a2: Float64Array;
}

export interface SdTarget {
  readonly symbol: string;
  /** nuclear masses of the spin-carrying isotopes, GeV */
  readonly massGeV: Float64Array;
  /** x_i (J+1)/J <S_p>^2, x_i (J+1)/J <S_n>^2, x_i (J+1)/J <S_p><S_n> */
  readonly cp: Float64Array;
  readonly cn: Float64Array;
  readonly cx: Float64Array;
}

/** Element symbols with isotope data (physics/direct/isotopes.ts). */
export const ELEMENT_SYMBOLS: readonly string[] = Object.freeze(Object.keys(ELEMENTS));

/** Elements with both proton and neutron spin in their spin-carrying isotopes (SD pairs need both). */
export const SD_ELEMENT_SYMBOLS: readonly string[] = Object.freeze(
  ELEMENT_SYMBOLS.filter((s) => {
    const spins = ELEMENTS[s]!.isotopes.flatMap((i) => (i.spin ? [i.spin] : []));
    return spins.some((x) => x.sp !== 0) && spins.some((x) => x.sn !== 0);
  }),
);

/** The SI isotope table of an element (a symbol from ELEMENT_SYMBOLS). */
export function siTarget(symbol: string): SiTarget {
  const el = ELEMENTS[symbol];
  if (!el) throw new RangeError(`siTarget: no isotope data for '${symbol}'`);
  const iso = el.isotopes;
  return Object.freeze({
    symbol,
    z: el.z,
    massGeV: Float64Array.from(iso, (i) => i.massU * U_GEV),
    atomFraction: Float64Array.from(iso, (i) => i.atomFraction),
    neutrons: Float64Array.from(iso, (i) => i.a - el.z),
    a2: Float64Array.from(iso, (i) => i.a * i.a),
  });
}

/**
 * The SI cross section per nucleon, normalised to f_n = f_p, that gives the target's summed coherent
 * rate (cm^2). `signFnFp` is the sign of f_n / f_p.
 */
export function effectiveSiCm2(t: SiTarget, mChiGeV: number, sigmaPCm2: number, sigmaNCm2: number, signFnFp: number): number {
  const muPOverMuN = (M_P * (mChiGeV + M_N)) / (M_N * (mChiGeV + M_P));
  const fp = Math.sqrt(sigmaPCm2);
  const fn = signFnFp * Math.sqrt(sigmaNCm2) * muPOverMuN;
  let num = 0;
  let den = 0;
  // mu_Ai^2 = m_chi^2 (m_i / (m_chi + m_i))^2; the common m_chi^2 cancels
  for (let i = 0; i < t.massGeV.length; i++) {
    const r = t.massGeV[i]! / (mChiGeV + t.massGeV[i]!);
    const w = t.atomFraction[i]! * r * r;
    const amp = t.z * fp + t.neutrons[i]! * fn;
    num += w * amp * amp;
    den += w * t.a2[i]!;
  }
  return num / den;
}

/** The SD table of an element with proton and neutron spin (a symbol from SD_ELEMENT_SYMBOLS). */
export function sdTarget(symbol: string): SdTarget {
  if (!SD_ELEMENT_SYMBOLS.includes(symbol)) throw new RangeError(`sdTarget: no proton and neutron spin data for '${symbol}'`);
  const spinning = ELEMENTS[symbol]!.isotopes.filter((i) => i.spin);
  const factor = (i: (typeof spinning)[number]): number => (i.atomFraction * (i.spin!.j + 1)) / i.spin!.j;
  return Object.freeze({
    symbol,
    massGeV: Float64Array.from(spinning, (i) => i.massU * U_GEV),
    cp: Float64Array.from(spinning, (i) => factor(i) * i.spin!.sp * i.spin!.sp),
    cn: Float64Array.from(spinning, (i) => factor(i) * i.spin!.sn * i.spin!.sn),
    cx: Float64Array.from(spinning, (i) => factor(i) * i.spin!.sp * i.spin!.sn),
  });
}

/** rho = X / sqrt(P N) of the target at this dark-matter mass (+-1 for one spin isotope). */
export function sdCorrelation(t: SdTarget, mChiGeV: number): number {
  let p = 0;
  let n = 0;
  let x = 0;
  for (let i = 0; i < t.massGeV.length; i++) {
    const r = t.massGeV[i]! / (mChiGeV + t.massGeV[i]!);
    const w = r * r;
    p += w * t.cp[i]!;
    n += w * t.cn[i]!;
    x += w * t.cx[i]!;
  }
  return x / Math.sqrt(p * n);
}

/**
 * Summed SD rate over the limit rate for x = sigma_p / lim_p, y = sigma_n / lim_n and
 * kappa = sign(a_p a_n) rho; the point is allowed when this is <= 1.
 */
export function sdSumRule(x: number, y: number, kappa: number): number {
  return x + y + 2 * kappa * Math.sqrt(x * y);
}

/** Signs of f_n/f_p (SI) and a_n/a_p (SD) shared by every structure of the model. */
export interface CouplingSigns {
  /** sign of f_p f_n; undefined when structures disagree */
  readonly si: 1 | -1 | undefined;
  /** sign of a_p a_n; undefined when structures disagree */
  readonly sd: 1 | -1 | undefined;
  /** the sign per structure, for messages: 'dirac/scalar si +1 sd 0, ...' */
  readonly detail: string;
}

/**
 * The one sign of `products` (amplitude products p * n of the structures that scatter), +1 when
 * none does; `undefined` when they disagree.
 */
export function commonSign(products: readonly number[]): 1 | -1 | undefined {
  const signs = new Set(products.filter((x) => x !== 0).map((x) => (x > 0 ? 1 : -1)));
  if (signs.size > 1) return undefined;
  return signs.has(-1) ? -1 : 1;
}

/**
 * Relative nucleon-coupling signs of the model with these hadronic inputs, from one probe point per
 * dark-matter kind and mediator (the signs do not depend on masses or couplings, see the head comment).
 */
export function couplingSigns(hadronic: Hadronic): CouplingSigns {
  const inputs = { scalar: scalarSet(hadronic.scalarSet), spin: spinSet(hadronic.spinSet) };
  const si: number[] = [];
  const sd: number[] = [];
  const labels: string[] = [];
  for (const dm of DM_KINDS) {
    for (const mediator of MEDIATOR_KINDS) {
      const probe: ModelPoint = { dm, mediator, m_chi: 100, m_med: 1000, g_chi: 1, g_q: 1, g_l: 0, width_med: null };
      const c = nucleonCouplings(probe, inputs);
      si.push(c.siAmpPGeV2 * c.siAmpNGeV2);
      sd.push(c.sdAmpPGeV2 * c.sdAmpNGeV2);
      labels.push(`${dm}/${mediator}`);
    }
  }
  const detail = labels.map((l, k) => `${l} si ${Math.sign(si[k]!)} sd ${Math.sign(sd[k]!)}`).join(', ');
  return Object.freeze({ si: commonSign(si), sd: commonSign(sd), detail });
}
