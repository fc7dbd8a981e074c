/**
 * Dark matter - nucleon couplings and per-nucleon cross sections at zero momentum transfer.
 *
 * What: from the mediator couplings of a model point, the spin-independent (SI) amplitudes f_p, f_n
 * and spin-dependent (SD) amplitudes a_p, a_n (GeV^-2, contact limit: one factor 1/M^2 from the
 * propagator at q = 0) and the cross sections sigma_SI,N = mu_N^2 f_N^2 / pi and
 * sigma_SD,N = 3 mu_N^2 a_N^2 / pi (shared notes direct.md §2.2), in cm^2.
 *
 * Method (direct.md §2.4-2.8), couplings as in physics/model.ts:
 *  - scalar mediator, Yukawa-like quark couplings lambda_q = g_q m_q / v: quark masses cancel and
 *    f_N = g_chi g_q m_N / (v M^2) [sum_{u,d,s} f_Tq^N + (2/9) f_TG^N] (heavy quarks c, b, t via
 *    the gluon fraction, physics/direct/hadronic.ts);
 *  - vector mediator, universal g_q: only valence quarks, b_p = g_chi (2 g_u + g_d)/M^2 = 3 g_chi g_q
 *    / M^2 = b_n; zero for Majorana dark matter (the vector current vanishes; no flag, direct.md §2.2);
 *  - axial mediator: a_N = g_chi g_q sum_{u,d,s} Delta q^N / M^2;
 *  - pseudoscalar mediator and mixed-parity structures (reachable through `nucleonCouplingsFor`)
 *    give non-relativistic operators suppressed by q^2 or v^2 (O6, O7/O9, O8/O9, O10, O11 of
 *    Fitzpatrick et al., JCAP 02 (2013) 004): their cross sections are set to 0 and flagged
 *    'velocity_suppressed_dd' plus 'dd_suppressed_<operators>', never folded into sigma_SI/SD,
 *    because published limits assume the O1/O4 spectra (direct.md §2.7).
 *  - lepton couplings give no tree-level nuclear scattering: with g_q = 0 and g_l > 0 the point is
 *    flagged 'leptophilic' (loop-induced photon mixing is not included, direct.md §2.8).
 *  - m_med < 1 GeV is flagged 'light_mediator': the cross sections here are the q = 0 values; the
 *    event rates apply the propagator factor [M^2/(M^2 + q^2)]^2 (physics/direct/rate.ts).
 * Majorana normalisation: L contains (g_chi/2) chibar Gamma chi, so Majorana and Dirac cross
 * sections agree at equal g_chi (direct.md §2.2).
 *
 * Validity: tree level, leading order in the non-relativistic expansion, contact limit for the
 * reported cross sections. Accuracy: exact for these formulas; the hadronic inputs dominate the
 * uncertainty (10-20 % SI, up to a factor 5 SD between sets, direct.md §8).
 * References: direct.md §2; Abercrombie et al. 2015, arXiv:1507.00966 (benchmark scalings).
 */
import { BASE, GEV2_TO_CM2 } from '../constants.js';
import type { DmKind, ModelPoint } from '../model.js';
import { spinSum, yukawaScalarBracket, type ScalarSet, type SpinSet } from './hadronic.js';

/** Lorentz structure of a fermion bilinear. */
export type Bilinear = 'scalar' | 'pseudoscalar' | 'vector' | 'axial';

/** Mediator masses below this are flagged 'light_mediator' (direct.md §2.9), GeV. */
export const LIGHT_MEDIATOR_GEV = 1;

/** Resolved hadronic inputs (one scalar set, one spin set). */
export interface HadronicInputs {
  readonly scalar: ScalarSet;
  readonly spin: SpinSet;
}

/** Couplings with an explicit Lorentz structure on each side of the mediator. */
export interface CouplingStructure {
  readonly dm: DmKind;
  readonly dmBilinear: Bilinear;
  readonly quarkBilinear: Bilinear;
  readonly mChiGeV: number;
  readonly mMedGeV: number;
  readonly gChi: number;
  readonly gQ: number;
  readonly gL: number;
}

export interface NucleonCouplings {
  /** SI amplitude on the proton (O1 coefficient normalised as f_N in direct.md §2.2), GeV^-2 */
  readonly siAmpPGeV2: number;
  /** SI amplitude on the neutron, GeV^-2 */
  readonly siAmpNGeV2: number;
  /** SD amplitude on the proton (a_N of direct.md §2.2), GeV^-2 */
  readonly sdAmpPGeV2: number;
  /** SD amplitude on the neutron, GeV^-2 */
  readonly sdAmpNGeV2: number;
  readonly sigmaSiPCm2: number;
  readonly sigmaSiNCm2: number;
  readonly sigmaSdPCm2: number;
  readonly sigmaSdNCm2: number;
  /** sorted flag names */
  readonly flags: readonly string[];
}

const M_P = BASE.protonMass.value;
const M_N = BASE.neutronMass.value;
const V_EW = BASE.higgsVev.value;

/** Suppressed non-relativistic operators per (DM bilinear, quark bilinear) (direct.md §2.7 table). */
const SUPPRESSED: Readonly<Record<string, string>> = Object.freeze({
  'pseudoscalar|pseudoscalar': 'dd_suppressed_o6',
  'scalar|pseudoscalar': 'dd_suppressed_o10',
  'pseudoscalar|scalar': 'dd_suppressed_o11',
  'vector|axial': 'dd_suppressed_o7_o9',
  'axial|vector': 'dd_suppressed_o8_o9',
});

const reducedMass = (a: number, b: number): number => (a * b) / (a + b);

/** Nucleon couplings for a general (DM bilinear) x (quark bilinear) structure. */
export function nucleonCouplingsFor(c: CouplingStructure, hadronic: HadronicInputs): NucleonCouplings {
  const flags: string[] = [];
  const invM2 = 1 / (c.mMedGeV * c.mMedGeV);
  const g = c.gChi * c.gQ;
  let siP = 0;
  let siN = 0;
  let sdP = 0;
  let sdN = 0;
  // the Majorana vector bilinear vanishes identically: no scattering through it at all
  const dmVanishes = c.dm === 'majorana' && c.dmBilinear === 'vector';
  const spin0 = c.quarkBilinear === 'scalar' || c.quarkBilinear === 'pseudoscalar';
  const spin0Dm = c.dmBilinear === 'scalar' || c.dmBilinear === 'pseudoscalar';
  if (spin0 !== spin0Dm) {
    throw new RangeError(`nucleonCouplingsFor: a ${c.dmBilinear} DM bilinear cannot share a mediator with a ${c.quarkBilinear} quark bilinear`);
  }
  if (!dmVanishes && g !== 0) {
    const key = `${c.dmBilinear}|${c.quarkBilinear}`;
    if (key === 'scalar|scalar') {
      siP = (g * M_P * yukawaScalarBracket(hadronic.scalar.proton) * invM2) / V_EW;
      siN = (g * M_N * yukawaScalarBracket(hadronic.scalar.neutron) * invM2) / V_EW;
    } else if (key === 'vector|vector') {
      // universal quark coupling: 2 g_u + g_d = g_u + 2 g_d = 3 g_q
      siP = 3 * g * invM2;
      siN = siP;
    } else if (key === 'axial|axial') {
      // isospin: the neutron sum equals the proton sum for universal couplings
      sdP = g * spinSum(hadronic.spin) * invM2;
      sdN = sdP;
    } else {
      flags.push('velocity_suppressed_dd', SUPPRESSED[key]!);
    }
  }
  if (c.gQ === 0 && c.gL > 0) flags.push('leptophilic');
  if (c.mMedGeV < LIGHT_MEDIATOR_GEV) flags.push('light_mediator');
  const muP = reducedMass(c.mChiGeV, M_P);
  const muN = reducedMass(c.mChiGeV, M_N);
  const si = (mu: number, f: number): number => ((mu * mu * f * f) / Math.PI) * GEV2_TO_CM2;
  return Object.freeze({
    siAmpPGeV2: siP,
    siAmpNGeV2: siN,
    sdAmpPGeV2: sdP,
    sdAmpNGeV2: sdN,
    sigmaSiPCm2: si(muP, siP),
    sigmaSiNCm2: si(muN, siN),
    sigmaSdPCm2: 3 * si(muP, sdP),
    sigmaSdNCm2: 3 * si(muN, sdN),
    flags: Object.freeze(flags.sort()),
  });
}

/** Nucleon couplings of a model point: the mediator has the same Lorentz structure on both sides. */
export function nucleonCouplings(point: ModelPoint, hadronic: HadronicInputs): NucleonCouplings {
  return nucleonCouplingsFor(
    {
      dm: point.dm,
      dmBilinear: point.mediator,
      quarkBilinear: point.mediator,
      mChiGeV: point.m_chi,
      mMedGeV: point.m_med,
      gChi: point.g_chi,
      gQ: point.g_q,
      gL: point.g_l,
    },
    hadronic,
  );
}
