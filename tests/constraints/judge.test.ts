/**
 * The judge on ledgers in the contract shape: verdicts equal an independent recomputation of the
 * cuts from the fixture's formulas, judging is idempotent and batch-size independent, sets live side
 * by side, and a set name is never silently reused for different constraints.
 * Event limit: Poisson 90% CL, n = 3, b = 1 -> 6.681 - 1 = 5.681 events (direct.md §5.3, computed
 * there with scipy).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { createHash } from 'node:crypto';
import { tmpdir } from 'node:os';
import path from 'node:path';
import Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { InvalidInputError } from '../../physics/issue.js';
import { compileConstraints } from '../../scheduler/constraints/compile.js';
import { judgeScan, listSets, readSummary } from '../../scheduler/constraints/judge.js';
import { contextFromLedger, findScan } from '../../scheduler/constraints/scan-context.js';
import { constraintsSchema, type ConstraintInput } from '../../scheduler/constraints/schema.js';
import { fixturePoint, writeFixtureLedger } from './ledger-fixture.js';

const N = 3000;
const dir = mkdtempSync(path.join(tmpdir(), 'darksieve-judge-'));
const file = path.join(dir, 'ledger.db');
let db: Database.Database;
let scanId: number;

beforeAll(() => {
  scanId = writeFixtureLedger(file, N);
  db = new Database(file);
});
afterAll(() => {
  db?.close();
  rmSync(dir, { recursive: true, force: true });
});

const SET_A: ConstraintInput[] = [
  { kind: 'relic', name: 'relic' },
  { kind: 'expression', name: 'si_cut', expr: 'sigma_si_p_cm2 < 1e-46 * (m_chi / 100)' },
  { kind: 'events_limit', name: 'toyxe', detector: 'toyxe', observed: 3, background: 1 },
  { kind: 'flux_limit', name: 'gc', target: 'gc', maxCm2s: 3e-11 },
];

/** The same cuts written out by hand on the fixture formulas (no darksieve code involved). */
function expectedA(id: number): number[] {
  const p = fixturePoint(id, N);
  const relic = p.omega_h2 !== null && p.omega_h2 <= 0.122 ? 1 : 0;
  const si = p.sigma_si_p_cm2 < 1e-46 * (p.m_chi / 100) ? 1 : 0;
  const ev = p.events_toyxe <= 5.681 ? 1 : 0;
  const gc = p.flux_gc_cm2s <= 3e-11 ? 1 : 0;
  return [relic, si, ev, gc];
}

function compile(list: ConstraintInput[]) {
  const scan = findScan(db);
  const { compiled, issues } = compileConstraints(constraintsSchema.parse(list), contextFromLedger(db, scan, dir));
  expect(issues).toEqual([]);
  return compiled!;
}

/** Hash of set a's verdict columns (other sets add columns that are NULL in a's rows). */
function tableHash(set: string): string {
  const rows = db.prepare('SELECT point_id, survives, relic, si_cut, toyxe, gc FROM verdicts WHERE scan_id = ? AND constraint_set = ? ORDER BY point_id').raw(true).all(scanId, set);
  return createHash('sha256').update(JSON.stringify(rows)).digest('hex');
}

describe('judgeScan', () => {
  it('writes one verdict row per point equal to the hand-written cuts', () => {
    const summary = judgeScan(db, scanId, 'a', compile(SET_A));
    const rows = db.prepare('SELECT point_id, relic, si_cut, toyxe, gc, survives FROM verdicts WHERE scan_id = ? AND constraint_set = ? ORDER BY point_id').raw(true).all(scanId, 'a') as number[][];
    expect(rows.length).toBe(N);
    let survivors = 0;
    for (const r of rows) {
      const want = expectedA(r[0]!);
      const survives = want.every((v) => v === 1) ? 1 : 0;
      survivors += survives;
      expect(r.slice(1), `point ${r[0]}`).toEqual([...want, survives]);
    }
    expect(summary.points).toBe(N);
    expect(summary.survivors).toBe(survivors);
    expect(survivors).toBeGreaterThan(0);
    expect(survivors).toBeLessThan(N);
  });

  it('the summary counts failures and points removed by one constraint alone', () => {
    const s = readSummary(db, scanId, 'a')!;
    const all = Array.from({ length: N }, (_, id) => expectedA(id));
    s.constraints.forEach((c, k) => {
      expect(c.failed, c.name).toBe(all.filter((v) => v[k] === 0).length);
      expect(c.onlyThis, c.name).toBe(all.filter((v) => v[k] === 0 && v.filter((x) => x === 0).length === 1).length);
    });
  });

  it('points with a missing relic abundance (NULL) fail the relic constraint', () => {
    const nullIds = db.prepare('SELECT point_id FROM points WHERE omega_h2 IS NULL').pluck().all() as number[];
    expect(nullIds.length).toBeGreaterThan(0);
    const bad = db.prepare(`SELECT count(*) FROM verdicts WHERE constraint_set = 'a' AND relic = 1 AND point_id IN (${nullIds.join(',')})`).pluck().get();
    expect(bad).toBe(0);
  });

  it('is idempotent and independent of the batch size', () => {
    const before = tableHash('a');
    judgeScan(db, scanId, 'a', compile(SET_A));
    expect(tableHash('a')).toBe(before);
    judgeScan(db, scanId, 'a', compile(SET_A), 7);
    expect(tableHash('a')).toBe(before);
    expect(db.prepare("SELECT count(*) FROM verdicts WHERE constraint_set = 'a'").pluck().get()).toBe(N);
  });

  it('a new set lives beside the old one and leaves it untouched', () => {
    const before = tableHash('a');
    const setB: ConstraintInput[] = [{ kind: 'relic', name: 'relic', bound: 'band', nSigma: 1000 }, { kind: 'expression', expr: 'm_chi > 100' }];
    const s = judgeScan(db, scanId, 'b', compile(setB));
    expect(tableHash('a')).toBe(before);
    const expectedB = Array.from({ length: N }, (_, id) => {
      const p = fixturePoint(id, N);
      return p.omega_h2 !== null && Math.abs(p.omega_h2 - 0.12) <= 1 && p.m_chi > 100;
    });
    expect(s.survivors).toBe(expectedB.filter(Boolean).length);
    // set b has no si_cut: that column is NULL in its rows
    expect(db.prepare("SELECT count(*) FROM verdicts WHERE constraint_set = 'b' AND si_cut IS NOT NULL").pluck().get()).toBe(0);
    expect(listSets(db, scanId).sort()).toEqual(['a', 'b']);
  });

  it('refuses a set name holding different constraints and writes nothing', () => {
    const before = tableHash('a');
    const other = compile([{ kind: 'relic', name: 'relic', max: 0.5 }]);
    expect(() => judgeScan(db, scanId, 'a', other)).toThrow(InvalidInputError);
    expect(tableHash('a')).toBe(before);
  });

  it('rescaling by the relic fraction applies to events', () => {
    const compiled = compile([{ kind: 'relic', rescale: true, max: 1e9 }, { kind: 'events_limit', name: 'ev', detector: 'toyxe', observed: 3, background: 1 }]);
    judgeScan(db, scanId, 'rescaled', compiled);
    const rows = db.prepare("SELECT point_id, ev FROM verdicts WHERE constraint_set = 'rescaled' ORDER BY point_id").raw(true).all() as number[][];
    for (const [id, ev] of rows) {
      const p = fixturePoint(id!, N);
      if (p.omega_h2 === null) {
        expect(ev, `point ${id}`).toBe(0);
        continue;
      }
      const xi = Math.min(1, p.omega_h2 / 0.12);
      const scaled = p.events_toyxe * xi;
      if (Math.abs(scaled - 5.681) < 0.001) continue; // too close to the 3-digit reference value
      expect(ev, `point ${id}: events ${p.events_toyxe} xi ${xi}`).toBe(scaled <= 5.681 ? 1 : 0);
    }
  });

  it('judges every stored point when ids are sparse (missing chunks, far-apart ids)', () => {
    const sparseFile = path.join(dir, 'sparse.db');
    const id = writeFixtureLedger(sparseFile, 500);
    const sparse = new Database(sparseFile);
    try {
      sparse.prepare('DELETE FROM points WHERE point_id BETWEEN 100 AND 199').run();
      sparse.prepare('UPDATE points SET point_id = point_id + 1e9 WHERE point_id >= 300').run();
      const scan = findScan(sparse);
      const { compiled } = compileConstraints(constraintsSchema.parse(SET_A), contextFromLedger(sparse, scan, dir));
      const s = judgeScan(sparse, id, 'a', compiled!, 64);
      expect(s.points).toBe(400);
      const joined = sparse.prepare("SELECT count(*) FROM points p JOIN verdicts v ON v.point_id = p.point_id AND v.constraint_set = 'a'").pluck().get();
      expect(joined).toBe(400);
      expect(sparse.prepare("SELECT count(*) FROM verdicts WHERE constraint_set = 'a'").pluck().get()).toBe(400);
    } finally {
      sparse.close();
    }
  });

  it('regression: scan_id was stored as REAL 1.0 (bound JS number in an untyped column); ids are integers', () => {
    const types = db.prepare('SELECT DISTINCT typeof(scan_id), typeof(point_id), typeof(survives), typeof(relic) FROM verdicts WHERE constraint_set = ?').raw(true).all('a');
    expect(types).toEqual([['integer', 'integer', 'integer', 'integer']]);
    expect(db.prepare('SELECT DISTINCT typeof(scan_id) FROM constraint_sets').pluck().all()).toEqual(['integer']);
  });
});
