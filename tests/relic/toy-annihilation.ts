/**
 * Toy Annihilation objects (physics/annihilation-model.ts contract) for the relic tests and the
 * relic benchmark: closed-form sigma(s) shapes chosen to exercise s-wave, p-wave, poles and
 * thresholds. Invented test inputs, not a physics model.
 */
import type { Annihilation, Pole } from '../../physics/annihilation-model.js';

export interface ToySpec {
  readonly mChiGeV: number;
  /** sigma(s) in GeV^-2 */
  readonly sigma: (s: number) => number;
  readonly poles?: readonly Pole[];
  readonly subthresholdPoles?: readonly Pole[];
  readonly thresholdsGeV?: readonly number[];
}

export function toyAnnihilation(spec: ToySpec): Annihilation {
  const m = spec.mChiGeV;
  const sigmaTotalGeV2 = (s: number): number => (s > 4 * m * m ? spec.sigma(s) : 0);
  return Object.freeze({
    mChiGeV: m,
    channels: Object.freeze([{ name: 'toy', thresholdGeV: 2 * m }]),
    sigmaTotalGeV2,
    sigmaVByChannelGeV2(s: number, out: Float64Array): number {
      const v = sigmaTotalGeV2(s) * 2 * Math.sqrt(Math.max(0, 1 - (4 * m * m) / s));
      out[0] = v;
      return v;
    },
    poles: Object.freeze([...(spec.poles ?? [])]),
    subthresholdPoles: Object.freeze([...(spec.subthresholdPoles ?? [])]),
    thresholdsGeV: Object.freeze([...(spec.thresholdsGeV ?? [])]),
  });
}

/** beta = sqrt(1 - 4 m^2 / s) of the initial pair */
export const betaOf = (m: number, s: number): number => Math.sqrt(Math.max(0, 1 - (4 * m * m) / s));

/** sigma v_cm = a (v_cm = 2 beta): the usual constant s-wave */
export function swave(mChiGeV: number, aGeV2: number): Annihilation {
  return toyAnnihilation({ mChiGeV, sigma: (s) => aGeV2 / (2 * betaOf(mChiGeV, s)) });
}

/** sigma v_rel = b v_rel^2 with v_rel = 2 beta */
export function pwave(mChiGeV: number, bGeV2: number): Annihilation {
  return toyAnnihilation({ mChiGeV, sigma: (s) => bGeV2 * 2 * betaOf(mChiGeV, s) });
}

/** sigma v_cm = A BW(s), BW = M^2 Gamma^2 / ((s - M^2)^2 + M^2 Gamma^2): relic.md §6.3 toy */
export function resonance(mChiGeV: number, aGeV2: number, massGeV: number, widthGeV: number): Annihilation {
  const mg2 = (massGeV * widthGeV) ** 2;
  return toyAnnihilation({
    mChiGeV,
    sigma: (s) => (aGeV2 * mg2) / (((s - massGeV * massGeV) ** 2 + mg2) * 2 * betaOf(mChiGeV, s)),
    poles: massGeV > 2 * mChiGeV ? [{ massGeV, widthGeV }] : [],
    subthresholdPoles: massGeV > 2 * mChiGeV ? [] : [{ massGeV, widthGeV }],
  });
}
