/**
 * <sigma v> today: Maxwellian relative-velocity averages against an independent mpmath evaluation
 * (tests/fixtures/indirect/maxwell-average.json, made by make_fixtures.py next to it), and the
 * closed-form limits of the shared notes indirect.md B8.
 */
import { describe, expect, it } from 'vitest';
import fixture from '../fixtures/indirect/maxwell-average.json' with { type: 'json' };
import { maxwellAverage, relativeVelocityScale } from '../../physics/indirect/velocity-average.js';
import { C_KM_S } from '../../physics/constants.js';
import { breitWigner, pWave, sWave, toyAnnihilation } from './toy-annihilation.js';

function close(label: string, got: number, expected: number, relTol: number): void {
  const diff = Math.abs(got - expected) / Math.abs(expected);
  expect(diff, `${label}: got ${got}, expected ${expected}, rel diff ${diff.toExponential(2)} > tol ${relTol}`).toBeLessThanOrEqual(relTol);
}

const w = relativeVelocityScale(fixture.sigmaVKmS);

describe('Maxwellian average vs mpmath (fixture maxwell-average.json)', () => {
  it('uses the same velocity scale as the fixture', () => close('w', w, fixture.w, 1e-14));

  for (const c of fixture.breitWigner) {
    // tolerance 2e-7 relative: the adaptive path runs at 1e-7 because s - M^2 near a narrow pole carries
    // rounding noise (see ADAPTIVE_REL_TOL); mpmath works with 40 digits
    it(`Breit-Wigner delta/w^2 = ${c.deltaOverW2}, Gamma/M = ${c.gammaOverM}`, () => {
      const ann = breitWigner(fixture.mChiGeV, c.mMedGeV, c.widthGeV, c.aSwave, c.bPwave);
      const avg = maxwellAverage(ann, w);
      expect(avg.converged).toBe(true);
      close(`s-wave channel (${avg.method})`, avg.byChannelGeV2[0] as number, c.avgSwaveGeV2, 2e-7);
      close(`p-wave channel (${avg.method})`, avg.byChannelGeV2[1] as number, c.avgPwaveGeV2, 2e-7);
      close('total', avg.totalGeV2, c.avgSwaveGeV2 + c.avgPwaveGeV2, 2e-7);
    });
  }

  for (const c of fixture.threshold) {
    it(`channel opening inside the Maxwellian, threshold at v^2 = ${c.thresholdOverW2} w^2`, () => {
      const m = fixture.mChiGeV;
      const mf = c.mFermionGeV;
      const ann = toyAnnihilation(m, [
        { name: 'x', thresholdGeV: 2 * mf, sigmaV: (s) => (s > 4 * mf * mf ? c.cGeV2 * Math.sqrt(1 - (4 * mf * mf) / s) : 0) },
      ]);
      const avg = maxwellAverage(ann, w);
      expect(avg.method).toBe('adaptive');
      close('threshold average', avg.totalGeV2, c.avgGeV2, 1e-6);
    });
  }
});

describe('limits (indirect.md B8)', () => {
  const m = 100;
  it('s-wave today equals the v -> 0 value (common practice, no source: the average of a constant)', () => {
    const a = 2.6e-9;
    const avg = maxwellAverage(toyAnnihilation(m, [sWave('b', a)]), w);
    close('constant s-wave', avg.totalGeV2, a, 1e-13);
    expect(avg.method).toBe('gauss_laguerre');
  });

  it('p-wave: <b v^2> = 3 b v0^2 with v0 = sqrt2 sigma (indirect.md B8, v0 = 220 km/s gives <v^2> = 1.616e-6)', () => {
    const b = 1e-8;
    const v0 = 220 / C_KM_S;
    const avg = maxwellAverage(toyAnnihilation(m, [pWave('b', b, m)]), relativeVelocityScale(220 / Math.SQRT2));
    // 1e-9: the toy's v^2 = s/m^2 - 4 cancels ~10 digits at v ~ 1e-3
    close('<v^2>', avg.totalGeV2 / b, 3 * v0 * v0, 1e-9);
    close('notes value 1.616e-6', avg.totalGeV2 / b, 1.616e-6, 1e-3); // notes quote 4 digits
  });

  it('p-wave today is ~1e5 below freeze-out (indirect.md B8: <v^2> ~ 6/x_f at x_f ~ 20-25 vs ~1e-6 today)', () => {
    const b = 1e-8;
    const today = maxwellAverage(toyAnnihilation(m, [pWave('b', b, m)]), w).totalGeV2;
    for (const xf of [20, 25]) {
      const ratio = (b * 6) / xf / today;
      expect(ratio, `x_f = ${xf}: freeze-out / today = ${ratio}`).toBeGreaterThan(3e4);
      expect(ratio).toBeLessThan(3e5);
    }
  });

  it('branching ratios come from per-channel averages: s-wave plus p-wave', () => {
    const avg = maxwellAverage(toyAnnihilation(m, [sWave('b', 1e-9), pWave('tau', 1e-3, m)]), w);
    const v2 = 1.5 * w * w;
    close('s channel', avg.byChannelGeV2[0] as number, 1e-9, 1e-13);
    close('p channel', avg.byChannelGeV2[1] as number, 1e-3 * v2, 1e-9); // toy cancellation, as above
  });

  it('no channels gives zero; out-of-range w is rejected with the allowed range', () => {
    expect(maxwellAverage(toyAnnihilation(m, []), w).totalGeV2).toBe(0);
    expect(() => maxwellAverage(toyAnnihilation(m, [sWave('b', 1)]), NaN)).toThrow(/\(0, 0.1\)/);
    expect(() => maxwellAverage(toyAnnihilation(m, [sWave('b', 1)]), 0)).toThrow(/w must be/);
  });

  it('is deterministic: repeated calls are bit-identical, also on the adaptive path', () => {
    const c = fixture.breitWigner.find((x) => x.deltaOverW2 === 1 && x.gammaOverM === 1e-9)!;
    const ann = breitWigner(m, c.mMedGeV, c.widthGeV, c.aSwave, c.bPwave);
    const a = maxwellAverage(ann, w);
    const b = maxwellAverage(ann, w);
    expect(a.method).toBe('adaptive');
    expect(b.totalGeV2).toBe(a.totalGeV2);
    expect(Array.from(b.byChannelGeV2)).toEqual(Array.from(a.byChannelGeV2));
  });
});
