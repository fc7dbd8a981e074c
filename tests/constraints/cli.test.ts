/**
 * The judge and survivors commands end to end on a ledger file: malformed constraints files exit 2
 * naming the field and leave the ledger byte for byte as it was; good input judges a new set beside
 * the old one; survivors lists exactly the points that pass (checked against the fixture formulas),
 * in every format, with --where and --limit.
 */
import { createHash } from 'node:crypto';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCommand } from './cli-harness.js';
import { effectiveSiCm2, siTarget } from '../../scheduler/constraints/isospin.js';
import { FIXTURE_SPEC, fixturePoint, writeFixtureLedger } from './ledger-fixture.js';

const N = 400;
const dir = mkdtempSync(path.join(tmpdir(), 'darksieve-cli-'));
const db = path.join(dir, 'ledger.db');
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function ledgerHash(): string {
  const h = createHash('sha256').update(readFileSync(db));
  const wal = `${db}-wal`;
  if (existsSync(wal)) h.update(readFileSync(wal));
  return h.digest('hex');
}

let counter = 0;
function constraintsFile(content: unknown): string {
  const file = path.join(dir, `c${counter++}.json`);
  writeFileSync(file, typeof content === 'string' ? content : JSON.stringify(content));
  return file;
}

writeFileSync(path.join(dir, 'curve.csv'), '# invented\nm_chi [GeV], sigma [cm^2]\n10, 1e-45\n1000, 1e-46\n');
writeFileSync(path.join(dir, 'curve-pb.csv'), 'm_chi [GeV], sigma [pb]\n10, 1e-9\n1000, 1e-10\n');
writeFileSync(path.join(dir, 'curve-order.csv'), 'm_chi [GeV], sigma [cm^2]\n100, 1e-45\n10, 1e-46\n');
writeFileSync(path.join(dir, 'sd-p.csv'), '# invented\nm_chi [GeV], sigma_sd_p [cm^2]\n10, 1e-39\n1000, 1e-39\n');
writeFileSync(path.join(dir, 'sd-n.csv'), '# invented\nm_chi [GeV], sigma_sd_n [cm^2]\n10, 1e-41\n1000, 1e-41\n');

const relic = { kind: 'relic', name: 'relic' };
const curve = { kind: 'limit_curve', observable: 'sigma_si_p_cm2', file: 'curve.csv', outOfRange: 'pass' };
const events = { kind: 'events_limit', detector: 'toyxe', observed: 2 };
const pair = { kind: 'sd_limit_pair', proton: 'sd-p.csv', neutron: 'sd-n.csv', outOfRange: 'pass', target: 'Xe' };

beforeAll(async () => {
  writeFixtureLedger(db, N);
  const r = await runCommand(['judge', db, '--constraints', constraintsFile({ set: 'base', constraints: [relic] })]);
  expect(r.code, r.stderr).toBe(0);
});

describe('malformed constraints files exit 2, name the field and leave the ledger unchanged', () => {
  const one = (c: unknown) => ({ constraints: [c] });
  const cases: [string, unknown, string][] = [
    ['not JSON', '{"constraints": [', '--constraints'],
    ['top level is a list', [relic], '--constraints'],
    ['no constraints key', { set: 'x' }, 'constraints'],
    ['empty constraints list', { constraints: [] }, 'constraints'],
    ['unknown top-level key', { constraints: [relic], extra: 1 }, 'extra'],
    ['set name with a space', { set: 'a b', constraints: [relic] }, 'set'],
    ['constraint is not an object', one(3), 'constraints[0]'],
    ['kind missing', one({ name: 'x' }), 'constraints[0].kind'],
    ['kind unknown', one({ kind: 'relics' }), 'constraints[0].kind'],
    ['relic: unknown key', one({ kind: 'relic', maxx: 1 }), 'constraints[0].maxx'],
    ['relic: bound lower', one({ kind: 'relic', bound: 'lower' }), 'constraints[0].bound'],
    ['relic: negative central', one({ kind: 'relic', central: -0.1 }), 'constraints[0].central'],
    ['relic: max with a band', one({ kind: 'relic', bound: 'band', max: 0.2 }), 'constraints[0].max'],
    ['relic: nSigma as text', one({ kind: 'relic', nSigma: '2' }), 'constraints[0].nSigma'],
    ['relic: rescale as text', one({ kind: 'relic', rescale: 'yes' }), 'constraints[0].rescale'],
    ['two rescaling relic constraints', { constraints: [{ kind: 'relic', rescale: true }, { kind: 'relic', bound: 'band', rescale: true }] }, 'constraints[1].rescale'],
    ['name not column-safe', one({ kind: 'relic', name: 'Relic-1' }), 'constraints[0].name'],
    ['name reserved', one({ kind: 'relic', name: 'survives' }), 'constraints[0].name'],
    ['duplicate names', { constraints: [relic, relic] }, 'constraints[1].name'],
    ['curve: outOfRange missing', one({ ...curve, outOfRange: undefined }), 'constraints[0].outOfRange'],
    ['curve: outOfRange unknown', one({ ...curve, outOfRange: 'extrapolate' }), 'constraints[0].outOfRange'],
    ['curve: outOfRange without above', one({ ...curve, outOfRange: { below: 'pass' } }), 'constraints[0].outOfRange'],
    ['curve: file missing', one({ ...curve, file: undefined }), 'constraints[0].file'],
    ['curve: file not found', one({ ...curve, file: 'nope.csv' }), 'constraints[0].file'],
    ['curve: file in pb', one({ ...curve, file: 'curve-pb.csv' }), 'constraints[0].file'],
    ['curve: masses not increasing', one({ ...curve, file: 'curve-order.csv' }), 'constraints[0].file'],
    ['curve: unknown observable', one({ ...curve, observable: 'sigma_si' }), 'constraints[0].observable'],
    ['curve: unknown versus', one({ ...curve, versus: 'mass' }), 'constraints[0].versus'],
    ['curve: density for a non-direct observable', one({ ...curve, observable: 'omega_h2', rhoCurveGeVcm3: 0.3 }), 'constraints[0].rhoCurveGeVcm3'],
    ['curve: target on a non-SI observable', one({ ...curve, observable: 'sigma_sd_n_cm2', target: 'Xe' }), 'constraints[0].target'],
    ['curve: target not an element with data', one({ ...curve, target: 'Xenon' }), 'constraints[0].target'],
    ['curve: target as a number', one({ ...curve, target: 54 }), 'constraints[0].target'],
    ['sd pair: sum rule without target', one({ ...pair, target: undefined }), 'constraints[0].target'],
    ['sd pair: target with combine separate', one({ ...pair, combine: 'separate' }), 'constraints[0].target'],
    ['sd pair: target without spin data', one({ ...pair, target: 'Ar' }), 'constraints[0].target'],
    ['sd pair: unknown combine', one({ ...pair, combine: 'max' }), 'constraints[0].combine'],
    ['sd pair: neutron curve missing', one({ ...pair, neutron: undefined }), 'constraints[0].neutron'],
    ['sd pair: proton file not found', one({ ...pair, proton: 'nope.csv' }), 'constraints[0].proton'],
    ['sd pair: neutron curve in pb', one({ ...pair, neutron: 'curve-pb.csv' }), 'constraints[0].neutron'],
    ['sd pair: unknown key file', one({ ...pair, file: 'curve.csv' }), 'constraints[0].file'],
    ['events: unknown detector', one({ ...events, detector: 'lux' }), 'constraints[0].detector'],
    ['events: negative count', one({ ...events, observed: -1 }), 'constraints[0].observed'],
    ['events: fractional count', one({ ...events, observed: 2.5 }), 'constraints[0].observed'],
    ['events: count too large for the statistics', one({ ...events, observed: 1e6 }), 'constraints[0].observed'],
    ['events: cl above 1', one({ ...events, cl: 1.5 }), 'constraints[0].cl'],
    ['events: unknown method', one({ ...events, method: 'bayes' }), 'constraints[0].method'],
    ['flux: unknown target', one({ kind: 'flux_limit', target: 'dwarf', maxCm2s: 1e-10 }), 'constraints[0].target'],
    ['flux: zero limit', one({ kind: 'flux_limit', target: 'gc', maxCm2s: 0 }), 'constraints[0].maxCm2s'],
    ['expression: syntax', one({ kind: 'expression', expr: 'm_chi >' }), 'constraints[0].expr'],
    ['expression: unknown name', one({ kind: 'expression', expr: 'mchi > 3' }), 'constraints[0].expr'],
    ['expression: property access', one({ kind: 'expression', expr: 'm_chi.constructor > 1' }), 'constraints[0].expr'],
    ['expression: not a condition', one({ kind: 'expression', expr: 'm_chi * 2' }), 'constraints[0].expr'],
    ['expression: empty', one({ kind: 'expression', expr: '' }), 'constraints[0].expr'],
    ['expression: import', one({ kind: 'expression', expr: 'import({a: 1}) > 0' }), 'constraints[0].expr'],
    ['set name already used with other constraints', { set: 'base', constraints: [{ kind: 'relic', name: 'relic', max: 0.5 }] }, 'set'],
  ];
  for (const [what, content, field] of cases) {
    it(what, async () => {
      const before = ledgerHash();
      const r = await runCommand(['judge', db, '--constraints', constraintsFile(content)]);
      expect(r.code, `stderr: ${r.stderr}`).toBe(2);
      expect(r.stderr, `expected the field ${field}`).toContain(`  ${field}: `);
      expect(ledgerHash()).toBe(before);
    });
  }
  it(`there are at least 30 of them (${cases.length})`, () => expect(cases.length).toBeGreaterThanOrEqual(30));

  const argCases: [string, string[], string][] = [
    ['--set with a bad name', ['--set', 'no/slash'], '--set'],
    ['unknown --scan', ['--scan', '99'], '--scan'],
  ];
  for (const [what, extra, field] of argCases) {
    it(what, async () => {
      const before = ledgerHash();
      const r = await runCommand(['judge', db, '--constraints', constraintsFile({ constraints: [relic] }), ...extra]);
      expect(r.code, r.stderr).toBe(2);
      expect(r.stderr).toContain(`  ${field}: `);
      expect(ledgerHash()).toBe(before);
    });
  }
  it('a missing ledger file', async () => {
    const r = await runCommand(['judge', path.join(dir, 'none.db'), '--constraints', constraintsFile({ constraints: [relic] })]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('  DB: ');
    expect(existsSync(path.join(dir, 'none.db'))).toBe(false);
  });
});

/** Survivors expected from the fixture formulas: relic upper bound 0.122 and the toy curve (written out here). */
function passes(id: number, withCurve: boolean): boolean {
  const p = fixturePoint(id, N);
  if (!(p.omega_h2 !== null && p.omega_h2 <= 0.122)) return false;
  if (!withCurve) return true;
  // curve: 1e-45 at 10 GeV to 1e-46 at 1000 GeV, log-log; pass outside [10, 1000]
  if (p.m_chi < 10 || p.m_chi > 1000) return true;
  const limit = Math.exp(Math.log(1e-45) + ((Math.log(p.m_chi) - Math.log(10)) / (Math.log(1000) - Math.log(10))) * (Math.log(1e-46) - Math.log(1e-45)));
  // the fixture scan assumes rho = 0.4 GeV/cm^3, the curve the default 0.3 (direct.md §6.2)
  return p.sigma_si_p_cm2 * (0.4 / 0.3) <= limit;
}

function csvIds(text: string): number[] {
  return text.trim().split('\n').slice(1).map((l) => Number(l.split(',')[0]));
}

describe('judge and survivors', () => {
  it('judges a new set from a file, set name from --set, summary as JSON', async () => {
    const r = await runCommand(['judge', db, '--constraints', constraintsFile({ constraints: [relic, curve] }), '--set', 'curve', '--json']);
    expect(r.code, r.stderr).toBe(0);
    const s = JSON.parse(r.stdout) as { points: number; survivors: number; constraints: { name: string; failed: number }[] };
    const ids = Array.from({ length: N }, (_, i) => i);
    expect(s.points).toBe(N);
    expect(s.survivors).toBe(ids.filter((i) => passes(i, true)).length);
    expect(s.constraints.map((c) => c.name)).toEqual(['relic', 'limit_curve_1']);
  });

  it('csv lists exactly the surviving points of the chosen set, summary on stderr', async () => {
    const r = await runCommand(['survivors', db, '--set', 'base', '--format', 'csv']);
    expect(r.code, r.stderr).toBe(0);
    expect(csvIds(r.stdout)).toEqual(Array.from({ length: N }, (_, i) => i).filter((i) => passes(i, false)));
    expect(r.stderr).toMatch(/constraint set 'base': 400 points judged/);
    expect(r.stderr).toMatch(/relic\s+relic\s+\d+\s+\d+/);
  });

  it('without --set the most recently judged set is used', async () => {
    const r = await runCommand(['survivors', db, '--format', 'csv']);
    expect(csvIds(r.stdout)).toEqual(Array.from({ length: N }, (_, i) => i).filter((i) => passes(i, true)));
  });

  it('--where filters with the expression sandbox (tiny numbers compared exactly)', async () => {
    const r = await runCommand(['survivors', db, '--set', 'base', '--format', 'csv', '--where', 'm_chi > 100 and sigma_si_p_cm2 < 2e-47']);
    expect(r.code, r.stderr).toBe(0);
    const want = Array.from({ length: N }, (_, i) => i).filter((i) => passes(i, false) && fixturePoint(i, N).m_chi > 100 && fixturePoint(i, N).sigma_si_p_cm2 < 2e-47);
    expect(want.length).toBeGreaterThan(0);
    expect(csvIds(r.stdout)).toEqual(want);
  });

  it('--where sees NULL as NaN', async () => {
    const r = await runCommand(['survivors', db, '--set', 'base', '--format', 'csv', '--where', 'isNaN(width_med)']);
    expect(csvIds(r.stdout).length).toBe(Array.from({ length: N }, (_, i) => i).filter((i) => passes(i, false)).length);
  });

  it('json gives objects keyed by column with full precision and null for NULL', async () => {
    const r = await runCommand(['survivors', db, '--set', 'base', '--format', 'json', '--limit', '3']);
    const rows = JSON.parse(r.stdout) as Record<string, unknown>[];
    expect(rows.length).toBe(3);
    const p = fixturePoint(rows[0]!.point_id as number, N);
    expect(rows[0]).toMatchObject({ m_chi: p.m_chi, omega_h2: p.omega_h2, width_med: null, flags: p.flags });
  });

  it('table output is aligned and limited', async () => {
    const r = await runCommand(['survivors', db, '--set', 'base', '--limit', '4']);
    const lines = r.stdout.split('\n').slice(0, -1);
    expect(lines.length).toBe(5);
    expect(lines[0]).toMatch(/point_id\s+dm\s+mediator\s+m_chi/);
    expect(new Set(lines.map((l) => l.length)).size).toBe(1);
  });

  it('a targeted SI curve and an SD pair judge as a set (wiring; the physics is checked in isospin.test.ts)', async () => {
    const r = await runCommand(['judge', db, '--constraints', constraintsFile({ constraints: [{ ...curve, name: 'si_xe', target: 'Xe' }, { ...pair, name: 'sd_xe' }] }), '--set', 'isospin', '--json']);
    expect(r.code, r.stderr).toBe(0);
    const s = JSON.parse(r.stdout) as { points: number; constraints: { name: string; failed: number }[] };
    // sigma_eff on xenon (f_n/f_p > 0 in this model) against the same curve as passes(); scan rho 0.4, curve 0.3
    const xe = siTarget('Xe');
    const failsXe = Array.from({ length: N }, (_, i) => fixturePoint(i, N)).filter((p) => {
      if (p.m_chi < 10 || p.m_chi > 1000) return false;
      const limit = Math.exp(Math.log(1e-45) + ((Math.log(p.m_chi) - Math.log(10)) / (Math.log(1000) - Math.log(10))) * (Math.log(1e-46) - Math.log(1e-45)));
      return effectiveSiCm2(xe, p.m_chi, p.sigma_si_p_cm2, p.sigma_si_n_cm2, 1) * (0.4 / 0.3) > limit;
    }).length;
    const failsUntargeted = Array.from({ length: N }, (_, i) => i).filter((i) => passes(i, true) !== passes(i, false)).length;
    expect(s.constraints.map((c) => c.name)).toEqual(['si_xe', 'sd_xe']);
    expect(s.constraints[0]!.failed).toBe(failsXe);
    // sigma_si_n (1e-47) <= sigma_si_p in the fixture, so the neutron part is smaller: fewer failures
    expect(failsXe).toBeLessThan(failsUntargeted);
    expect(s.constraints[1]!.failed).toBe(0); // the fixture has no SD signal
  });

  const bad: [string, string[], string][] = [
    ['unknown format', ['--format', 'xml'], '--format'],
    ['limit zero', ['--limit', '0'], '--limit'],
    ['where with property access', ['--where', 'm_chi.constructor'], '--where'],
    ['where on a text column', ['--where', 'flags > 1'], '--where'],
    ['unknown set', ['--set', 'nope'], '--set'],
  ];
  for (const [what, extra, field] of bad) {
    it(`survivors: ${what} exits 2 naming ${field}`, async () => {
      const r = await runCommand(['survivors', db, ...extra]);
      expect(r.code, r.stderr).toBe(2);
      expect(r.stderr).toContain(`  ${field}: `);
    });
  }
});

describe('a ledger with several scans', () => {
  const multi = path.join(dir, 'multi.db');
  beforeAll(() => {
    writeFixtureLedger(multi, 50);
    writeFixtureLedger(multi, 80, { ...FIXTURE_SPEC, name: 'second' });
  });
  it('judge and survivors need --scan, and accept an id or a name', async () => {
    const file = constraintsFile({ constraints: [relic] });
    const without = await runCommand(['judge', multi, '--constraints', file]);
    expect(without.code).toBe(2);
    expect(without.stderr).toContain('  --scan: ');
    expect(without.stderr).toContain('1 (fixture), 2 (second)');
    expect((await runCommand(['judge', multi, '--constraints', file, '--scan', 'second'])).code).toBe(0);
    const r = await runCommand(['survivors', multi, '--scan', '2', '--format', 'csv']);
    expect(r.code, r.stderr).toBe(0);
    expect(csvIds(r.stdout)).toEqual(Array.from({ length: 80 }, (_, i) => i).filter((i) => {
      const p = fixturePoint(i, 80);
      return p.omega_h2 !== null && p.omega_h2 <= 0.122;
    }));
    const first = await runCommand(['survivors', multi, '--scan', '1']);
    expect(first.code).toBe(2);
    expect(first.stderr).toContain('no judged constraint set');
  });
});
