/**
 * Hadronic inputs for direct detection: the scalar quark content f_Tq^N and the axial quark spin
 * content Delta q^N of the nucleon, as selectable sourced sets.
 *
 * What: f_Tq^N = m_q <N|qbar q|N> / m_N for q = u, d, s; the gluon fraction f_TG^N = 1 - sum f_Tq^N
 * fixes the heavy quarks through f_TQ^N = (2/27) f_TG^N per heavy flavour (Shifman, Vainshtein &
 * Zakharov 1978, PLB 78, 443). Delta q^N for q = u, d, s defined by <N|qbar gamma^mu gamma5 q|N> =
 * 2 s^mu Delta q^N; neutron values follow from the proton by isospin (Delta u^n = Delta d^p,
 * Delta d^n = Delta u^p, Delta s^n = Delta s^p).
 *
 * Sets (shared notes direct.md §2.3; central values only, uncertainties in the comments):
 *  - scalar 'A' (default): f_Tu, f_Td from Hoferichter, Ruiz de Elvira, Kubis & Meissner, PRL 115,
 *    092301 (2015) (sigma_piN = 59.1 +- 3.5 MeV); f_Ts from Junnarkar & Walker-Loud, PRD 87, 114510
 *    (2013). Values as quoted in the notes [from memory there].
 *  - scalar 'B' (legacy): Ellis, Olive & Savage, PRD 77, 065026 (2008), Sigma_piN = 64 MeV [numbers
 *    from memory in the notes].
 *  - spin 'H' (default): HERMES, PRD 75, 012007 (2007), Q^2 = 5 GeV^2, MS-bar [from memory in the notes].
 *  - spin 'B' (legacy): Ellis, Olive & Savage 2008 [from memory in the notes].
 *  - spin 'L' (lattice): as quoted by FLAG 2019 from one N_f = 2+1+1 calculation [uncertain in the notes].
 *
 * Accuracy: f_Tq carry a 10-20 % systematic (f_Ts more for set B); Delta q sets differ by a factor
 * ~5 on sigma_SD for universal axial couplings (notes §8).
 */
import { InvalidInputError } from '../issue.js';

export type ScalarSetId = 'A' | 'B';
export type SpinSetId = 'H' | 'B' | 'L';

/** Scalar quark content of one nucleon. */
export interface ScalarContent {
  readonly fTu: number;
  readonly fTd: number;
  readonly fTs: number;
}

export interface ScalarSet {
  readonly id: ScalarSetId;
  readonly proton: ScalarContent;
  readonly neutron: ScalarContent;
  readonly source: string;
}

/** Axial spin content of the proton (neutron by isospin). */
export interface SpinSet {
  readonly id: SpinSetId;
  readonly deltaU: number;
  readonly deltaD: number;
  readonly deltaS: number;
  readonly source: string;
}

export const SCALAR_SETS: Readonly<Record<ScalarSetId, ScalarSet>> = Object.freeze({
  A: Object.freeze({
    id: 'A',
    // u, d: +-0.0015, +-0.0028 (p), +-0.0014, +-0.0027 (n); s: +-0.011
    proton: Object.freeze({ fTu: 0.0208, fTd: 0.0411, fTs: 0.043 }),
    neutron: Object.freeze({ fTu: 0.0189, fTd: 0.0451, fTs: 0.043 }),
    source: 'u,d: Hoferichter, Ruiz de Elvira, Kubis & Meissner, PRL 115, 092301 (2015); s: Junnarkar & Walker-Loud, PRD 87, 114510 (2013); as quoted in direct.md §2.3',
  }),
  B: Object.freeze({
    id: 'B',
    // +-0.004, +-0.005, +-0.062 (p); +-0.003, +-0.008, +-0.062 (n)
    proton: Object.freeze({ fTu: 0.02, fTd: 0.026, fTs: 0.118 }),
    neutron: Object.freeze({ fTu: 0.014, fTd: 0.036, fTs: 0.118 }),
    source: 'Ellis, Olive & Savage, PRD 77, 065026 (2008), Sigma_piN = 64 MeV; as quoted in direct.md §2.3',
  }),
});

export const SPIN_SETS: Readonly<Record<SpinSetId, SpinSet>> = Object.freeze({
  H: Object.freeze({ id: 'H', deltaU: 0.842, deltaD: -0.427, deltaS: -0.085, source: 'HERMES, PRD 75, 012007 (2007), Q^2 = 5 GeV^2, MS-bar; as quoted in direct.md §2.3' }),
  // +-0.02 each
  B: Object.freeze({ id: 'B', deltaU: 0.78, deltaD: -0.48, deltaS: -0.15, source: 'Ellis, Olive & Savage, PRD 77, 065026 (2008); as quoted in direct.md §2.3' }),
  L: Object.freeze({ id: 'L', deltaU: 0.777, deltaD: -0.438, deltaS: -0.053, source: 'FLAG 2019, N_f = 2+1+1 (one calculation); as quoted in direct.md §2.3 (uncertain)' }),
});

export const SCALAR_SET_IDS = Object.keys(SCALAR_SETS) as ScalarSetId[];
export const SPIN_SET_IDS = Object.keys(SPIN_SETS) as SpinSetId[];

/**
 * Number of heavy quarks (c, b, t) that couple through the gluon fraction: each contributes
 * (2/27) f_TG (Shifman, Vainshtein & Zakharov 1978).
 */
export const HEAVY_QUARK_COUNT = 3;

/** Gluon fraction f_TG = 1 - sum_{u,d,s} f_Tq. */
export function gluonFraction(c: ScalarContent): number {
  return 1 - (c.fTu + c.fTd + c.fTs);
}

/**
 * Yukawa-like scalar bracket  sum_{u,d,s} f_Tq + (2/27) f_TG * HEAVY_QUARK_COUNT
 * (couplings lambda_q = g_q m_q / v, so quark masses cancel; direct.md §2.4 (a)).
 */
export function yukawaScalarBracket(c: ScalarContent): number {
  return c.fTu + c.fTd + c.fTs + ((2 / 27) * HEAVY_QUARK_COUNT) * gluonFraction(c);
}

/** Sum of the proton spin fractions Delta u + Delta d + Delta s (equal for the neutron by isospin). */
export function spinSum(s: SpinSet): number {
  return s.deltaU + s.deltaD + s.deltaS;
}

function unknownSet(path: string, kind: string, id: string, allowed: readonly string[]): never {
  throw new InvalidInputError([{
    code: 'invalid_choice', path, message: `unknown ${kind} hadronic set '${id}'`, seen: id, allowed: allowed.join(', '),
  }]);
}

/** Resolves a scalar set by id; `path` names the spec field in the error. */
export function scalarSet(id: string, path = 'hadronic.scalarSet'): ScalarSet {
  const set = (SCALAR_SETS as Record<string, ScalarSet | undefined>)[id];
  if (!set) unknownSet(path, 'scalar', id, SCALAR_SET_IDS);
  return set;
}

/** Resolves a spin set by id; `path` names the spec field in the error. */
export function spinSet(id: string, path = 'hadronic.spinSet'): SpinSet {
  const set = (SPIN_SETS as Record<string, SpinSet | undefined>)[id];
  if (!set) unknownSet(path, 'spin', id, SPIN_SET_IDS);
  return set;
}
