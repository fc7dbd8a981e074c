/**
 * Annihilation cross sections of the dark-matter pair, fully relativistic in the Mandelstam s.
 *
 * What: sigma(s) and sigma*v_Mol(s) per final state for chi chibar (Dirac) or chi chi (Majorana)
 * annihilating through one s-channel mediator (scalar S, pseudoscalar P, vector V, axial A) into
 * every quark pair (if g_q > 0) and charged-lepton pair (if g_l > 0), plus the mediator pair
 * (t/u-channel chi exchange) when m_chi > m_med. Implements the Annihilation contract of
 * physics/annihilation-model.ts.
 *
 * Method, f fbar: the closed forms of the shared notes indirect.md A1 (exact tree level after the
 * angular integration; unitary-gauge spin-1 propagator, whose q_mu q_nu / M^2 part gives the
 * helicity-suppressed axial s-wave), with the fixed-width Breit-Wigner
 * |D|^2 = (s - M^2)^2 + M^2 Gamma^2. Couplings as indirect.md A0: spin-0 c_f = g m_f / v (Yukawa-like),
 * spin-1 universal g_q / g_l; colour factor 3 for quarks.
 *
 * Method, mediator pair (APPROXIMATE, flagged): NOT the exact s dependence. The expansions of
 * indirect.md A4 in v = v_rel are evaluated with v^2 = 4 (1 - 4 m_chi^2 / s), i.e.
 * s = 4 m_chi^2 / (1 - v^2/4), r = M^2 / m_chi^2:
 *   V V: s-wave term only (its v^2 term is not known in closed form here: omitted);
 *   A A: the V V s-wave plus the leading longitudinal p-wave term g^4 v^2 m_chi^2 / (12 pi M^4)
 *        (exact only for r -> 0; the sub-leading 1/r and r^0 parts of the v^2 coefficient omitted);
 *   S S: g^4 v^2 sqrt(1-r) (9 - 8r + 2r^2) / (24 pi m_chi^2 (2-r)^4);
 *   P P: g^4 v^2 (1-r)^(5/2) / (24 pi m_chi^2 (2-r)^4).
 * Measured against exact tree-level explicit-spinor numerics (tests/fixtures/annihilation,
 * r = 1e-6, 0.09, 0.5, 0.81): the s-wave (V, A) and the v^2 coefficients (S, P) agree to < 2e-6
 * as v -> 0. At v = 0.3 (freeze-out velocities) the omitted higher orders give: S 3-4%,
 * P 1-14%, V 2-30%, A 0.2-7%, the largest at r = 0.81 (final-state mediators close to threshold,
 * where the expansion parameter is v^2/(1 - r)); the expansion underestimates V V there. The channel
 * is absent when m_med >= m_chi (no Boltzmann-tail opening of a kinematically forbidden pair channel).
 *
 * Majorana (normalisation (g_chi/2) chibar Gamma chi, indirect.md A6): the same sigma as Dirac at
 * equal g_chi for every final state; the vector current vanishes, so a vector mediator gives no
 * annihilation at all (the result then has no channels and sigma = 0).
 *
 * Validity: tree level, perturbative couplings, narrow-to-moderate width (fixed-width
 * Breit-Wigner; Gamma/M > 0.3 is flagged by the evaluation). Quark final states are taken as free
 * quarks: below a few GeV (hadronic thresholds) the rates are indicative only. No Sommerfeld
 * factor, no loop-induced final states (gg, gamma gamma), no W/Z/h final states.
 *
 * Accuracy: f fbar channels are exact closed forms in double precision (agreement with numerical
 * spin sums ~1e-12); mediator-pair channels as stated above.
 *
 * References: Abercrombie et al. 2015, arXiv:1507.00966, Sec. 2 (Lagrangians); Berlin, Hooper &
 * McDermott 2014, PRD 89, 115022 (non-relativistic limits) [memory]; Pospelov, Ritz & Voloshin
 * 2008, PLB 662, 53 (chi chibar -> V V) [memory]; Gondolo & Gelmini 1991, Nucl. Phys. B360, 145
 * (v_Mol = 2 beta_chi in the CM frame).
 *
 * Hot path: sigmaTotalGeV2 / sigmaVByChannelGeV2 are called ~1e3 times per model point; everything
 * that does not depend on s is precomputed here into Float64Arrays, and a call allocates nothing.
 */
import type { Annihilation, AnnihilationChannel, Pole } from './annihilation-model.js';
import { BASE, type Fermion } from './constants.js';
import { InvalidInputError, type Issue } from './issue.js';
import type { ModelPoint } from './model.js';
import { DEFAULT_FERMIONS } from './widths.js';

/** Options other than the model point and width. */
export interface AnnihilationOptions {
  /** final-state fermions (masses, colours); default: all quarks and charged leptons of physics/constants */
  readonly fermions?: readonly Fermion[];
  /** electroweak vev for the spin-0 Yukawa couplings, GeV; default BASE.higgsVev (246.22) */
  readonly vevGeV?: number;
  /** include the mediator-pair channel 'med_med' when m_chi > m_med; default true */
  readonly mediatorPairs?: boolean;
}

/** Name of the mediator-pair channel in the Annihilation contract. */
export const MEDIATOR_PAIR_CHANNEL = 'med_med';

/** Coefficients of the mediator-pair channel: sigma v = a + b v^2, GeV^-2 (indirect.md A4). */
export interface MediatorPairCoefficients {
  readonly aGeV2: number;
  readonly bGeV2: number;
}

/**
 * The A4 expansion of chi chibar -> med med (t/u-channel chi exchange), for m_chi > m_med; see the
 * head comment for which terms are omitted. Depends only on g_chi, m_chi, m_med and the mediator.
 */
export function mediatorPairCoefficients(mediator: ModelPoint['mediator'], gChi: number, mChiGeV: number, mMedGeV: number): MediatorPairCoefficients {
  const r = (mMedGeV * mMedGeV) / (mChiGeV * mChiGeV);
  const g4 = gChi * gChi * gChi * gChi;
  const m2 = mChiGeV * mChiGeV;
  const twoMinusR = 2 - r;
  const t4 = twoMinusR * twoMinusR * twoMinusR * twoMinusR;
  const oneMinusR = 1 - r;
  const sq = Math.sqrt(oneMinusR);
  const halfR = 1 - r / 2;
  const sWaveV = (g4 * oneMinusR * sq) / (16 * Math.PI * m2 * halfR * halfR);
  switch (mediator) {
    case 'vector':
      return { aGeV2: sWaveV, bGeV2: 0 };
    case 'axial': {
      const M4 = mMedGeV * mMedGeV * mMedGeV * mMedGeV;
      return { aGeV2: sWaveV, bGeV2: (g4 * m2) / (12 * Math.PI * M4) };
    }
    case 'scalar':
      return { aGeV2: 0, bGeV2: (g4 * sq * (9 - 8 * r + 2 * r * r)) / (24 * Math.PI * m2 * t4) };
    case 'pseudoscalar':
      return { aGeV2: 0, bGeV2: (g4 * oneMinusR * oneMinusR * sq) / (24 * Math.PI * m2 * t4) };
  }
}

function checkInputs(point: ModelPoint, widthMedGeV: number): void {
  const issues: Issue[] = [];
  const positive = (name: string, value: number): void => {
    if (!(Number.isFinite(value) && value > 0)) {
      issues.push({ code: 'out_of_range', path: name, message: `${name} must be a finite number > 0`, seen: String(value), allowed: '> 0' });
    }
  };
  positive('m_chi', point.m_chi);
  positive('m_med', point.m_med);
  if (!(Number.isFinite(widthMedGeV) && widthMedGeV >= 0)) {
    issues.push({
      code: 'out_of_range', path: 'width_med', message: 'width_med (mediator total width, GeV) must be a finite number >= 0',
      seen: String(widthMedGeV), allowed: '>= 0',
    });
  }
  for (const name of ['g_chi', 'g_q', 'g_l'] as const) {
    if (!Number.isFinite(point[name])) {
      issues.push({ code: 'out_of_range', path: name, message: `${name} must be a finite number`, seen: String(point[name]) });
    }
  }
  if (issues.length > 0) throw new InvalidInputError(issues);
}

/**
 * Builds the annihilation of one model point with the mediator total width `widthMedGeV` (the
 * minimal width of physics/widths.ts or a user-given width). Throws InvalidInputError for
 * non-finite or non-positive masses and a negative or non-finite width.
 */
export function buildAnnihilation(point: ModelPoint, widthMedGeV: number, options: AnnihilationOptions = {}): Annihilation {
  checkInputs(point, widthMedGeV);
  const fermions = options.fermions ?? DEFAULT_FERMIONS;
  const vevGeV = options.vevGeV ?? BASE.higgsVev.value;
  const mediator = point.mediator;
  const spin0 = mediator === 'scalar' || mediator === 'pseudoscalar';
  const mChi = point.m_chi;
  const M = point.m_med;
  const mx2 = mChi * mChi;
  const fourMx2 = 4 * mx2;
  const M2 = M * M;
  const MGamma2 = M2 * widthMedGeV * widthMedGeV;
  const invM2 = 1 / M2;
  // Majorana vector current vanishes identically (indirect.md A6): no coupling to dark matter
  const gChi = point.dm === 'majorana' && mediator === 'vector' ? 0 : point.g_chi;

  const channels: AnnihilationChannel[] = [];
  const coeff: number[] = [];
  const fourMf2: number[] = [];
  const twoMf2: number[] = [];
  const axialMass: number[] = [];
  if (gChi !== 0) {
    for (const f of fermions) {
      const gBare = f.kind === 'quark' ? point.g_q : point.g_l;
      if (gBare === 0) continue;
      const gF = spin0 ? (gBare * f.massGeV) / vevGeV : gBare;
      const norm = spin0 ? 8 * Math.PI : 6 * Math.PI;
      channels.push(Object.freeze({ name: f.name, thresholdGeV: 2 * f.massGeV }));
      coeff.push((f.colours * gChi * gChi * gF * gF) / norm);
      fourMf2.push(4 * f.massGeV * f.massGeV);
      twoMf2.push(2 * f.massGeV * f.massGeV);
      axialMass.push(12 * mx2 * f.massGeV * f.massGeV);
    }
  }
  const nF = channels.length;
  const pair = gChi !== 0 && (options.mediatorPairs ?? true) && mChi > M
    ? mediatorPairCoefficients(mediator, gChi, mChi, M)
    : null;
  if (pair) channels.push(Object.freeze({ name: MEDIATOR_PAIR_CHANNEL, thresholdGeV: 2 * M }));
  const nAll = channels.length;

  const C = Float64Array.from(coeff);
  const F4 = Float64Array.from(fourMf2);
  const F2 = Float64Array.from(twoMf2);
  const AX = Float64Array.from(axialMass);
  const pairA = pair ? pair.aGeV2 : 0;
  const pairB4 = pair ? 4 * pair.bGeV2 : 0; // b v^2 = 4 b (s - 4 m^2) / s

  // One specialised loop per mediator keeps the switch out of the hot path.
  let fermionSum: (s: number, out: Float64Array) => number;
  switch (mediator) {
    case 'scalar':
      fermionSum = (s, out) => {
        const k = (s - fourMx2) / ((s - M2) * (s - M2) + MGamma2);
        let sum = 0;
        for (let i = 0; i < nF; i++) {
          const x = s - (F4[i] as number);
          let v = 0;
          if (x > 0) {
            const bf = Math.sqrt(x / s);
            v = (C[i] as number) * k * bf * bf * bf;
          }
          out[i] = v;
          sum += v;
        }
        return sum;
      };
      break;
    case 'pseudoscalar':
      fermionSum = (s, out) => {
        const k = s / ((s - M2) * (s - M2) + MGamma2);
        let sum = 0;
        for (let i = 0; i < nF; i++) {
          const x = s - (F4[i] as number);
          const v = x > 0 ? (C[i] as number) * k * Math.sqrt(x / s) : 0;
          out[i] = v;
          sum += v;
        }
        return sum;
      };
      break;
    case 'vector':
      fermionSum = (s, out) => {
        const k = (s + 2 * mx2) / (s * ((s - M2) * (s - M2) + MGamma2));
        let sum = 0;
        for (let i = 0; i < nF; i++) {
          const x = s - (F4[i] as number);
          const v = x > 0 ? (C[i] as number) * k * Math.sqrt(x / s) * (s + (F2[i] as number)) : 0;
          out[i] = v;
          sum += v;
        }
        return sum;
      };
      break;
    case 'axial':
      fermionSum = (s, out) => {
        const k = 1 / (s * ((s - M2) * (s - M2) + MGamma2));
        const t = s - fourMx2;
        const w = 1 - s * invM2;
        const w2 = w * w;
        let sum = 0;
        for (let i = 0; i < nF; i++) {
          const x = s - (F4[i] as number);
          const v = x > 0 ? (C[i] as number) * k * Math.sqrt(x / s) * (t * x + (AX[i] as number) * w2) : 0;
          out[i] = v;
          sum += v;
        }
        return sum;
      };
      break;
  }

  // below threshold every channel is zero; a NaN s propagates as NaN (never silently zero)
  const sigmaVByChannelGeV2 = (sGeV2: number, out: Float64Array): number => {
    if (sGeV2 < fourMx2) {
      for (let i = 0; i < nAll; i++) out[i] = 0;
      return 0;
    }
    let sum = fermionSum(sGeV2, out);
    if (pair) {
      const v = pairA + (pairB4 * (sGeV2 - fourMx2)) / sGeV2;
      out[nF] = v;
      sum += v;
    }
    return sum;
  };

  const scratch = new Float64Array(nAll);
  const sigmaTotalGeV2 = (sGeV2: number): number => {
    // sigma = sigma v_Mol / (2 beta_chi); at s = 4 m^2 the phase-space factor (s - 4m^2) of every
    // consumer vanishes, so 0 is returned there instead of the s-wave 1/beta divergence
    if (sGeV2 <= fourMx2) return 0;
    const betaChi = Math.sqrt((sGeV2 - fourMx2) / sGeV2);
    return sigmaVByChannelGeV2(sGeV2, scratch) / (2 * betaChi);
  };

  const poles: Pole[] = M > 2 * mChi ? [Object.freeze({ massGeV: M, widthGeV: widthMedGeV })] : [];
  const thresholdsGeV = [...new Set(channels.map((c) => c.thresholdGeV).filter((t) => t > 2 * mChi))].sort((a, b) => a - b);

  return Object.freeze({
    mChiGeV: mChi,
    channels: Object.freeze(channels),
    sigmaTotalGeV2,
    sigmaVByChannelGeV2,
    poles: Object.freeze(poles),
    thresholdsGeV: Object.freeze(thresholdsGeV),
  });
}
