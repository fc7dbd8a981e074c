/**
 * Test ledgers in the ledger contract shape (scans, chunks, points, verdicts), written with plain
 * SQL so the picture mechanics can be tested apart from the scan machinery. The numbers put into
 * them are synthetic fields chosen for the mechanics (known contour positions, known counts); they
 * are not physics results and are never presented as such.
 */
import Database from 'better-sqlite3';

export const PARAMETER_COLUMNS = ['m_chi', 'm_med', 'g_chi', 'g_q', 'g_l', 'width_med'] as const;
export const OBSERVABLE_COLUMNS = [
  'omega_h2', 'x_f', 'sigv_fo_cm3s', 'sigv0_cm3s', 'sigma_si_p_cm2', 'sigma_si_n_cm2',
  'sigma_sd_p_cm2', 'sigma_sd_n_cm2', 'width_med_gev',
] as const;
const NUMERIC = [...PARAMETER_COLUMNS, ...OBSERVABLE_COLUMNS];

export type Row = Partial<Record<(typeof NUMERIC)[number], number | null>> & { dm?: string; mediator?: string; flags?: string };

export interface LedgerInput {
  readonly name?: string;
  readonly spec?: unknown;
  /** constraint names (verdict columns) */
  readonly constraints?: readonly string[];
  readonly set?: string;
}

/** Creates the contract tables; returns the open database (caller closes it). */
export function createContractLedger(file: string, input: LedgerInput = {}): Database.Database {
  const db = new Database(file);
  db.pragma('journal_mode = WAL');
  const constraints = input.constraints ?? ['relic', 'direct'];
  db.exec(`
    CREATE TABLE scans (id INTEGER PRIMARY KEY, name TEXT NOT NULL, spec_json TEXT NOT NULL, spec_hash TEXT NOT NULL,
      code_version TEXT NOT NULL, created_at TEXT NOT NULL, status TEXT NOT NULL, constants_edition TEXT, knobs_json TEXT);
    CREATE TABLE chunks (scan_id INTEGER, chunk INTEGER, first_id INTEGER, n INTEGER, status TEXT, attempts INTEGER,
      finished_at TEXT, PRIMARY KEY (scan_id, chunk));
    CREATE TABLE points (scan_id INTEGER NOT NULL, point_id INTEGER NOT NULL, dm TEXT, mediator TEXT,
      ${NUMERIC.map((c) => `${c} REAL`).join(', ')}, flags TEXT, PRIMARY KEY (scan_id, point_id));
    CREATE TABLE verdicts (scan_id INTEGER NOT NULL, constraint_set TEXT NOT NULL, point_id INTEGER NOT NULL,
      ${constraints.map((c) => `"${c}" INTEGER, `).join('')}survives INTEGER NOT NULL,
      PRIMARY KEY (scan_id, constraint_set, point_id));
  `);
  db.prepare(`INSERT INTO scans (id, name, spec_json, spec_hash, code_version, created_at, status, constants_edition, knobs_json)
              VALUES (1, ?, ?, 'sha256:test', 'test-0', '2026-01-01T00:00:00Z', 'done', 'CODATA2018+PDG2024+Planck2018', '{"relicGridPoints":400}')`)
    .run(input.name ?? 'test scan', JSON.stringify(input.spec ?? { name: input.name ?? 'test scan', constraints: [] }));
  return db;
}

/** Inserts points (scan 1) with ids 0..n-1 in one transaction. */
export function insertPoints(db: Database.Database, rows: readonly Row[]): void {
  const cols = ['dm', 'mediator', ...NUMERIC, 'flags'];
  const stmt = db.prepare(`INSERT INTO points (scan_id, point_id, ${cols.join(', ')}) VALUES (1, ?, ${cols.map(() => '?').join(', ')})`);
  db.transaction(() => {
    rows.forEach((r, id) => {
      stmt.run(id, ...cols.map((c) => {
        const v = (r as Record<string, unknown>)[c];
        if (v === undefined) return c === 'dm' ? 'dirac' : c === 'mediator' ? 'vector' : c === 'flags' ? '' : null;
        return typeof v === 'number' && Number.isNaN(v) ? null : v;
      }));
    });
  })();
}

/** Inserts verdicts for scan 1: `pass[c](row, id)` decides constraint c; survives = all pass. */
export function insertVerdicts(
  db: Database.Database, set: string, constraints: readonly string[], count: number,
  pass: (constraint: string, id: number) => boolean,
): void {
  const stmt = db.prepare(`INSERT INTO verdicts (scan_id, constraint_set, point_id, ${constraints.map((c) => `"${c}"`).join(', ')}, survives)
                           VALUES (1, ?, ?, ${constraints.map(() => '?').join(', ')}, ?)`);
  db.transaction(() => {
    for (let id = 0; id < count; id++) {
      const outcome = constraints.map((c) => (pass(c, id) ? 1 : 0));
      stmt.run(set, id, ...outcome, outcome.every((o) => o === 1) ? 1 : 0);
    }
  })();
}
