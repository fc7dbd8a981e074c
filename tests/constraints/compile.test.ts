/**
 * Compiling constraints against a scan and judging single points: limit-curve interpolation and
 * rescaling against numpy reference values (fixtures/generate_curve_fixtures.py, the recipe of the
 * shared notes direct.md §6.1-6.2 / §9.3), event limits against the Poisson / Feldman-Cousins values
 * of direct.md §5.3, and the relic, flux and expression kinds.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { compileConstraints, rescalePower, type ConstraintContext } from '../../scheduler/constraints/compile.js';
import { curveLookup, normalizeUnit, parseCurve } from '../../scheduler/constraints/curve-file.js';
import { constraintsSchema, type ConstraintInput } from '../../scheduler/constraints/schema.js';

const dir = mkdtempSync(path.join(tmpdir(), 'darksieve-compile-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const fixtures = JSON.parse(readFileSync(new URL('./fixtures/curve_fixtures.json', import.meta.url), 'utf8')) as {
  curve: { m: number[]; sigma: number[] };
  interp: { m: number; limit: number }[];
  cases: { sigma: number; m: number; omega_h2: number; rho_tool: number; rho_curve: number; r: number }[];
};

function writeCurve(name: string, body: string): string {
  writeFileSync(path.join(dir, name), body);
  return name;
}
const toyCurve = writeCurve('toy.csv', `# invented toy curve (direct.md §9.3), not data\nm_chi [GeV], sigma_si_p [cm^2]\n${fixtures.curve.m.map((m, i) => `${m}, ${fixtures.curve.sigma[i]}`).join('\n')}\n`);

function context(rho = 0.3): ConstraintContext {
  return {
    parameters: ['m_chi', 'm_med', 'g_chi', 'g_q', 'g_l', 'width_med'],
    observables: ['omega_h2', 'sigv0_cm3s', 'sigma_si_p_cm2', 'sigma_sd_n_cm2', 'events_toyxe', 'flux_gc_cm2s'],
    rhoLocalGeVcm3: rho,
    baseDir: dir,
  };
}

function compile(list: ConstraintInput[], rho = 0.3) {
  const parsed = constraintsSchema.safeParse(list);
  if (!parsed.success) throw new Error(JSON.stringify(parsed.error.issues));
  return compileConstraints(parsed.data, context(rho));
}

/** Judges one point given as a record; returns [verdicts..., survives]. */
function judge(list: ConstraintInput[], point: Record<string, number>, rho = 0.3): { verdicts: number[]; survives: boolean } {
  const { compiled, issues } = compile(list, rho);
  expect(issues).toEqual([]);
  const values = Float64Array.from(compiled!.inputs, (c) => point[c] ?? NaN);
  const verdicts = new Uint8Array(compiled!.columns.length);
  const survives = compiled!.judgePoint(values, verdicts);
  return { verdicts: [...verdicts], survives };
}

describe('log-log interpolation of a limit curve (numpy reference, direct.md §9.3)', () => {
  const curve = { x: fixtures.curve.m, y: fixtures.curve.sigma, header: ['m', 's'] as [string, string] };
  const lookup = curveLookup(curve, 'pass', 'proportional');
  for (const { m, limit } of fixtures.interp) {
    it(`m = ${m} GeV`, () => {
      const got = lookup(m);
      // same formula in double precision; only rounding of log/exp differs
      const rel = Math.abs(got - limit) / limit;
      expect(rel, `m=${m} got=${got} expected=${limit} rel=${rel} tol=1e-12`).toBeLessThan(1e-12);
    });
  }
  it('below the table: pass gives no constraint, fail fails, clamp takes the first limit, proportional scales with x', () => {
    const c = (p: 'pass' | 'fail' | 'clamp' | 'proportional') => curveLookup(curve, p, p)(5);
    expect(c('pass')).toBe(Infinity);
    expect(c('fail')).toBe(-Infinity);
    expect(c('clamp')).toBe(1e-45);
    expect(c('proportional')).toBeCloseTo(0.5e-45, 60);
  });
  it('a non-positive or NaN parameter gives NaN (the point fails)', () => {
    expect(lookup(0)).toBeNaN();
    expect(lookup(NaN)).toBeNaN();
  });
});

describe('limit_curve with rescaling by relic fraction and local density (numpy reference, direct.md §6.2)', () => {
  for (const k of fixtures.cases) {
    it(`sigma=${k.sigma} m=${k.m} omega=${k.omega_h2} rho ${k.rho_tool}/${k.rho_curve}: r=${k.r.toFixed(4)}`, () => {
      const list: ConstraintInput[] = [
        { kind: 'relic', bound: 'upper', max: 1e9, rescale: true },
        { kind: 'limit_curve', observable: 'sigma_si_p_cm2', file: toyCurve, outOfRange: { below: 'pass', above: 'proportional' }, rhoCurveGeVcm3: k.rho_curve },
      ];
      const { verdicts } = judge(list, { m_chi: k.m, sigma_si_p_cm2: k.sigma, omega_h2: k.omega_h2 }, k.rho_tool);
      expect(verdicts[1], `r=${k.r}`).toBe(k.r <= 1 ? 1 : 0);
      // scale the prediction to sit just either side of the limit: the verdict flips at r = 1
      for (const [f, want] of [[0.999 / k.r, 1], [1.001 / k.r, 0]] as const) {
        const v = judge(list, { m_chi: k.m, sigma_si_p_cm2: k.sigma * f, omega_h2: k.omega_h2 }, k.rho_tool).verdicts[1];
        expect(v, `prediction x${f}: expected verdict ${want}`).toBe(want);
      }
    });
  }
  it('without rescale the relic fraction is ignored', () => {
    const k = fixtures.cases[0]!; // r = 0.314 with xi = 0.1, i.e. 3.14 without
    const list: ConstraintInput[] = [{ kind: 'limit_curve', observable: 'sigma_si_p_cm2', file: toyCurve, outOfRange: 'pass' }];
    expect(judge(list, { m_chi: k.m, sigma_si_p_cm2: k.sigma, omega_h2: k.omega_h2 }).verdicts[0]).toBe(0);
  });
  it('outside the table under "pass" a point passes even with a missing prediction', () => {
    const list: ConstraintInput[] = [{ kind: 'limit_curve', observable: 'sigma_si_p_cm2', file: toyCurve, outOfRange: 'pass' }];
    expect(judge(list, { m_chi: 5, sigma_si_p_cm2: NaN }).verdicts[0]).toBe(1);
    expect(judge(list, { m_chi: 50, sigma_si_p_cm2: NaN }).verdicts[0]).toBe(0);
  });
});

describe('curve files', () => {
  const bad: [string, string, string][] = [
    ['wrong x unit', 'm [MeV], s [cm^2]\n1,1\n2,2\n', 'curve_unit'],
    ['wrong y unit (pb)', 'm [GeV], s [pb]\n1,1\n2,2\n', 'curve_unit'],
    ['no units', 'm, s\n1,1\n2,2\n', 'curve_header'],
    ['three columns', 'm [GeV], s [cm2], x [1]\n1,1\n2,2\n', 'curve_header'],
    ['not increasing', 'm [GeV], s [cm2]\n2,1\n1,2\n', 'curve_order'],
    ['negative limit', 'm [GeV], s [cm2]\n1,-1\n2,2\n', 'curve_value'],
    ['text value', 'm [GeV], s [cm2]\n1,abc\n2,2\n', 'curve_value'],
    ['one row', 'm [GeV], s [cm2]\n1,1\n', 'curve_rows'],
    ['empty', '# nothing\n', 'curve_empty'],
    ['row with one field', 'm [GeV], s [cm2]\n1\n2,2\n', 'curve_row'],
  ];
  for (const [what, text, code] of bad) {
    it(`refuses ${what}`, () => {
      const r = parseCurve(text, 'GeV', 'cm^2', 'constraints[1].file');
      expect(r.curve).toBeUndefined();
      expect(r.issues.map((i) => i.code)).toContain(code);
      expect(r.issues[0]!.path).toBe('constraints[1].file');
    });
  }
  it('unit spellings: cm^2 = cm2, cm^3/s = cm3 s^-1, dimensionless = [1] = []', () => {
    expect(normalizeUnit('cm^2')).toBe(normalizeUnit('CM2'));
    expect(normalizeUnit('cm^3/s')).toBe(normalizeUnit('cm^3 s^-1'));
    expect(normalizeUnit('1')).toBe(normalizeUnit(''));
    expect(normalizeUnit('GeV')).not.toBe(normalizeUnit('MeV'));
  });
  it('a missing file is an issue on constraints[i].file', () => {
    const { issues } = compile([{ kind: 'limit_curve', observable: 'sigma_si_p_cm2', file: 'nope.csv', outOfRange: 'pass' }]);
    expect(issues[0]).toMatchObject({ code: 'curve_file', path: 'constraints[0].file', seen: 'nope.csv' });
  });
});

describe('relic', () => {
  it('upper bound defaults to Planck 2018 0.120 + 2 x 0.001', () => {
    expect(judge([{ kind: 'relic' }], { omega_h2: 0.122 }).survives).toBe(true);
    expect(judge([{ kind: 'relic' }], { omega_h2: 0.1221 }).survives).toBe(false);
    expect(judge([{ kind: 'relic' }], { omega_h2: 1e-6 }).survives).toBe(true);
  });
  it('band: |omega - 0.120| <= n sigma', () => {
    const band: ConstraintInput = { kind: 'relic', bound: 'band', nSigma: 3 };
    expect(judge([band], { omega_h2: 0.1171 }).survives).toBe(true);
    expect(judge([band], { omega_h2: 0.1169 }).survives).toBe(false);
    expect(judge([band], { omega_h2: 0.123 }).survives).toBe(true);
    expect(judge([band], { omega_h2: 0.1231 }).survives).toBe(false);
  });
  it('a missing relic abundance fails', () => {
    expect(judge([{ kind: 'relic' }], { omega_h2: NaN }).survives).toBe(false);
  });
});

describe('events_limit (upper limits of direct.md §5.3)', () => {
  it('Poisson, 0 observed, no background: 2.303 events at 90% CL', () => {
    const c: ConstraintInput = { kind: 'events_limit', detector: 'toyxe', observed: 0 };
    expect(judge([c], { events_toyxe: 2.30 }).survives).toBe(true);
    expect(judge([c], { events_toyxe: 2.31 }).survives).toBe(false);
  });
  it('Poisson, 3 observed: 6.681 events', () => {
    const c: ConstraintInput = { kind: 'events_limit', detector: 'toyxe', observed: 3 };
    expect(judge([c], { events_toyxe: 6.67 }).survives).toBe(true);
    expect(judge([c], { events_toyxe: 6.69 }).survives).toBe(false);
  });
  it('Feldman-Cousins, 0 observed, no background: 2.44 events (FC 1998 Table IV)', () => {
    const c: ConstraintInput = { kind: 'events_limit', detector: 'toyxe', observed: 0, method: 'feldman_cousins' };
    expect(judge([c], { events_toyxe: 2.43 }).survives).toBe(true);
    expect(judge([c], { events_toyxe: 2.45 }).survives).toBe(false);
  });
  it('events scale with xi when a relic constraint rescales', () => {
    const list: ConstraintInput[] = [{ kind: 'relic', rescale: true }, { kind: 'events_limit', detector: 'toyxe', observed: 0 }];
    expect(judge(list, { omega_h2: 0.012, events_toyxe: 23 }).verdicts[1]).toBe(1); // 2.3 after xi = 0.1
    expect(judge(list, { omega_h2: 0.012, events_toyxe: 23.1 }).verdicts[1]).toBe(0);
  });
  it('a background far above the observed count clamps the Poisson limit at 0 and warns', () => {
    const { compiled } = compile([{ kind: 'events_limit', detector: 'toyxe', observed: 0, background: 10 }]);
    expect(compiled!.warnings[0]).toMatch(/clamped at 0/);
  });
  it('an unknown detector names the detectors of the scan', () => {
    const { issues } = compile([{ kind: 'events_limit', detector: 'lux', observed: 0 }]);
    expect(issues[0]).toMatchObject({ path: 'constraints[0].detector', seen: 'lux', allowed: 'toyxe' });
  });
});

describe('flux_limit and expression', () => {
  it('flux scales with xi^2', () => {
    const list: ConstraintInput[] = [{ kind: 'relic', rescale: true }, { kind: 'flux_limit', target: 'gc', maxCm2s: 1e-12 }];
    expect(judge(list, { omega_h2: 0.06, flux_gc_cm2s: 4e-12 }).verdicts[1]).toBe(1); // 4e-12 * 0.25
    expect(judge(list, { omega_h2: 0.06, flux_gc_cm2s: 4.01e-12 }).verdicts[1]).toBe(0);
  });
  it('expressions see parameters, observables and xi; tiny cross sections compare exactly', () => {
    const list: ConstraintInput[] = [
      { kind: 'relic', rescale: true, max: 10 },
      { kind: 'expression', name: 'cut', expr: 'xi * sigma_si_p_cm2 < 1e-46 * (m_chi / 100)' },
    ];
    expect(judge(list, { omega_h2: 0.12, sigma_si_p_cm2: 1e-47, m_chi: 200 }).verdicts[1]).toBe(1);
    expect(judge(list, { omega_h2: 0.12, sigma_si_p_cm2: 3e-46, m_chi: 200 }).verdicts[1]).toBe(0);
    expect(judge(list, { omega_h2: 0.012, sigma_si_p_cm2: 1.9e-45, m_chi: 200 }).verdicts[1]).toBe(1);
  });
  it('an expression must be a condition', () => {
    const { issues } = compile([{ kind: 'expression', expr: 'm_chi * 2' }]);
    expect(issues[0]).toMatchObject({ code: 'expression_type', path: 'constraints[0].expr' });
  });
});

describe('set-level checks', () => {
  it('default names are kind_index and duplicates are refused', () => {
    const { compiled } = compile([{ kind: 'relic' }, { kind: 'expression', expr: 'm_chi > 1' }]);
    expect(compiled!.columns).toEqual(['relic_0', 'expression_1']);
    const { issues } = compile([{ kind: 'relic', name: 'a' }, { kind: 'relic', name: 'a' }]);
    expect(issues[0]).toMatchObject({ code: 'duplicate_name', path: 'constraints[1].name' });
  });
  it('only one relic constraint may rescale', () => {
    const { issues } = compile([{ kind: 'relic', rescale: true }, { kind: 'relic', bound: 'band', rescale: true }]);
    expect(issues[0]).toMatchObject({ path: 'constraints[1].rescale' });
  });
  it('every problem is reported at once', () => {
    const { issues } = compile([
      { kind: 'limit_curve', observable: 'nope', versus: 'g_x', file: toyCurve, outOfRange: 'pass' },
      { kind: 'flux_limit', target: 'dwarf', maxCm2s: 1 },
      { kind: 'expression', expr: 'q > 1' },
    ]);
    expect(issues.map((i) => i.path)).toEqual(['constraints[0].versus', 'constraints[0].observable', 'constraints[1].target', 'constraints[2].expr']);
  });
  it('signal classes: direct with xi, annihilation today with xi^2, the rest unscaled', () => {
    expect(rescalePower('sigma_si_p_cm2')).toBe(1);
    expect(rescalePower('sigma_sd_n_cm2')).toBe(1);
    expect(rescalePower('events_toyxe')).toBe(1);
    expect(rescalePower('sigv0_cm3s')).toBe(2);
    expect(rescalePower('flux_gc_cm2s')).toBe(2);
    expect(rescalePower('sigv_fo_cm3s')).toBe(0);
    expect(rescalePower('omega_h2')).toBe(0);
  });
  it('the resolved definition holds the curve table and every default', () => {
    const { compiled } = compile([{ kind: 'limit_curve', observable: 'sigma_si_p_cm2', file: toyCurve, outOfRange: 'clamp' }], 0.45);
    const d = compiled!.definition[0]!;
    expect(d).toMatchObject({ name: 'limit_curve_0', versus: 'm_chi', rhoCurveGeVcm3: 0.3, outOfRange: { below: 'clamp', above: 'clamp' } });
    expect(d.rhoFactor).toBeCloseTo(1.5, 14);
    expect((d.curve as { x: number[] }).x).toEqual(fixtures.curve.m);
  });
});
