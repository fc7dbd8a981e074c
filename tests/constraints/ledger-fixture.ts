/**
 * Test and bench ledgers in the contract shape of the design (scans, points, chunks tables with the
 * contract column names), written with plain SQL so the judge and queries can be tested without the
 * scan run. Observable values are invented, deterministic functions of the point id: they exercise
 * the constraint logic, they are not physics.
 */
import Database from 'better-sqlite3';
import { PARAMETERS } from '../../physics/model.js';
import { numericObservableNames } from '../../physics/observables.js';
import { parseSpec, resolvedSpecJson, specHash } from '../../scheduler/spec.js';

/** An invented scan spec: one fictional xenon-like detector and one galactic-centre target. */
export const FIXTURE_SPEC = {
  name: 'fixture',
  model: { mediator: 'vector', m_med: 1000 },
  axes: { m_chi: { from: 10, to: 2000, steps: 100, spacing: 'log' } },
  halo: { local: { rhoLocalGeVcm3: 0.4 } },
  detectors: [{ name: 'toyxe', target: 'Xe', windowKeV: [5, 40], efficiency: 0.5, exposureKgDay: 1000 }],
  targets: [{ name: 'gc', kind: 'galactic_centre', coneDeg: 1, energyGeV: [1, null] }],
};

export const DETECTORS = ['toyxe'];
export const TARGETS = ['gc'];

/** Observable values of fixture point `id` of `n` (invented; NULL every 97th point for omega_h2). */
export function fixturePoint(id: number, n: number) {
  const t = n > 1 ? id / (n - 1) : 0;
  const mChi = 10 * Math.pow(200, t);
  const omega: number | null = id % 97 === 13 ? null : 0.001 * Math.pow(1000, ((id * 7919) % 1000) / 1000);
  return {
    dm: 'dirac', mediator: 'vector', m_chi: mChi, m_med: 1000, g_chi: 1, g_q: 0.25, g_l: 0, width_med: null as number | null,
    omega_h2: omega,
    x_f: 20 + t,
    sigv_fo_cm3s: 3e-26,
    sigv0_cm3s: 2e-26 * (1 + ((id * 31) % 10) / 10),
    sigma_si_p_cm2: 1e-47 * Math.pow(100, ((id * 104729) % 1000) / 1000),
    sigma_si_n_cm2: 1e-47,
    sigma_sd_p_cm2: 0,
    sigma_sd_n_cm2: 0,
    width_med_gev: 10,
    events_toyxe: ((id * 13) % 100) / 10,
    flux_gc_cm2s: 1e-12 * (1 + ((id * 17) % 50)),
    flags: id % 5 === 0 ? 'velocity_suppressed_dd' : '',
  };
}

export const POINT_COLUMNS: readonly string[] = [
  'scan_id', 'point_id',
  ...PARAMETERS.map((p) => p.name),
  ...numericObservableNames(DETECTORS, TARGETS),
  'flags',
];

/** Creates (or adds to) a ledger file with one scan of `n` fixture points; returns the scan id. */
export function writeFixtureLedger(file: string, n: number, spec: object = FIXTURE_SPEC): number {
  const parsed = parseSpec(spec);
  if (!parsed.spec) throw new Error(`fixture spec invalid: ${JSON.stringify(parsed.issues)}`);
  const json = resolvedSpecJson(parsed.spec);
  const db = new Database(file);
  try {
    db.pragma('journal_mode = WAL');
    db.pragma('synchronous = NORMAL');
    db.exec(`CREATE TABLE IF NOT EXISTS scans (id INTEGER PRIMARY KEY, name TEXT NOT NULL, spec_json TEXT NOT NULL,
      spec_hash TEXT NOT NULL, code_version TEXT NOT NULL, created_at TEXT NOT NULL, status TEXT NOT NULL)`);
    db.exec(`CREATE TABLE IF NOT EXISTS chunks (scan_id INTEGER NOT NULL, chunk INTEGER NOT NULL, first_id INTEGER NOT NULL,
      n INTEGER NOT NULL, status TEXT NOT NULL, attempts INTEGER NOT NULL, finished_at TEXT, PRIMARY KEY (scan_id, chunk))`);
    const typed = POINT_COLUMNS.map((c) =>
      c === 'scan_id' || c === 'point_id' ? `${c} INTEGER NOT NULL` : ['dm', 'mediator', 'flags'].includes(c) ? `${c} TEXT` : `${c} REAL`);
    db.exec(`CREATE TABLE IF NOT EXISTS points (${typed.join(', ')}, PRIMARY KEY (scan_id, point_id)) WITHOUT ROWID`);
    const scanId = Number(db.prepare(`INSERT INTO scans (name, spec_json, spec_hash, code_version, created_at, status)
      VALUES (?, ?, ?, 'test', ?, 'done')`).run(parsed.spec.name, json, specHash(json), new Date().toISOString()).lastInsertRowid);
    const insert = db.prepare(`INSERT INTO points (${POINT_COLUMNS.join(', ')}) VALUES (${POINT_COLUMNS.map(() => '?').join(', ')})`);
    const chunk = db.prepare(`INSERT INTO chunks VALUES (?, ?, ?, ?, 'done', 1, ?)`);
    const batch = 10_000;
    const write = db.transaction((first: number, count: number) => {
      for (let id = first; id < first + count; id++) {
        const p = fixturePoint(id, n);
        insert.run(scanId, id, ...POINT_COLUMNS.slice(2).map((c) => (p as Record<string, unknown>)[c] ?? null));
      }
      chunk.run(scanId, first / batch, first, count, new Date().toISOString());
    });
    for (let first = 0; first < n; first += batch) write(first, Math.min(batch, n - first));
    return scanId;
  } finally {
    db.close();
  }
}
