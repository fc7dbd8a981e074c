/**
 * Relic abundance end to end (physics/relic/relic.ts, boltzmann.ts) against published and
 * independently computed check values. Sources beside each check; the relic.md values are the
 * [computed] scipy Radau results of the shared notes (relic.md §5.5, §6), whose fit-function column
 * uses the same Saikawa-Shirai 2018 fit as this code.
 */
import { describe, expect, it } from 'vitest';
import { GEV2_TO_CM3S, OMEGA_YIELD_FACTOR } from '../../physics/constants.js';
import { InvalidInputError } from '../../physics/issue.js';
import type { DmKind } from '../../physics/model.js';
import { equilibriumYield, solveFreezeOut } from '../../physics/relic/boltzmann.js';
import { DEFAULT_RELIC_KNOBS, relicAbundance, RELIC_KNOBS } from '../../physics/relic/relic.js';
import { betaOf, resonance, toyAnnihilation } from './toy-annihilation.js';

const CM3S = GEV2_TO_CM3S;
const rel = (got: number, exp: number): number => Math.abs(got - exp) / Math.abs(exp);

/** sigma v_lab = c exactly, so <sigma v> = c at every x (relic.md §2.1): a constant s-wave */
function constantSigmaV(mChiGeV: number, sigmaVCm3s: number) {
  const c = sigmaVCm3s / CM3S;
  return toyAnnihilation({ mChiGeV, sigma: (s) => { const b = betaOf(mChiGeV, s); return (c * (1 + b * b)) / (2 * b); } });
}

/** <sigma v> (cm^3/s) of a constant s-wave giving Omega h^2 = target: secant in ln-ln. */
function requiredSigmaV(mChiGeV: number, dm: DmKind, target = 0.12): number {
  let l0 = Math.log(2e-26);
  let f0 = Math.log(relicAbundance(constantSigmaV(mChiGeV, Math.exp(l0)), dm).omegaH2 / target);
  let l1 = l0 - f0;
  for (let i = 0; i < 20; i++) {
    const f1 = Math.log(relicAbundance(constantSigmaV(mChiGeV, Math.exp(l1)), dm).omegaH2 / target);
    if (Math.abs(f1) < 1e-7) break;
    const l2 = l1 - (f1 * (l1 - l0)) / (f1 - f0);
    l0 = l1;
    f0 = f1;
    l1 = l2;
  }
  return Math.exp(l1);
}

describe('constant s-wave <sigma v> = 2.2e-26 cm^3/s, Majorana (relic.md §5.5 fit-function column and §6.2)', () => {
  // Tolerance 0.5%: the reference uses the same fit and scipy Radau at rtol 1e-11; our numerical
  // error is ~1e-3 at default knobs. (The brief asks for 1%; measured agreement is ~0.03%.)
  const cases: [number, number, number][] = [[10, 0.12942, 20.5], [100, 0.11493, 22.51], [1000, 0.11864, 24.75]];
  for (const [m, omega, xf] of cases) {
    it(`m = ${m} GeV: Omega h^2 = ${omega}, x_f = ${xf} (x_f from the table run, relic.md §6.2)`, () => {
      const r = relicAbundance(constantSigmaV(m, 2.2e-26), 'majorana');
      expect(rel(r.omegaH2, omega), `m=${m}: got ${r.omegaH2}, expected ${omega}, tol 0.005`).toBeLessThan(0.005);
      // x_f: fit vs table shifts it by < 0.05; interpolation inside a step 0.05
      expect(Math.abs(r.xF - xf), `m=${m}: x_f got ${r.xF}, expected ${xf}`).toBeLessThan(0.1);
      expect(rel(r.sigvFoCm3s, 2.2e-26)).toBeLessThan(1e-6);
      expect(r.flags).toEqual([]);
    });
  }
});

describe('required constant s-wave <sigma v> for Omega h^2 = 0.12 (relic.md §6.3, full Saikawa-Shirai table)', () => {
  // The fit changes Omega by +0.1..0.3% vs the full table at 10-1000 GeV (relic.md §5.4-5.5), so the
  // required <sigma v> moves by about as much: tolerance 1% for m >= 10 GeV. At 1-3 GeV (QCD region)
  // the fit lies 1.3-3.7% below the table in g_eff (tests/relic/dof.test.ts): tolerance 3%.
  const majorana: [number, number][] = [[1, 4.324], [3, 3.61], [10, 2.376], [30, 2.151], [100, 2.101], [300, 2.154], [1000, 2.169], [3000, 2.112], [10000, 2.163]];
  for (const [m, sv] of majorana) {
    it(`Majorana m = ${m} GeV: ${sv}e-26 cm^3/s`, () => {
      const got = requiredSigmaV(m, 'majorana');
      const tol = m < 10 ? 0.03 : 0.01;
      expect(rel(got, sv * 1e-26), `m=${m}: got ${got}, expected ${sv}e-26, tol ${tol}`).toBeLessThan(tol);
    });
  }
  it('Dirac (convention A, Omega = 2 Omega_chi) at 100 GeV: 4.341e-26, ratio Dirac/Majorana 2.067 (relic.md §4, §6.3)', () => {
    const dirac = requiredSigmaV(100, 'dirac');
    const majorana = requiredSigmaV(100, 'majorana');
    expect(rel(dirac, 4.341e-26), `got ${dirac}`).toBeLessThan(0.01);
    // the ratio is insensitive to the g table: 0.3%
    expect(rel(dirac / majorana, 2.067), `ratio ${dirac / majorana}`).toBeLessThan(0.003);
  });
  it('Steigman, Dasgupta & Beacom 2012 (PRD 86, 023506, abstract): ~2.2e-26 with feeble mass dependence above 10 GeV', () => {
    // SDB target Omega was WMAP-era (~0.11, [memory]); at Planck's 0.120 the values drop by a few %.
    // Their analytic treatment is stated at the few-percent level: tolerance 6% for 30 GeV-10 TeV.
    for (const m of [30, 100, 1000, 10000]) {
      const got = requiredSigmaV(m, 'majorana');
      expect(rel(got, 2.2e-26), `m=${m}: got ${got}`).toBeLessThan(0.06);
    }
  });
});

describe('p-wave and resonance benchmarks (relic.md §6.3)', () => {
  it('p-wave <sigma v> = 6b/x exactly, b = 1.36225e-8 GeV^-2, m = 100 GeV: Omega h^2 = 0.120, x_f = 23.14', () => {
    const b = 1.36225e-8;
    const r = solveFreezeOut(
      { mChiGeV: 100, gChi: 2, sigmaV: (x) => (6 * b) / x, sigmaVConstantFromX: 1e7, xStartMin: 1, xFGuess: 22 },
      DEFAULT_RELIC_KNOBS,
    );
    const omega = OMEGA_YIELD_FACTOR * 100 * r.yieldToday;
    // fit vs table: the 50-node table moves b by 0.03%; the fit by ~0.1-0.3%: tolerance 1%
    expect(rel(omega, 0.12), `got ${omega}`).toBeLessThan(0.01);
    expect(Math.abs(r.xF - 23.14), `x_f ${r.xF}`).toBeLessThan(0.1);
  });
  it('resonance toy M = 210, Gamma = 1, A = 6.77044e-8 GeV^-2, m = 100 GeV: Omega h^2 = 0.120, x_f = 23.27', () => {
    const r = relicAbundance(resonance(100, 6.77044e-8, 210, 1), 'majorana');
    expect(rel(r.omegaH2, 0.12), `got ${r.omegaH2}`).toBeLessThan(0.01);
    expect(Math.abs(r.xF - 23.27), `x_f ${r.xF}`).toBeLessThan(0.1);
  });
  it('using the v -> 0 value of the resonance as constant s-wave is a factor ~9 off (relic.md §6.3: Omega 1.09)', () => {
    const v0 = 6.77044e-8 * (210 * 210) / ((4 * 100 * 100 - 210 * 210) ** 2 + 210 * 210) * CM3S;
    const r = relicAbundance(constantSigmaV(100, v0), 'majorana');
    expect(rel(r.omegaH2, 1.09), `got ${r.omegaH2}`).toBeLessThan(0.02);
  });
});

describe('trajectory and properties', () => {
  it('Y_eq at x = 1, 10, 20 for m = 100 GeV, g = 2 (relic.md §6.2 trajectory table; fit vs 50-node table h_eff < 1%)', () => {
    for (const [x, yeq] of [[1, 3.71844e-3], [10, 6.14214e-6], [20, 7.32093e-10]] as const) {
      expect(rel(equilibriumYield(100, 2, x), yeq), `x=${x}`).toBeLessThan(0.01);
    }
  });
  it('Omega h^2 scales roughly as 1/<sigma v> (Kolb & Turner 1990 §5.2): doubling gives 0.5-0.55x', () => {
    for (const m of [10, 100, 1000]) {
      const a = relicAbundance(constantSigmaV(m, 2e-26), 'majorana').omegaH2;
      const b = relicAbundance(constantSigmaV(m, 4e-26), 'majorana').omegaH2;
      expect(b / a, `m=${m}`).toBeGreaterThan(0.5);
      expect(b / a, `m=${m}`).toBeLessThan(0.55);
    }
  });
  it('x_f in 18-30 for weak-scale points (Kolb & Turner 1990: x_f ~ 20; relic.md §6.1 table)', () => {
    for (const m of [10, 50, 200, 1000, 5000]) {
      for (const sv of [1e-26, 3e-26, 1e-25]) {
        const r = relicAbundance(constantSigmaV(m, sv), 'majorana');
        expect(r.xF, `m=${m} sv=${sv}`).toBeGreaterThan(18);
        expect(r.xF, `m=${m} sv=${sv}`).toBeLessThan(30);
      }
    }
  });
  it('Dirac result is exactly twice the chi population with the same sigma (convention A, relic.md §4)', () => {
    const ann = constantSigmaV(100, 4e-26);
    expect(relicAbundance(ann, 'dirac').omegaH2).toBe(2 * relicAbundance(ann, 'majorana').omegaH2);
  });
  it('deterministic: identical input gives bit-identical output', () => {
    const a = relicAbundance(resonance(100, 6e-8, 210, 1), 'dirac');
    const b = relicAbundance(resonance(100, 6e-8, 210, 1), 'dirac');
    expect(b).toEqual(a);
  });
});

describe('edge cases and input errors', () => {
  it("sigma identically zero: omegaH2 NaN with flag 'no_annihilation', no throw", () => {
    const r = relicAbundance(toyAnnihilation({ mChiGeV: 50, sigma: () => 0 }), 'majorana');
    expect(r.omegaH2).toBeNaN();
    expect(r.flags).toEqual(['no_annihilation']);
  });
  it("tiny cross section of a light particle freezes out relativistically: flag 'relativistic_freezeout'", () => {
    const r = relicAbundance(constantSigmaV(0.05, 1e-40), 'majorana');
    expect(r.xF).toBeLessThan(3);
    expect(r.flags).toContain('relativistic_freezeout');
    expect(Number.isFinite(r.omegaH2)).toBe(true);
  });
  it('invalid mass and knobs throw InvalidInputError naming the field and range', () => {
    expect(() => relicAbundance(constantSigmaV(-1, 1e-26), 'majorana')).toThrow(InvalidInputError);
    expect(() => relicAbundance(constantSigmaV(100, 1e-26), 'majorana', { stepX: 50 })).toThrow(/stepX must be a number in \[0.005, 2\]/);
    expect(() => relicAbundance(constantSigmaV(100, 1e-26), 'majorana', { laguerreNodes: 7.5 })).toThrow(/laguerreNodes must be an integer/);
    expect(() => relicAbundance(constantSigmaV(100, 1e-26), 'majorana', { nope: 1 } as never)).toThrow(/unknown relic knob 'nope'/);
  });
  it('every knob is declared once with a doc and a reason, and its default is inside its range', () => {
    for (const k of RELIC_KNOBS) {
      expect(k.doc.length).toBeGreaterThan(10);
      expect(k.why.length).toBeGreaterThan(10);
      expect(k.default).toBeGreaterThanOrEqual(k.min);
      expect(k.default).toBeLessThanOrEqual(k.max);
    }
    expect(new Set(RELIC_KNOBS.map((k) => k.name)).size).toBe(RELIC_KNOBS.length);
  });
});
