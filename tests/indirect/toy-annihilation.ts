/**
 * Small hand-built Annihilation objects for the indirect-detection unit tests: each channel is a
 * closed-form sigma v_Mol(s), so the tests do not depend on the cross-section stage.
 */
import type { Annihilation, Pole } from '../../physics/annihilation-model.js';

export interface ToyChannel {
  readonly name: string;
  readonly thresholdGeV?: number;
  /** sigma v_Mol(s), GeV^-2 */
  readonly sigmaV: (sGeV2: number) => number;
}

export function toyAnnihilation(mChiGeV: number, channels: readonly ToyChannel[], poles: readonly Pole[] = []): Annihilation {
  const thresholds = channels
    .map((c) => c.thresholdGeV ?? 0)
    .filter((t) => t > 2 * mChiGeV)
    .sort((a, b) => a - b);
  return {
    mChiGeV,
    channels: channels.map((c) => ({ name: c.name, thresholdGeV: c.thresholdGeV ?? 0 })),
    poles: poles.filter((p) => p.massGeV > 2 * mChiGeV),
    thresholdsGeV: thresholds,
    sigmaTotalGeV2(s: number): number {
      if (!(s > 4 * mChiGeV * mChiGeV)) return 0;
      const beta = Math.sqrt(1 - (4 * mChiGeV * mChiGeV) / s);
      let sum = 0;
      for (const c of channels) sum += c.sigmaV(s);
      return sum / (2 * beta);
    },
    sigmaVByChannelGeV2(s: number, out: Float64Array): number {
      let sum = 0;
      channels.forEach((c, i) => {
        const v = c.sigmaV(s);
        out[i] = v;
        sum += v;
      });
      return sum;
    },
  };
}

/** Constant s-wave: sigma v = a. */
export const sWave = (name: string, aGeV2: number): ToyChannel => ({ name, sigmaV: () => aGeV2 });

/** Pure p-wave sigma v = b v^2 with v^2 = s/m^2 - 4 (the s(v) relation of indirect.md B8). */
export const pWave = (name: string, bGeV2: number, mChiGeV: number): ToyChannel => ({
  name,
  sigmaV: (s) => bGeV2 * Math.max(0, s / (mChiGeV * mChiGeV) - 4),
});

/** Breit-Wigner channels of tests/fixtures/indirect/make_fixtures.py (same formulas). */
export function breitWigner(mChiGeV: number, mMedGeV: number, widthGeV: number, a: number, b: number): Annihilation {
  const M2 = mMedGeV * mMedGeV;
  const MG2 = M2 * widthGeV * widthGeV;
  const d2 = (s: number): number => (s - M2) * (s - M2) + MG2;
  return toyAnnihilation(
    mChiGeV,
    [
      { name: 'b', sigmaV: (s) => (a * s) / d2(s) },
      { name: 'tau', sigmaV: (s) => (b * (s - 4 * mChiGeV * mChiGeV)) / d2(s) },
    ],
    [{ massGeV: mMedGeV, widthGeV }],
  );
}
