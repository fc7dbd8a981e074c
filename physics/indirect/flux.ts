/**
 * Prompt gamma-ray flux of one target in an energy band, and the per-scan cache of photon counts.
 *
 * What (shared notes indirect.md B5, A6):
 *   Phi = k <sigma v> J / (8 pi m_chi^2) * sum_f BR_f N_f,   N_f = Int_band dN_f/dE dE,
 * with k = 1 for Majorana (self-conjugate) and k = 1/2 for Dirac dark matter with n_chi = n_chibar
 * (rate per volume <sigma v> n^2/4 instead of n^2/2). Units: <sigma v> in cm^3/s, J in GeV^2 cm^-5,
 * m_chi in GeV, Phi in photons cm^-2 s^-1 over the cone.
 *
 * Method: N_f for a final state depends only on (spectrum shape, m_chi, band) and, for mediator
 * cascades, on m_med; it is computed once (yields.ts) and kept in a bounded memo, so a scan over a
 * grid of masses integrates each spectrum once per mass. The memo stores the computed value itself:
 * a hit returns exactly what a miss computes (bit-identical).
 *
 * Validity/accuracy: as yields.ts (approximate fits, factor ~2) and jfactor.ts.
 */
import { GEV2_TO_CM3S } from '../constants.js';
import { bandCount, cascadeBandCount, spectrumBreaks, spectrumOf, type YieldSource } from './yields.js';

/** Dark-matter masses kept in the photon-count memo before the oldest is dropped (numerical knob). */
export const PHOTON_MEMO_MASSES = 4096;

/**
 * A bounded memo of photon counts, keyed first by the dark-matter mass (a number key: no string
 * formatting of doubles on the hot path), then by a short string naming target, spectrum and, for
 * cascades, the mediator mass. Insertion-ordered: the oldest mass goes first when full.
 */
export class PhotonMemo {
  private readonly byMass = new Map<number, Map<string, number>>();
  constructor(private readonly capacity: number = PHOTON_MEMO_MASSES) {}
  /** number of masses held */
  get size(): number {
    return this.byMass.size;
  }
  get(mChiGeV: number, key: string, compute: () => number): number {
    let inner = this.byMass.get(mChiGeV);
    const hit = inner?.get(key);
    if (hit !== undefined) return hit;
    const value = compute();
    if (inner === undefined) {
      if (this.byMass.size >= this.capacity) this.byMass.delete(this.byMass.keys().next().value as number);
      inner = new Map();
      this.byMass.set(mChiGeV, inner);
    }
    inner.set(key, value);
    return value;
  }
}

/** Photon energy band of a target in GeV: [lo, hi], hi may be Infinity. */
export interface Band {
  readonly loGeV: number;
  readonly hiGeV: number;
}

/**
 * Photons per annihilation into `source` with energy in the band, for dark-matter mass mChiGeV.
 * `tag` identifies the band in the memo (the target index).
 */
export function directPhotons(
  memo: PhotonMemo, tag: string, source: YieldSource & { readonly key: string }, mChiGeV: number, band: Band,
): number {
  return memo.get(mChiGeV, `${tag}|${source.key}`, () =>
    bandCount(spectrumOf(source, mChiGeV), band.loGeV / mChiGeV, band.hiGeV / mChiGeV, spectrumBreaks(source, mChiGeV)));
}

/**
 * Photons per annihilation chi chi -> M M with each mediator decaying into `decay` (per-decay yield =
 * the annihilation yield at a dark-matter mass M/2), energy in the band; both mediators counted.
 */
export function cascadePhotons(
  memo: PhotonMemo, tag: string, decay: YieldSource & { readonly key: string }, mChiGeV: number, mMedGeV: number, band: Band,
): number {
  return memo.get(mChiGeV, `${tag}|casc:${decay.key}|${mMedGeV}`, () => {
    const ratio = mMedGeV / mChiGeV;
    const beta = Math.sqrt((1 - ratio) * (1 + ratio));
    const half = mMedGeV / 2;
    return cascadeBandCount(spectrumOf(decay, half), beta, band.loGeV / mChiGeV, band.hiGeV / mChiGeV, spectrumBreaks(decay, half));
  });
}

/**
 * Integrated photon flux, cm^-2 s^-1: k <sigma v> J / (8 pi m^2) * photons, with sigma v in GeV^-2
 * converted here, k = 1/2 for Dirac (indirect.md B5, A6 item 3).
 */
export function photonFluxCm2s(
  sigmaVGeV2: number, jGeV2cm5: number, mChiGeV: number, photonsPerAnnihilation: number, dm: 'dirac' | 'majorana',
): number {
  const selfConjugate = dm === 'majorana' ? 1 : 0.5;
  return (selfConjugate * sigmaVGeV2 * GEV2_TO_CM3S * jGeV2cm5 * photonsPerAnnihilation) / (8 * Math.PI * mChiGeV * mChiGeV);
}
