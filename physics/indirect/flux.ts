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

/** Entries kept in the photon-count memo before the oldest are dropped (numerical knob). */
export const PHOTON_MEMO_ENTRIES = 8192;

/** A bounded memo (insertion-ordered; the oldest entry goes first when full). */
export class PhotonMemo {
  private readonly map = new Map<string, number>();
  constructor(private readonly capacity: number = PHOTON_MEMO_ENTRIES) {}
  get size(): number {
    return this.map.size;
  }
  get(key: string, compute: () => number): number {
    const hit = this.map.get(key);
    if (hit !== undefined) return hit;
    const value = compute();
    if (this.map.size >= this.capacity) {
      const oldest = this.map.keys().next().value as string;
      this.map.delete(oldest);
    }
    this.map.set(key, value);
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
  return memo.get(`${tag}|${source.key}|${mChiGeV}`, () =>
    bandCount(spectrumOf(source, mChiGeV), band.loGeV / mChiGeV, band.hiGeV / mChiGeV, spectrumBreaks(source, mChiGeV)));
}

/**
 * Photons per annihilation chi chi -> M M with each mediator decaying into `decay` (per-decay yield =
 * the annihilation yield at a dark-matter mass M/2), energy in the band; both mediators counted.
 */
export function cascadePhotons(
  memo: PhotonMemo, tag: string, decay: YieldSource & { readonly key: string }, mChiGeV: number, mMedGeV: number, band: Band,
): number {
  return memo.get(`${tag}|casc:${decay.key}|${mChiGeV}|${mMedGeV}`, () => {
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
