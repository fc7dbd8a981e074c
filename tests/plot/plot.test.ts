/**
 * Pictures of contract-shaped ledgers: marks, axes, labels, the relic line, limit curves, PNG size
 * and bad input. The ledgers hold synthetic fields (tests/plot/contract-ledger.ts), not physics.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { DOMParser } from 'linkedom';
import { createContractLedger, insertPoints, insertVerdicts, type Row } from './contract-ledger.js';
import { writePlot, planeImage } from '../../scheduler/plot/plot-plane.js';
import { LedgerView } from '../../scheduler/plot/ledger-view.js';
import { relicContour } from '../../scheduler/plot/relic-contour.js';
import { resolveSlice } from '../../scheduler/plot/slice.js';
import { SCATTER_MAX_POINTS } from '../../scheduler/plot/plane-data.js';
import { InvalidInputError } from '../../physics/issue.js';
import { constraintsSchema } from '../../scheduler/constraints/schema.js';
import { compileConstraints } from '../../scheduler/constraints/compile.js';
import { judgeScan } from '../../scheduler/constraints/judge.js';
import Database from 'better-sqlite3';

let dir: string;
const CONSTRAINTS = ['relic', 'direct'];

/**
 * Grid ledger: 30 log-spaced m_chi x 20 log-spaced m_med. Synthetic field
 * omega_h2 = 0.12 (m_med/300)^4 / (m_chi/100)^2, whose log is linear in the log axes, so the
 * 0.120 line is exactly m_med = 300 sqrt(m_chi/100) and marching squares must find it exactly.
 */
function gridRows(): Row[] {
  const rows: Row[] = [];
  for (let j = 0; j < 20; j++) {
    for (let i = 0; i < 30; i++) {
      const m = 10 ** (1 + (2 * i) / 29);
      const mm = 10 ** (1 + (2.5 * j) / 19);
      rows.push({
        m_chi: m, m_med: mm, g_chi: 1, g_q: 0.25,
        omega_h2: 0.12 * (mm / 300) ** 4 / (m / 100) ** 2,
        sigma_si_p_cm2: 1e-45 * (300 / mm) ** 4 * (m / 100),
        sigv0_cm3s: i === 0 && j === 0 ? null : 2e-26 * (300 / mm) ** 4,
      });
    }
  }
  return rows;
}
const survivesGrid = (rows: Row[]) => (c: string, id: number): boolean =>
  c === 'relic' ? (rows[id]?.omega_h2 as number) < 0.12 : (rows[id]?.sigma_si_p_cm2 as number) < 1e-45;

/** linkedom's XML document (the project compiles without DOM types) */
type Doc = ReturnType<InstanceType<typeof DOMParser>['parseFromString']>;
const parseSvgText = (svg: string): Doc => new DOMParser().parseFromString(svg, 'image/svg+xml');
const parseSvg = (file: string): Doc => parseSvgText(fs.readFileSync(file, 'utf8'));
const text = (doc: Doc, label: string): string =>
  (doc.querySelector(`[aria-label="${label}"]`)?.textContent ?? '').replace(/\s+/g, ' ').trim();

/** Width and height from the IHDR chunk of a PNG (PNG spec, ISO/IEC 15948 section 11.2.2). */
function pngSize(file: string): { width: number; height: number } {
  const b = fs.readFileSync(file);
  expect(b.subarray(0, 8).equals(Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]))).toBe(true);
  expect(b.subarray(12, 16).toString('latin1')).toBe('IHDR');
  return { width: b.readUInt32BE(16), height: b.readUInt32BE(20) };
}

let grid: Row[];
const gridDb = (): string => path.join(dir, 'grid.db');
const scatterDb = (): string => path.join(dir, 'scatter.db');
const bigDb = (): string => path.join(dir, 'big.db');

beforeAll(() => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'darksieve-plot-'));
  grid = gridRows();
  fs.writeFileSync(path.join(dir, 'invented-limit.csv'), '# invented limit curve for tests\nm_chi [GeV], sigma_si_p [cm^2]\n10, 1e-44\n100, 1e-46\n1000, 5e-46\n');
  const spec = {
    name: 'grid', constraints: [
      { kind: 'limit_curve', name: 'invented_limit_a', observable: 'sigma_si_p_cm2', versus: 'm_chi', file: 'invented-limit.csv', outOfRange: 'pass' },
      { kind: 'limit_curve', name: 'missing_curve', observable: 'sigma_si_p_cm2', versus: 'm_chi', file: 'nowhere.csv', outOfRange: 'pass' },
    ],
  };
  const g = createContractLedger(gridDb(), { name: 'grid', spec });
  insertPoints(g, grid);
  insertVerdicts(g, 'default', CONSTRAINTS, grid.length, survivesGrid(grid));
  g.close();

  // random-looking (deterministic) cloud: 500 points, 3 with NULL y, no grid structure
  const cloud: Row[] = [];
  for (let k = 0; k < 500; k++) {
    const u = (k * 0.6180339887) % 1;
    const v = (k * 0.7548776662) % 1;
    cloud.push({ m_chi: 10 ** (1 + 3 * u), g_chi: 0.1 + 0.9 * v, omega_h2: 10 ** (-3 + 4 * v), sigma_si_p_cm2: k < 3 ? null : 10 ** (-48 + 6 * u * v) });
  }
  const s = createContractLedger(scatterDb(), { name: 'cloud' });
  insertPoints(s, cloud);
  insertVerdicts(s, 'default', CONSTRAINTS, cloud.length, (c, id) => (c === 'relic' ? id % 3 !== 0 : id % 5 !== 0));
  insertVerdicts(s, 'tight', CONSTRAINTS, cloud.length, (c, id) => id % 2 === 0);
  s.close();

  const big: Row[] = [];
  for (let k = 0; k < SCATTER_MAX_POINTS + 5000; k++) {
    const u = (k * 0.6180339887) % 1;
    const v = (k * 0.7548776662) % 1;
    big.push({ m_chi: 10 ** (1 + 3 * u), sigma_si_p_cm2: 10 ** (-48 + 6 * v), omega_h2: 10 ** (-2 + 2 * u) });
  }
  const b = createContractLedger(bigDb(), { name: 'big' });
  insertPoints(b, big);
  insertVerdicts(b, 'default', CONSTRAINTS, big.length, (c, id) => id % 4 !== 0);
  b.close();
});

afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

describe('grid planes', () => {
  it('draws one cell per grid node with physics-notation axis labels', () => {
    const out = path.join(dir, 'grid.svg');
    const result = writePlot({ db: gridDb(), out, x: 'm_chi', y: 'm_med', color: 'omega_h2' });
    expect(result.mode).toBe('grid');
    const doc = parseSvg(out);
    expect(doc.querySelectorAll('[aria-description="cells"] rect')).toHaveLength(600);
    expect(text(doc, 'x label')).toBe('mχ [GeV]');
    expect(JSON.parse(doc.querySelector('metadata')?.textContent ?? '{}')).toMatchObject({
      scan: 1, specHash: 'sha256:test', codeVersion: 'test-0', constantsEdition: 'CODATA2018+PDG2024+Planck2018', constraintSet: 'default',
    });
    expect(text(doc, 'y label')).toBe('mmed [GeV]');
    // log axes chosen automatically (both span 2 decades or more): tick labels are powers of ten
    expect(doc.documentElement.textContent).toContain('10²');
    // survivors opaque, excluded faded: the counts match the verdicts
    const survivors = grid.filter((_, id) => CONSTRAINTS.every((c) => survivesGrid(grid)(c, id))).length;
    const faded = [...doc.querySelectorAll('[aria-description="cells"] rect')].filter((r) => r.getAttribute('fill-opacity') !== null && r.getAttribute('fill-opacity') !== '1');
    expect(faded.length).toBe(600 - survivors);
  });

  it('keeps neighbouring heat-map cells edge to edge after coordinate rounding (hairline gaps regression)', () => {
    const out = path.join(dir, 'edges.svg');
    writePlot({ db: gridDb(), out, x: 'm_chi', y: 'm_med', color: 'omega_h2' });
    const rects = [...parseSvg(out).querySelectorAll('[aria-description="cells"] rect')].map((r) => ({
      x: Number(r.getAttribute('x')), y: Number(r.getAttribute('y')), w: Number(r.getAttribute('width')), h: Number(r.getAttribute('height')),
    }));
    const rows = new Map<number, typeof rects>();
    for (const r of rects) rows.set(r.y, [...(rows.get(r.y) ?? []), r]);
    expect(rows.size).toBe(20);
    for (const row of rows.values()) {
      row.sort((a, b) => a.x - b.x);
      for (let i = 1; i < row.length; i++) {
        const gap = row[i]!.x - (row[i - 1]!.x + row[i - 1]!.w);
        expect(Math.abs(gap), `gap between cells at x=${row[i - 1]!.x} and ${row[i]!.x}`).toBeLessThan(1e-9);
      }
    }
  });

  it('finds the relic line exactly where the synthetic field crosses 0.120', () => {
    const view = LedgerView.open(gridDb());
    try {
      const image = planeImage(view, gridDb(), { x: 'm_chi', y: 'm_med' });
      const relic = relicContour(view, 1, image.data);
      expect(relic.overlays).toHaveLength(1);
      const pts = relic.overlays[0]?.lines.flat() ?? [];
      expect(pts.length).toBeGreaterThan(20);
      for (const p of pts) {
        const expected = 300 * Math.sqrt(p.x / 100);
        expect(Math.abs(p.y / expected - 1), `m_chi=${p.x}: got m_med=${p.y}, expected ${expected}`).toBeLessThan(1e-9);
      }
      const doc = parseSvgText(image.svg);
      expect(doc.querySelector('[aria-description="curve Ωh² = 0.120"] path')).not.toBeNull();
    } finally {
      view.close();
    }
  });

  it('draws no relic line in a scattered plane', () => {
    const view = LedgerView.open(scatterDb());
    try {
      const image = planeImage(view, scatterDb(), { x: 'm_chi', y: 'g_chi', set: 'default' });
      expect(image.data.mode).toBe('scatter');
      expect(relicContour(view, 1, image.data)).toEqual({ overlays: [], note: null });
    } finally {
      view.close();
    }
  });

  it('draws one relic line per slice when a few other parameter values share the cells', () => {
    const file = path.join(dir, 'slices.db');
    const db = createContractLedger(file);
    // second slice: the synthetic field scaled by 16, so its line sits at m_med / 2
    insertPoints(db, [0.5, 1].flatMap((g) => grid.map((r) => ({ ...r, g_chi: g, omega_h2: (r.omega_h2 as number) * (g === 1 ? 16 : 1) }))));
    db.close();
    const view = LedgerView.open(file);
    try {
      const image = planeImage(view, file, { x: 'm_chi', y: 'm_med', color: 'omega_h2' });
      expect(image.data).toMatchObject({ mode: 'grid', pointsPerCell: 2, judged: false });
      const relic = relicContour(view, 1, image.data);
      expect(relic.overlays.map((o) => o.label)).toEqual(['Ωh² = 0.120 (g_chi = 0.5)', 'Ωh² = 0.120 (g_chi = 1)']);
      const factor = [1, 0.5];
      relic.overlays.forEach((o, k) => {
        for (const p of o.lines.flat()) {
          const expected = factor[k]! * 300 * Math.sqrt(p.x / 100);
          expect(Math.abs(p.y / expected - 1), `slice ${k}, m_chi=${p.x}: got ${p.y}, expected ${expected}`).toBeLessThan(1e-9);
        }
      });
      expect(image.svg).toContain('Ωh² = 0.120 (g_chi = 1)');
    } finally {
      view.close();
    }
  });

  it('leaves the relic line out when too many slices share the cells, and says why', () => {
    const file = path.join(dir, 'projection.db');
    const db = createContractLedger(file);
    insertPoints(db, [0.2, 0.4, 0.6, 0.8, 1].flatMap((g) => grid.map((r) => ({ ...r, g_chi: g }))));
    db.close();
    const view = LedgerView.open(file);
    try {
      const image = planeImage(view, file, { x: 'm_chi', y: 'm_med', color: 'omega_h2' });
      expect(image.data).toMatchObject({ mode: 'grid', pointsPerCell: 5 });
      expect(image.notes.join(' ')).toContain('relic line not drawn: 5 points share each cell');
      expect(image.svg).not.toContain('curve Ωh²');
    } finally {
      view.close();
    }
  });

  it('--fix picks one slice: the nearest stored value, the relic line of that slice, and its note', () => {
    const file = path.join(dir, 'fix.db');
    const db = createContractLedger(file);
    // five g_chi slices, the field scaled by (g_chi / 0.6)^-4: the slice at 0.6 crosses where the plain grid does
    const slices = [0.2, 0.4, 0.6, 0.8, 1];
    insertPoints(db, slices.flatMap((g) => grid.map((r) => ({ ...r, g_chi: g, mediator: g === 1 ? 'scalar' : 'vector', omega_h2: (r.omega_h2 as number) * (g / 0.6) ** -4 }))));
    db.close();
    const view = LedgerView.open(file);
    try {
      const image = planeImage(view, file, { x: 'm_chi', y: 'm_med', fix: ['g_chi=0.63'] });
      expect(image.data).toMatchObject({ mode: 'grid', pointsPerCell: 1, drawnPoints: grid.length });
      expect(image.notes.join(' ')).toContain('slice: g_chi = 0.6 (stored value nearest 0.63)');
      const relic = relicContour(view, 1, image.data, resolveSlice(view, 1, ['g_chi=0.63'], ['m_chi', 'm_med']));
      expect(relic.overlays).toHaveLength(1);
      for (const p of relic.overlays[0]!.lines.flat()) {
        const expected = 300 * Math.sqrt(p.x / 100);
        expect(Math.abs(p.y / expected - 1), `m_chi=${p.x}`).toBeLessThan(1e-9);
      }
      expect(parseSvgText(image.svg).querySelector('[aria-description="curve Ωh² = 0.120"] path')).not.toBeNull();
      // without --fix the five slices are mixed and the note points to --fix
      expect(planeImage(view, file, { x: 'm_chi', y: 'm_med' }).notes.join(' ')).toMatch(/relic line not drawn: 5 points share each cell.*--fix/);
      // a text parameter: the one slice with mediator = scalar is g_chi = 1
      const scalar = planeImage(view, file, { x: 'm_chi', y: 'm_med', fix: ['mediator=scalar'] });
      expect(scalar.data).toMatchObject({ pointsPerCell: 1, drawnPoints: grid.length });
      expect(scalar.notes.join(' ')).toContain('slice: mediator = scalar');
    } finally {
      view.close();
    }
  });

  it('--fix refuses an axis, an unknown or repeated parameter, a non-number and a value the scan does not hold, all at once', () => {
    const view = LedgerView.open(gridDb());
    try {
      let caught: unknown;
      try {
        planeImage(view, gridDb(), { x: 'm_chi', y: 'm_med', fix: ['m_chi=100', 'colour=red', 'g_q=abc', 'mediator=tensor', 'g_chi=1', 'g_chi=2', 'nothing'] });
      } catch (err) {
        caught = err;
      }
      expect(caught).toBeInstanceOf(InvalidInputError);
      const issues = (caught as InvalidInputError).issues;
      expect(issues.every((i) => i.path === '--fix')).toBe(true);
      expect(issues.map((i) => i.code)).toEqual(['fixed_axis', 'bad_assignment', 'type', 'not_in_scan', 'repeated', 'bad_assignment']);
      expect(issues.find((i) => i.code === 'not_in_scan')?.allowed).toBe('vector');
    } finally {
      view.close();
    }
  });

  it('keeps the grid cells of survivors with --survivors-only', () => {
    const out = path.join(dir, 'grid-surv.svg');
    writePlot({ db: gridDb(), out, x: 'm_chi', y: 'm_med', color: 'omega_h2', survivorsOnly: true });
    const survivors = grid.filter((_, id) => CONSTRAINTS.every((c) => survivesGrid(grid)(c, id))).length;
    expect(parseSvg(out).querySelectorAll('[aria-description="cells"] rect')).toHaveLength(survivors);
  });
});

describe('scatter planes', () => {
  it('draws every point, survivors as circles and excluded as crosses, and counts omitted NULLs', () => {
    const out = path.join(dir, 'cloud.svg');
    const result = writePlot({ db: scatterDb(), out, x: 'm_chi', y: 'sigma_si_p_cm2', color: 'omega_h2', set: 'default' });
    expect(result).toMatchObject({ mode: 'scatter', drawnPoints: 497, omittedPoints: 3 });
    const doc = parseSvg(out);
    let survivors = 0;
    for (let id = 3; id < 500; id++) if (id % 3 !== 0 && id % 5 !== 0) survivors++;
    expect(doc.querySelectorAll('[aria-description="survivors"] circle')).toHaveLength(survivors);
    expect(doc.querySelectorAll('[aria-description="excluded"] path')).toHaveLength(497 - survivors);
    expect(text(doc, 'y label')).toBe('σSI,p [cm²]');
    expect(text(doc, 'status key')).toContain('excluded');
  });

  it('chooses linear for a coupling within one decade and log when forced', () => {
    const view = LedgerView.open(scatterDb());
    try {
      const auto = planeImage(view, scatterDb(), { x: 'm_chi', y: 'g_chi', set: 'tight' });
      expect([auto.data.x.type, auto.data.y.type]).toEqual(['log', 'linear']);
      const forced = planeImage(view, scatterDb(), { x: 'm_chi', y: 'g_chi', set: 'tight', xScale: 'linear', yScale: 'log' });
      expect([forced.data.x.type, forced.data.y.type]).toEqual(['linear', 'log']);
    } finally {
      view.close();
    }
  });

  it('draws a limit curve of an unjudged spec with its label in the matching plane only', () => {
    const file = path.join(dir, 'unjudged.db');
    const db = createContractLedger(file, { spec: { constraints: [
      { kind: 'limit_curve', name: 'invented_limit_a', observable: 'sigma_si_p_cm2', versus: 'm_chi', file: 'invented-limit.csv', outOfRange: 'pass' },
      { kind: 'limit_curve', name: 'missing_curve', observable: 'sigma_si_p_cm2', versus: 'm_chi', file: 'nowhere.csv', outOfRange: 'pass' },
    ] } });
    insertPoints(db, grid);
    db.close();
    const view = LedgerView.open(file);
    try {
      const matching = planeImage(view, file, { x: 'm_chi', y: 'sigma_si_p_cm2' });
      const doc = parseSvgText(matching.svg);
      expect(doc.querySelector('[aria-description="curve invented_limit_a"] path')).not.toBeNull();
      expect(doc.querySelector('[aria-description="curve label invented_limit_a"]')?.textContent).toBe('invented_limit_a');
      expect(matching.notes.join(' ')).toContain("limit curve 'missing_curve' not drawn: nowhere.csv not found");
      const other = planeImage(view, file, { x: 'm_chi', y: 'omega_h2' });
      expect(other.svg).not.toContain('invented_limit_a');
    } finally {
      view.close();
    }
  });
});

/** The grid with synthetic SD cross sections rising with m_chi (mechanics only, not physics). */
const withSdColumns = (rows: readonly Row[]): Row[] =>
  rows.map((r) => ({ ...r, sigma_sd_p_cm2: 1e-41 * (r.m_chi! / 100), sigma_sd_n_cm2: 3e-41 * (r.m_chi! / 100) }));

describe('curves whose verdict is not "below the line passes"', () => {
  it('draws an sd_limit_pair as its proton and neutron curves, with notes for the sum rule and a target-element SI curve', () => {
    const file = path.join(dir, 'sd-pair.db');
    // invented curves for the mechanics, not published limits
    fs.writeFileSync(path.join(dir, 'invented-sd-p.csv'), '# invented SD proton curve\nm_chi [GeV], sigma_sd_p [cm^2]\n10, 1e-40\n1000, 1e-39\n');
    fs.writeFileSync(path.join(dir, 'invented-sd-n.csv'), '# invented SD neutron curve\nm_chi [GeV], sigma_sd_n [cm^2]\n10, 2e-41\n1000, 2e-40\n');
    const db = createContractLedger(file, { spec: { constraints: [
      { kind: 'sd_limit_pair', name: 'invented_sd', proton: 'invented-sd-p.csv', neutron: 'invented-sd-n.csv', outOfRange: 'pass', target: 'Xe' },
      { kind: 'limit_curve', name: 'invented_on_xe', observable: 'sigma_si_p_cm2', versus: 'm_chi', file: 'invented-limit.csv', outOfRange: 'pass', target: 'Xe' },
    ] } });
    insertPoints(db, withSdColumns(grid));
    db.close();
    const view = LedgerView.open(file);
    try {
      const proton = planeImage(view, file, { x: 'm_chi', y: 'sigma_sd_p_cm2' });
      const pDoc = parseSvgText(proton.svg);
      expect(pDoc.querySelector('[aria-description="curve invented_sd (proton)"] path')).not.toBeNull();
      expect(proton.svg).not.toContain('invented_sd (neutron)');
      expect(proton.notes.join(' ')).toMatch(/'invented_sd' judges proton and neutron together by the SD sum rule on Xe/);
      const neutron = planeImage(view, file, { x: 'm_chi', y: 'sigma_sd_n_cm2' });
      expect(parseSvgText(neutron.svg).querySelector('[aria-description="curve invented_sd (neutron)"] path')).not.toBeNull();
      expect(neutron.svg).not.toContain('invented_sd (proton)');
      const si = planeImage(view, file, { x: 'm_chi', y: 'sigma_si_p_cm2' });
      expect(parseSvgText(si.svg).querySelector('[aria-description="curve invented_on_xe"] path')).not.toBeNull();
      expect(si.notes.join(' ')).toMatch(/'invented_on_xe' was measured on Xe: its verdicts compare the point's isospin-corrected cross section/);
      expect(si.notes.join(' ')).not.toMatch(/sum rule/);
      // a plane with no such curve says nothing about them
      expect(planeImage(view, file, { x: 'm_chi', y: 'omega_h2' }).notes.join(' ')).not.toMatch(/invented_/);
    } finally {
      view.close();
    }
  });
});

describe('ledgers judged by the constraints module', () => {
  it('shows the most recently judged set and draws the limit curve it was judged against', () => {
    const file = path.join(dir, 'judged.db');
    const csv = path.join(dir, 'judged-limit.csv');
    fs.writeFileSync(csv, '# invented limit curve for tests\nm_chi [GeV], sigma_si_p [cm^2]\n10, 3e-45\n1000, 3e-45\n');
    createContractLedger(file, { constraints: [] }).close();
    const db = new Database(file);
    insertPoints(db, grid);
    const constraints = constraintsSchema.parse([
      { kind: 'relic', name: 'relic' },
      { kind: 'limit_curve', name: 'invented_flat', observable: 'sigma_si_p_cm2', versus: 'm_chi', file: csv, outOfRange: 'fail' },
    ]);
    const ctx = { parameters: ['m_chi', 'm_med', 'g_chi', 'g_q'], observables: ['omega_h2', 'sigma_si_p_cm2', 'sigv0_cm3s'], rhoLocalGeVcm3: 0.3, baseDir: dir };
    const { compiled, issues } = compileConstraints(constraints, ctx);
    expect(issues).toEqual([]);
    const summary = judgeScan(db, 1, 'invented', compiled!);
    db.close();
    fs.rmSync(csv); // the picture must use the judged definition, not the file
    const view = LedgerView.open(file);
    try {
      const image = planeImage(view, file, { x: 'm_chi', y: 'sigma_si_p_cm2' });
      expect(image.notes[0]).toContain(`${summary.survivors} survive constraint set 'invented'`);
      const doc = parseSvgText(image.svg);
      expect(doc.querySelectorAll('[aria-description="survivors"] circle')).toHaveLength(summary.survivors);
      expect(doc.querySelector('[aria-description="curve invented_flat"] path')).not.toBeNull();
    } finally {
      view.close();
    }
  });
});

describe('judged sd_limit_pair', () => {
  it('draws both curves from the judged definition, and no sum-rule note for combine "separate"', () => {
    const file = path.join(dir, 'sd-judged.db');
    const pCsv = path.join(dir, 'judged-sd-p.csv');
    const nCsv = path.join(dir, 'judged-sd-n.csv');
    // invented curves for the mechanics, not published limits
    fs.writeFileSync(pCsv, '# invented\nm_chi [GeV], sigma_sd_p [cm^2]\n10, 1e-40\n1000, 1e-39\n');
    fs.writeFileSync(nCsv, '# invented\nm_chi [GeV], sigma_sd_n [cm^2]\n10, 2e-41\n1000, 2e-40\n');
    createContractLedger(file, { constraints: [] }).close();
    const db = new Database(file);
    insertPoints(db, withSdColumns(grid));
    const constraints = constraintsSchema.parse([
      { kind: 'sd_limit_pair', name: 'invented_pair', proton: pCsv, neutron: nCsv, outOfRange: 'pass', combine: 'separate' },
    ]);
    const ctx = { parameters: ['m_chi', 'm_med', 'g_chi', 'g_q'], observables: ['omega_h2', 'sigma_sd_p_cm2', 'sigma_sd_n_cm2'], rhoLocalGeVcm3: 0.3, baseDir: dir };
    const { compiled, issues } = compileConstraints(constraints, ctx);
    expect(issues).toEqual([]);
    judgeScan(db, 1, 'invented_sd', compiled!);
    db.close();
    fs.rmSync(pCsv);
    fs.rmSync(nCsv); // the picture must use the judged definition, not the files
    const view = LedgerView.open(file);
    try {
      for (const [y, side] of [['sigma_sd_p_cm2', 'proton'], ['sigma_sd_n_cm2', 'neutron']] as const) {
        const image = planeImage(view, file, { x: 'm_chi', y });
        expect(parseSvgText(image.svg).querySelector(`[aria-description="curve invented_pair (${side})"] path`), y).not.toBeNull();
        expect(image.notes.join(' ')).not.toMatch(/sum rule|not drawn/);
      }
    } finally {
      view.close();
    }
  });
});

describe('large ledgers', () => {
  it('bins more points than the scatter limit in SQL and draws one rect per occupied bin', () => {
    const view = LedgerView.open(bigDb());
    try {
      const image = planeImage(view, bigDb(), { x: 'm_chi', y: 'sigma_si_p_cm2', color: 'omega_h2' });
      expect(image.data.mode).toBe('binned');
      expect(image.data.cells.reduce((s, c) => s + c.n, 0)).toBe(SCATTER_MAX_POINTS + 5000);
      expect(image.data.cells.reduce((s, c) => s + c.nSurvive, 0)).toBe((SCATTER_MAX_POINTS + 5000) * 3 / 4);
      const doc = parseSvgText(image.svg);
      expect(doc.querySelectorAll('[aria-description="cells"] rect')).toHaveLength(image.data.cells.length);
    } finally {
      view.close();
    }
  });
});

describe('a ledger being written', () => {
  it('plots the committed points while a writer holds an open transaction', () => {
    const file = path.join(dir, 'live.db');
    const setup = createContractLedger(file);
    insertPoints(setup, grid.slice(0, 300));
    setup.close();
    const writer = new Database(file);
    writer.pragma('journal_mode = WAL');
    writer.exec('BEGIN IMMEDIATE');
    writer.prepare('INSERT INTO points (scan_id, point_id, m_chi, m_med) VALUES (1, 100000, 50, 50)').run();
    try {
      const out = path.join(dir, 'live.svg');
      const result = writePlot({ db: file, out, x: 'm_chi', y: 'sigma_si_p_cm2' });
      expect(result.drawnPoints).toBe(300);
    } finally {
      writer.exec('ROLLBACK');
      writer.close();
    }
  });
});

describe('PNG output', () => {
  it('renders at two pixels per SVG unit', () => {
    const out = path.join(dir, 'grid.png');
    writePlot({ db: gridDb(), out, x: 'm_chi', y: 'm_med', color: 'omega_h2' });
    expect(pngSize(out)).toEqual({ width: 1440, height: 1080 });
    const small = path.join(dir, 'small.png');
    writePlot({ db: gridDb(), out: small, x: 'm_chi', y: 'sigma_si_p_cm2', width: 400, height: 300 });
    expect(pngSize(small)).toEqual({ width: 800, height: 600 });
  });
});

describe('bad input', () => {
  const expectIssues = (fn: () => unknown, paths: string[]): void => {
    try {
      fn();
    } catch (err) {
      expect(err).toBeInstanceOf(InvalidInputError);
      expect((err as InvalidInputError).issues.map((i) => i.path)).toEqual(paths);
      return;
    }
    throw new Error(`expected InvalidInputError at ${paths.join(', ')}`);
  };

  it('reports unknown columns, sets, scans, scales and extensions, and writes nothing', () => {
    const out = path.join(dir, 'never.svg');
    expectIssues(() => writePlot({ db: gridDb(), out, x: 'm_chi', y: 'nope', color: 'flags' }), ['--y', '--color']);
    expectIssues(() => writePlot({ db: scatterDb(), out, x: 'm_chi', y: 'g_chi' }), ['--set']);
    expectIssues(() => writePlot({ db: scatterDb(), out, x: 'm_chi', y: 'g_chi', set: 'loose' }), ['--set']);
    expectIssues(() => writePlot({ db: gridDb(), out, x: 'm_chi', y: 'm_med', scan: '7' }), ['--scan']);
    expectIssues(() => writePlot({ db: gridDb(), out, x: 'm_chi', y: 'm_med', xScale: 'cubic' as never }), ['--x-scale']);
    expectIssues(() => writePlot({ db: gridDb(), out: path.join(dir, 'never.pdf'), x: 'm_chi', y: 'm_med' }), ['--out']);
    expectIssues(() => writePlot({ db: path.join(dir, 'absent.db'), out, x: 'm_chi', y: 'm_med' }), ['DB']);
    expect(fs.readdirSync(dir).filter((f) => f.startsWith('never'))).toEqual([]);
  });

  it('lists the allowed columns in the message', () => {
    try {
      writePlot({ db: gridDb(), out: path.join(dir, 'never.svg'), x: 'mchi', y: 'm_med' });
    } catch (err) {
      const issue = (err as InvalidInputError).issues[0];
      expect(issue?.seen).toBe('mchi');
      expect(issue?.allowed).toContain('m_chi');
      expect(issue?.allowed).not.toContain('flags');
      return;
    }
    throw new Error('expected an error');
  });
});
