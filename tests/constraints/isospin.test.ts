/**
 * Isospin-violating SI comparison and proton + neutron SD curve pairs (scheduler/constraints/isospin.ts
 * and their use by compile.ts), against numpy reference values (fixtures/generate_curve_fixtures.py:
 * explicit isotope sums with the isotope and spin tables of the shared notes direct.md §5.2 / §3.3,
 * typed into the script, not read from darksieve) and the check values printed in direct.md §6.3.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { compileConstraints, type ConstraintContext } from '../../scheduler/constraints/compile.js';
import {
  SD_ELEMENT_SYMBOLS,
  commonSign,
  couplingSigns,
  effectiveSiCm2,
  sdCorrelation,
  sdSumRule,
  sdTarget,
  siTarget,
} from '../../scheduler/constraints/isospin.js';
import { constraintsSchema, type ConstraintInput } from '../../scheduler/constraints/schema.js';

interface IsospinCase { target: string; m: number; sigma_p: number; sigma_n: number; sign: number; fn_fp: number | null; sigma_eff: number }
interface SdCase { target: string; m: number; sigma_p: number; sigma_n: number; sign_apan: number; lim_p: number; lim_n: number; ratio: number }
const fixtures = JSON.parse(readFileSync(new URL('./fixtures/curve_fixtures.json', import.meta.url), 'utf8')) as {
  curve: { m: number[]; sigma: number[] };
  isospin: { proton_only: { target: string; m: number; factor: number }[]; xenophobic: { target: string; m: number; fn_fp: number; factor: number }[]; cases: IsospinCase[] };
  sd: { curve_m: number[]; curve_p: number[]; curve_n: number[]; cases: SdCase[] };
};

const M_P = 0.93827208816; // GeV, CODATA 2018 (as in the fixture script)
const M_N = 0.93956542052;
const mu = (a: number, b: number) => (a * b) / (a + b);

function rel(got: number, want: number): number {
  return Math.abs(got - want) / Math.abs(want);
}

const dir = mkdtempSync(path.join(tmpdir(), 'darksieve-isospin-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
function writeCurve(name: string, m: number[], s: number[], label = 'sigma'): string {
  writeFileSync(path.join(dir, name), `# invented toy curve, not data\nm_chi [GeV], ${label} [cm^2]\n${m.map((x, i) => `${x}, ${s[i]}`).join('\n')}\n`);
  return name;
}
const siCurve = writeCurve('si.csv', fixtures.curve.m, fixtures.curve.sigma);
const sdP = writeCurve('sd-p.csv', fixtures.sd.curve_m, fixtures.sd.curve_p);
const sdN = writeCurve('sd-n.csv', fixtures.sd.curve_m, fixtures.sd.curve_n);
writeFileSync(path.join(dir, 'sd-pb.csv'), 'm_chi [GeV], sigma [pb]\n10, 1e-3\n100, 1e-4\n');

const OBSERVABLES = ['omega_h2', 'sigma_si_p_cm2', 'sigma_si_n_cm2', 'sigma_sd_p_cm2', 'sigma_sd_n_cm2'];
function context(observables = OBSERVABLES): ConstraintContext {
  return { parameters: ['m_chi', 'm_med', 'g_chi', 'g_q'], observables, rhoLocalGeVcm3: 0.3, baseDir: dir };
}
function compile(list: ConstraintInput[], observables = OBSERVABLES) {
  const parsed = constraintsSchema.safeParse(list);
  if (!parsed.success) throw new Error(JSON.stringify(parsed.error.issues));
  return compileConstraints(parsed.data, context(observables));
}
function verdict(list: ConstraintInput[], point: Record<string, number>): number {
  const { compiled, issues } = compile(list);
  expect(issues).toEqual([]);
  const values = Float64Array.from(compiled!.inputs, (c) => point[c] ?? NaN);
  const verdicts = new Uint8Array(compiled!.columns.length);
  compiled!.judgePoint(values, verdicts);
  return verdicts[verdicts.length - 1]!;
}

describe('SI effective cross section for a target (direct.md §6.3, Feng et al. 2011)', () => {
  for (const k of fixtures.isospin.cases) {
    it(`${k.target} m=${k.m} f_n/f_p=${k.fn_fp ?? 'f_p = 0'}: sigma_eff = ${k.sigma_eff.toExponential(4)}`, () => {
      const got = effectiveSiCm2(siTarget(k.target), k.m, k.sigma_p, k.sigma_n, k.sign);
      // same sums in double precision; near the xenon/argon cancellations the result is ~1e-4 of
      // its terms, so rounding grows by that factor
      const tol = Math.abs(k.fn_fp ?? 0) > 0.6 && (k.fn_fp ?? 0) < 0 ? 1e-9 : 1e-12;
      expect(rel(got, k.sigma_eff), `in ${JSON.stringify(k)} got ${got} expected ${k.sigma_eff} tol ${tol}`).toBeLessThan(tol);
    });
  }
  it('proton-only coupling at 100 GeV: Xe 0.169, Ge 0.193, Ar 0.203, Si 0.248, F 0.224 (direct.md §6.3 [C]) and numpy to 1e-12', () => {
    const printed: Record<string, number> = { Xe: 0.169, Ge: 0.193, Ar: 0.203, Si: 0.248, F: 0.224 };
    for (const k of fixtures.isospin.proton_only) {
      const got = effectiveSiCm2(siTarget(k.target), k.m, 1, 0, 1);
      expect(rel(got, k.factor), `${k.target}: got ${got} numpy ${k.factor}`).toBeLessThan(1e-12);
      // the notes print three digits
      expect(Math.abs(got - printed[k.target]!), `${k.target}: got ${got} notes ${printed[k.target]}`).toBeLessThan(6e-4);
    }
  });
  it('cancellation minima: Xe 1.3e-4 at -0.70, Ge 3.6e-4 at -0.78, Ar 2e-5 at -0.82 (direct.md §6.3 [C]; scipy minimum)', () => {
    const printed: Record<string, [number, number]> = { Xe: [-0.7, 1.3e-4], Ge: [-0.78, 3.6e-4], Ar: [-0.82, 2e-5] };
    for (const k of fixtures.isospin.xenophobic) {
      const t = siTarget(k.target);
      const at = (r: number) => effectiveSiCm2(t, k.m, 1, r * r * (mu(k.m, M_N) / mu(k.m, M_P)) ** 2, -1);
      const got = at(-k.fn_fp);
      expect(rel(got, k.factor), `${k.target}: got ${got} scipy ${k.factor}`).toBeLessThan(1e-6);
      expect(at(-k.fn_fp - 0.01)).toBeGreaterThan(got);
      expect(at(-k.fn_fp + 0.01)).toBeGreaterThan(got);
      const [r, f] = printed[k.target]!;
      expect(Math.abs(k.fn_fp - r), `${k.target} minimum at ${k.fn_fp}, notes ${r}`).toBeLessThan(0.006);
      expect(rel(got, f), `${k.target} minimum ${got}, notes ${f}`).toBeLessThan(0.05);
    }
  });
  it('f_n = f_p gives back sigma_p exactly for every element (the curves\' own convention)', () => {
    for (const symbol of ['Xe', 'Ar', 'Ge', 'Si', 'O', 'Ca', 'W', 'F', 'C', 'I', 'Na']) {
      for (const m of [0.5, 10, 100, 1e4]) {
        const sn = 2e-46 * (mu(m, M_N) / mu(m, M_P)) ** 2;
        expect(rel(effectiveSiCm2(siTarget(symbol), m, 2e-46, sn, 1), 2e-46), `${symbol} m=${m}`).toBeLessThan(1e-13);
      }
    }
  });
});

describe('SD proton + neutron pair (direct.md §6.4)', () => {
  for (const k of fixtures.sd.cases) {
    it(`${k.target} m=${k.m} sign(a_p a_n)=${k.sign_apan}: ratio ${k.ratio.toPrecision(5)} (numpy isotope sum)`, () => {
      const got = sdSumRule(k.sigma_p / k.lim_p, k.sigma_n / k.lim_n, k.sign_apan * sdCorrelation(sdTarget(k.target), k.m));
      // destructive xenon case: the result is 3e-4 of its terms
      expect(rel(got, k.ratio), `in ${JSON.stringify(k)} got ${got} expected ${k.ratio}`).toBeLessThan(k.ratio < 0.01 ? 1e-9 : 1e-12);
    });
  }
  it('one spin isotope gives the Tovey et al. (2000) rule: rho = +1 for Ge-73, -1 for F-19 at every mass', () => {
    for (const m of [1, 100, 1e5]) {
      expect(sdCorrelation(sdTarget('Ge'), m)).toBe(1);
      expect(sdCorrelation(sdTarget('F'), m)).toBe(-1);
    }
    expect(sdSumRule(0.25, 0.25, 1)).toBeCloseTo(1, 15);
    expect(sdSumRule(0.25, 0.25, -1)).toBeCloseTo(0, 15);
  });
  it('xenon: 129Xe and 131Xe have nearly proportional spins, rho just below 1', () => {
    const rho = sdCorrelation(sdTarget('Xe'), 100);
    expect(rho).toBeGreaterThan(0.998);
    expect(rho).toBeLessThan(1);
  });
  it('elements with proton and neutron spin data', () => {
    expect([...SD_ELEMENT_SYMBOLS].sort()).toEqual(['F', 'Ge', 'I', 'Na', 'Si', 'Xe']);
  });
});

describe('relative coupling signs of the model (physics/direct nucleonCouplings)', () => {
  it('f_n/f_p > 0 and a_n/a_p > 0 for every structure with hadronic sets A/B and H/B/L', () => {
    for (const scalarSet of ['A', 'B'] as const) {
      for (const spinSet of ['H', 'B', 'L']) {
        expect(couplingSigns({ scalarSet, spinSet })).toMatchObject({ si: 1, sd: 1 });
      }
    }
  });
  it('the detail lists every structure: Majorana + vector and the pseudoscalar mediator do not scatter at q = 0', () => {
    const { detail } = couplingSigns({ scalarSet: 'A', spinSet: 'H' });
    expect(detail).toContain('dirac/vector si 1 sd 0');
    expect(detail).toContain('majorana/vector si 0 sd 0');
    expect(detail).toContain('dirac/axial si 0 sd 1');
    expect(detail).toContain('dirac/pseudoscalar si 0 sd 0');
  });
  it('commonSign: one sign, +1 when nothing scatters, undefined when structures disagree', () => {
    expect(commonSign([2, 0, 3])).toBe(1);
    expect(commonSign([0, -1e-9])).toBe(-1);
    expect(commonSign([0, 0])).toBe(1);
    expect(commonSign([1, -1])).toBeUndefined();
  });
});

describe('limit_curve with a target: judged on sigma_eff', () => {
  const curve = (extra: Partial<ConstraintInput> = {}): ConstraintInput =>
    ({ kind: 'limit_curve', observable: 'sigma_si_p_cm2', file: siCurve, outOfRange: 'pass', target: 'Xe', ...extra }) as ConstraintInput;
  for (const k of fixtures.isospin.cases.filter((c) => c.target === 'Xe' && c.sign > 0)) {
    it(`Xe m=${k.m} f_n/f_p=${k.fn_fp ?? 'f_p = 0'}: the verdict flips where sigma_eff meets the limit`, () => {
      // put the point just below / above the curve in sigma_eff (the rule is linear in both sigmas)
      const limit = Math.exp(
        (() => {
          const lm = fixtures.curve.m.map(Math.log);
          const ls = fixtures.curve.sigma.map(Math.log);
          const x = Math.log(k.m);
          let i = 0;
          while (i < lm.length - 2 && x > lm[i + 1]!) i++;
          return ls[i]! + ((x - lm[i]!) / (lm[i + 1]! - lm[i]!)) * (ls[i + 1]! - ls[i]!);
        })(),
      );
      for (const [f, want] of [[0.999, 1], [1.001, 0]] as const) {
        const s = (f * limit) / k.sigma_eff;
        const v = verdict([curve()], { m_chi: k.m, sigma_si_p_cm2: k.sigma_p * s, sigma_si_n_cm2: k.sigma_n * s });
        expect(v, `scale x${s}: expected ${want}`).toBe(want);
      }
    });
  }
  it('a proton-only point passes on xenon where sigma_p alone would fail (factor 0.169)', () => {
    const point = { m_chi: 100, sigma_si_p_cm2: 1.5e-46, sigma_si_n_cm2: 0 }; // curve: 3e-47 at 100 GeV
    expect(verdict([curve({ target: undefined })], point)).toBe(0);
    expect(verdict([curve()], point)).toBe(1);
    expect(verdict([curve()], { ...point, sigma_si_p_cm2: 1.9e-46 })).toBe(0);
  });
  it('the observable may be sigma_si_n_cm2 with the same result; NaN fails; "pass" outside the table', () => {
    expect(verdict([curve({ observable: 'sigma_si_n_cm2' })], { m_chi: 100, sigma_si_p_cm2: 1.5e-46, sigma_si_n_cm2: 0 })).toBe(1);
    expect(verdict([curve()], { m_chi: 100, sigma_si_p_cm2: NaN, sigma_si_n_cm2: 0 })).toBe(0);
    expect(verdict([curve()], { m_chi: 5, sigma_si_p_cm2: NaN, sigma_si_n_cm2: NaN })).toBe(1);
  });
  it('rescales with xi and the local density like any direct signal', () => {
    const list: ConstraintInput[] = [{ kind: 'relic', rescale: true, max: 10 }, curve({ rhoCurveGeVcm3: 0.6 })];
    // sigma_eff = 0.169 * 3e-46 = 5.06e-47; x xi 0.5 x rho 0.3/0.6 = 1.27e-47 < 3e-47
    expect(verdict(list, { omega_h2: 0.06, m_chi: 100, sigma_si_p_cm2: 3e-46, sigma_si_n_cm2: 0 })).toBe(1);
    expect(verdict(list, { omega_h2: 0.24, m_chi: 100, sigma_si_p_cm2: 3e-46, sigma_si_n_cm2: 0 })).toBe(1);
    expect(verdict(list, { omega_h2: 0.24, m_chi: 100, sigma_si_p_cm2: 9e-46, sigma_si_n_cm2: 0 })).toBe(0);
  });
  it('the resolved definition records the target, the comparison and the sign', () => {
    const d = compile([curve()]).compiled!.definition[0]!;
    expect(d).toMatchObject({ target: 'Xe', compared: 'sigma_si_eff_cm2', fnOverFpSign: 1 });
  });
});

describe('sd_limit_pair judged', () => {
  const pair = (extra: Record<string, unknown> = {}): ConstraintInput =>
    ({ kind: 'sd_limit_pair', proton: sdP, neutron: sdN, outOfRange: 'pass', target: 'Xe', ...extra }) as ConstraintInput;
  for (const k of fixtures.sd.cases.filter((c) => c.sign_apan > 0 && c.ratio > 0)) {
    it(`${k.target} m=${k.m}: the verdict flips at ratio 1 (numpy ${k.ratio.toPrecision(5)})`, () => {
      for (const [f, want] of [[0.999, 1], [1.001, 0]] as const) {
        const s = f / k.ratio;
        const v = verdict([pair({ target: k.target })], { m_chi: k.m, sigma_sd_p_cm2: k.sigma_p * s, sigma_sd_n_cm2: k.sigma_n * s });
        expect(v, `scale x${s}: expected ${want}`).toBe(want);
      }
    });
  }
  it('separate: each cross section below its own curve; the sum rule excludes x = y = 0.3 on xenon', () => {
    const point = { m_chi: 100, sigma_sd_p_cm2: 0.3 * 2e-40, sigma_sd_n_cm2: 0.3 * 6e-42 };
    expect(verdict([pair({ combine: 'separate', target: undefined })], point)).toBe(1);
    expect(verdict([pair()], point)).toBe(0);
    expect(verdict([pair({ combine: 'separate', target: undefined })], { ...point, sigma_sd_n_cm2: 1.01 * 6e-42 })).toBe(0);
  });
  it('out of range: "pass" drops that curve, "fail" fails; NaN fails', () => {
    expect(verdict([pair()], { m_chi: 5, sigma_sd_p_cm2: 1, sigma_sd_n_cm2: NaN })).toBe(1);
    expect(verdict([pair({ outOfRange: 'fail' })], { m_chi: 5, sigma_sd_p_cm2: 0, sigma_sd_n_cm2: 0 })).toBe(0);
    expect(verdict([pair()], { m_chi: 100, sigma_sd_p_cm2: NaN, sigma_sd_n_cm2: 0 })).toBe(0);
  });
  it('the resolved definition holds both tables, the rule and the sign', () => {
    const d = compile([pair()]).compiled!.definition[0]!;
    expect(d).toMatchObject({ kind: 'sd_limit_pair', name: 'sd_limit_pair_0', combine: 'sum_rule', target: 'Xe', apAnSign: 1, rhoCurveGeVcm3: 0.3 });
    expect((d.curves as { neutron: { y: number[] } }).neutron.y).toEqual(fixtures.sd.curve_n);
  });
});

describe('invalid targets and pairs name the field', () => {
  const cases: [string, ConstraintInput, string, string][] = [
    ['target on an SD observable', { kind: 'limit_curve', observable: 'sigma_sd_p_cm2', file: siCurve, outOfRange: 'pass', target: 'Xe' }, 'constraints[0].target', 'invalid'],
    ['unknown element', { kind: 'limit_curve', observable: 'sigma_si_p_cm2', file: siCurve, outOfRange: 'pass', target: 'xe' }, 'constraints[0].target', 'unknown_element'],
    ['pair on a spinless element', { kind: 'sd_limit_pair', proton: sdP, neutron: sdN, outOfRange: 'pass', target: 'Ar' }, 'constraints[0].target', 'no_spin_data'],
    ['pair: neutron curve in pb', { kind: 'sd_limit_pair', proton: sdP, neutron: 'sd-pb.csv', outOfRange: 'pass', target: 'Xe' }, 'constraints[0].neutron', 'curve_unit'],
    ['pair: proton file missing', { kind: 'sd_limit_pair', proton: 'none.csv', neutron: sdN, outOfRange: 'pass', target: 'Xe' }, 'constraints[0].proton', 'curve_file'],
    ['pair: unknown versus', { kind: 'sd_limit_pair', versus: 'mass', proton: sdP, neutron: sdN, outOfRange: 'pass', target: 'Xe' }, 'constraints[0].versus', 'unknown_parameter'],
  ];
  for (const [what, c, where, code] of cases) {
    it(what, () => {
      const { compiled, issues } = compile([c]);
      expect(compiled).toBeUndefined();
      expect(issues[0]).toMatchObject({ path: where, code });
      expect(issues[0]!.allowed).toBeTruthy();
    });
  }
  it('a scan without sigma_si_n_cm2 cannot take a targeted SI curve', () => {
    const { issues } = compile([{ kind: 'limit_curve', observable: 'sigma_si_p_cm2', file: siCurve, outOfRange: 'pass', target: 'Xe' }], ['sigma_si_p_cm2']);
    expect(issues[0]).toMatchObject({ path: 'constraints[0].target', code: 'unknown_observable', seen: 'sigma_si_n_cm2' });
  });
  it('schema: sum_rule needs a target, separate takes none, combine is one of two', () => {
    const bad = [
      [{ kind: 'sd_limit_pair', proton: 'a', neutron: 'b', outOfRange: 'pass' }, 'target'],
      [{ kind: 'sd_limit_pair', proton: 'a', neutron: 'b', outOfRange: 'pass', combine: 'separate', target: 'Xe' }, 'target'],
      [{ kind: 'sd_limit_pair', proton: 'a', neutron: 'b', outOfRange: 'pass', combine: 'max', target: 'Xe' }, 'combine'],
      [{ kind: 'limit_curve', observable: 'sigma_si_p_cm2', file: 'a', outOfRange: 'pass', target: 54 }, 'target'],
    ] as const;
    for (const [c, key] of bad) {
      const r = constraintsSchema.safeParse([c]);
      expect(r.success, JSON.stringify(c)).toBe(false);
      expect(r.error!.issues[0]!.path).toEqual([0, key]);
    }
  });
});
