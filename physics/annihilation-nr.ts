/**
 * Non-relativistic expansion sigma v = a + b v^2 (v = v_rel) of chi chibar -> f fbar.
 *
 * What: the s-wave coefficient a and the p-wave coefficient b per fermion channel, from the table of
 * the shared notes indirect.md A2 (numerator expanded with s = 4 m_chi^2 / (1 - v^2/4), propagator
 * expanded about s = 4 m_chi^2 with P0 and P2).
 *
 * Use: a test oracle and a check of physics/annihilation.ts only. It is NOT used for results: the
 * project always averages the full sigma v_Mol(s) (README conventions), because the expansion fails
 * near a resonance (|4 m_chi^2 - M^2| comparable to M Gamma or m_chi^2 v^2) and near thresholds.
 *
 * Validity: far from resonance and from the 2 m_f thresholds, v << 1. Accuracy: O(v^4).
 *
 * Also the expansion of chi chibar -> med med (t/u-channel chi exchange, m_chi > m_med): the a of
 * indirect.md A4 and the full v^2 coefficient b for all four mediators, obtained here (sympy) by
 * expanding the exact closed form of physics/annihilation.ts to first order in d = s/m^2 - 4 = v^2 + O(v^4).
 * The S and P b and the V/A a reproduce indirect.md A4 exactly; b_V and the complete b_A (A4 gives
 * only its r -> 0 leading term 1/(12 pi r^2) g^4/m^2, reproduced here) are new.
 *
 * References: indirect.md A2 (derived with sympy there); leading terms as in Berlin, Hooper &
 * McDermott 2014, PRD 89, 115022 [memory]; indirect.md A4 for the mediator pair.
 */
import { BASE, type Fermion } from './constants.js';
import type { ModelPoint } from './model.js';
import { DEFAULT_FERMIONS } from './widths.js';

export interface NrChannelCoefficients {
  /** fermion name */
  readonly name: string;
  /** s-wave coefficient, GeV^-2 */
  readonly aGeV2: number;
  /** v^2 coefficient (v = v_rel), GeV^-2 */
  readonly bGeV2: number;
}

/**
 * a and b per open fermion channel (m_f < m_chi) of `point` with total width `widthMedGeV`.
 * Same couplings and Majorana convention as physics/annihilation.ts.
 */
export function nrCoefficients(
  point: ModelPoint,
  widthMedGeV: number,
  fermions: readonly Fermion[] = DEFAULT_FERMIONS,
  vevGeV: number = BASE.higgsVev.value,
): NrChannelCoefficients[] {
  const m = point.m_chi;
  const m2 = m * m;
  const M = point.m_med;
  const M2 = M * M;
  const spin0 = point.mediator === 'scalar' || point.mediator === 'pseudoscalar';
  const gChi = point.dm === 'majorana' && point.mediator === 'vector' ? 0 : point.g_chi;
  const P0 = 1 / ((4 * m2 - M2) ** 2 + M2 * widthMedGeV * widthMedGeV);
  const P2 = 2 * m2 * (M2 - 4 * m2) * P0 * P0;
  const out: NrChannelCoefficients[] = [];
  for (const f of fermions) {
    const gBare = f.kind === 'quark' ? point.g_q : point.g_l;
    if (gBare === 0 || gChi === 0 || f.massGeV >= m) continue;
    const gF = spin0 ? (gBare * f.massGeV) / vevGeV : gBare;
    const norm = f.colours * gChi * gChi * gF * gF;
    const mf2 = f.massGeV * f.massGeV;
    const rf = mf2 / m2;
    const beta0 = Math.sqrt(1 - rf);
    let a = 0;
    let bNum = 0;
    switch (point.mediator) {
      case 'scalar':
        bNum = (m2 * beta0 ** 3) / (8 * Math.PI);
        break;
      case 'pseudoscalar':
        a = (m2 * beta0) / (2 * Math.PI);
        bNum = (m2 * (2 - rf)) / (16 * Math.PI * beta0);
        break;
      case 'vector':
        a = ((2 * m2 + mf2) * beta0) / (2 * Math.PI);
        bNum = (8 * m2 * m2 - 4 * m2 * mf2 + 5 * mf2 * mf2) / (48 * Math.PI * m2 * beta0);
        break;
      case 'axial': {
        const w = 1 - (4 * m2) / M2;
        a = (mf2 * beta0 * w * w) / (2 * Math.PI);
        const mf4 = mf2 * mf2;
        const extra = (-24 * m2 * mf4 * M2 + 96 * m2 * m2 * m2 * mf2 - 48 * m2 * m2 * mf4) / (M2 * M2);
        bNum = (8 * m2 * m2 - 22 * m2 * mf2 + 17 * mf4 + extra) / (48 * Math.PI * m2 * beta0);
        break;
      }
    }
    out.push({ name: f.name, aGeV2: norm * a * P0, bGeV2: norm * (bNum * P0 + a * P2) });
  }
  return out;
}

/** Coefficients of the mediator-pair channel: sigma v = a + b v^2 (v = v_rel), GeV^-2. */
export interface MediatorPairCoefficients {
  readonly aGeV2: number;
  readonly bGeV2: number;
}

/**
 * NR expansion of chi chibar -> med med for m_chi > m_med (r = m_med^2/m_chi^2 < 1), g_chi^4/m_chi^2 times
 *   V, A: a = (1-r)^(3/2) / (16 pi (1 - r/2)^2)                                   (indirect.md A4)
 *   S:    b = sqrt(1-r) (9 - 8r + 2r^2) / (24 pi (2-r)^4)                          (indirect.md A4)
 *   P:    b = (1-r)^(5/2) / (24 pi (2-r)^4)                                        (indirect.md A4)
 *   V:    b = sqrt(1-r) (24 + 28r - 36r^2 + 17r^3) / (96 pi (2-r)^4)
 *   A:    b = sqrt(1-r) (128 - 192r + 56r^2 + 124r^3 - 88r^4 + 17r^5) / (96 pi r^2 (2-r)^4)
 * (the last two derived with sympy from the exact closed form; see the module head comment).
 * Same Majorana convention as physics/annihilation.ts (equal to Dirac at equal g_chi).
 */
export function mediatorPairCoefficients(mediator: ModelPoint['mediator'], gChi: number, mChiGeV: number, mMedGeV: number): MediatorPairCoefficients {
  const r = (mMedGeV * mMedGeV) / (mChiGeV * mChiGeV);
  const g2 = gChi * gChi;
  const scale = (g2 * g2) / (mChiGeV * mChiGeV);
  const sq = Math.sqrt(1 - r);
  const t = 2 - r;
  const t4 = t * t * t * t;
  const sWave = (scale * (1 - r) * sq) / (4 * Math.PI * t * t);
  switch (mediator) {
    case 'scalar':
      return { aGeV2: 0, bGeV2: (scale * sq * (9 - 8 * r + 2 * r * r)) / (24 * Math.PI * t4) };
    case 'pseudoscalar':
      return { aGeV2: 0, bGeV2: (scale * (1 - r) * (1 - r) * sq) / (24 * Math.PI * t4) };
    case 'vector':
      return { aGeV2: sWave, bGeV2: (scale * sq * (24 + r * (28 + r * (-36 + r * 17)))) / (96 * Math.PI * t4) };
    case 'axial':
      return {
        aGeV2: sWave,
        bGeV2: (scale * sq * (128 + r * (-192 + r * (56 + r * (124 + r * (-88 + r * 17)))))) / (96 * Math.PI * r * r * t4),
      };
  }
}
