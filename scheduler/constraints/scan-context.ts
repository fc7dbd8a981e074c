/**
 * Reading a scan back from a ledger for judging and queries: which scan (`--scan ID|NAME`, or the
 * only one), its resolved spec, and the numeric columns its points carry.
 */
import { existsSync } from 'node:fs';
import Database from 'better-sqlite3';
import { InvalidInputError } from '../../physics/issue.js';
import { PARAMETERS } from '../../physics/model.js';
import { numericObservableNames } from '../../physics/observables.js';
import { specFromResolvedJson, type ScanSpec } from '../spec.js';
import type { ConstraintContext } from './compile.js';

/** Opens an existing ledger (never creates one: a mistyped path is bad input, exit 2). */
export function openLedger(file: string, readonly: boolean): Database.Database {
  if (!existsSync(file)) {
    throw new InvalidInputError([{ code: 'missing_file', path: 'DB', message: `ledger file ${file} does not exist`, seen: file, allowed: 'a ledger written by darksieve run' }]);
  }
  const db = new Database(file, { readonly, fileMustExist: true });
  db.pragma('busy_timeout = 5000');
  return db;
}

export interface StoredScan {
  readonly id: number;
  readonly name: string;
  readonly status: string;
  readonly spec: ScanSpec;
}

/** Opens the scan `ref` (its id or name), or the only scan of the ledger when `ref` is absent. */
export function findScan(db: Database.Database, ref?: string): StoredScan {
  const hasScans = db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = 'scans'").get();
  if (!hasScans) {
    throw new InvalidInputError([{ code: 'not_a_ledger', path: 'DB', message: 'this file has no scans table; is it a darksieve ledger?', allowed: 'a ledger written by darksieve run' }]);
  }
  const rows = db.prepare('SELECT id, name, status, spec_json FROM scans ORDER BY id').all() as { id: number; name: string; status: string; spec_json: string }[];
  const list = rows.map((r) => `${r.id} (${r.name})`).join(', ') || '(none)';
  let row: (typeof rows)[number] | undefined;
  if (ref === undefined) {
    if (rows.length !== 1) {
      throw new InvalidInputError([{ code: rows.length === 0 ? 'no_scan' : 'scan_required', path: '--scan', message: rows.length === 0 ? 'the ledger holds no scan' : 'the ledger holds several scans; name one with --scan', allowed: list }]);
    }
    row = rows[0];
  } else {
    row = rows.find((r) => String(r.id) === ref) ?? rows.find((r) => r.name === ref);
    if (!row) throw new InvalidInputError([{ code: 'unknown_scan', path: '--scan', message: `no scan '${ref}' in the ledger`, seen: ref, allowed: list }]);
  }
  return { id: row!.id, name: row!.name, status: row!.status, spec: specFromResolvedJson(row!.spec_json) };
}

/** Columns of the points table. */
export function pointColumns(db: Database.Database): string[] {
  return db.prepare('SELECT name FROM pragma_table_info(?)').pluck().all('points') as string[];
}

/** The numeric parameter and observable columns of a stored scan, and its local density. */
export function contextFromLedger(db: Database.Database, scan: StoredScan, baseDir: string): ConstraintContext {
  const columns = new Set(pointColumns(db));
  const setup = scan.spec.setup;
  return {
    parameters: PARAMETERS.filter((p) => p.kind === 'number' && columns.has(p.name)).map((p) => p.name),
    observables: numericObservableNames(setup.detectors.map((d) => d.name), setup.targets.map((t) => t.name)).filter((o) => columns.has(o)),
    rhoLocalGeVcm3: setup.halo.local.rhoLocalGeVcm3,
    baseDir,
    hadronic: setup.hadronic,
  };
}

/**
 * The point columns that belong to a scan, in ledger order: a ledger holding several scans has the
 * observable columns of all of them, NULL for the others. `numeric` are those an expression can read.
 */
export function scanColumns(db: Database.Database, scan: StoredScan): { all: string[]; numeric: string[] } {
  const ctx = contextFromLedger(db, scan, '.');
  const numeric = new Set(['point_id', ...ctx.parameters, ...ctx.observables]);
  const text = new Set(['dm', 'mediator', 'flags']);
  const all = pointColumns(db).filter((c) => numeric.has(c) || text.has(c));
  return { all, numeric: all.filter((c) => numeric.has(c)) };
}

/** The context for a scan about to run from its spec (the run's own judging). */
export function contextFromSpec(spec: ScanSpec, baseDir: string): ConstraintContext {
  const setup = spec.setup;
  return {
    parameters: PARAMETERS.filter((p) => p.kind === 'number').map((p) => p.name),
    observables: numericObservableNames(setup.detectors.map((d) => d.name), setup.targets.map((t) => t.name)),
    rhoLocalGeVcm3: setup.halo.local.rhoLocalGeVcm3,
    baseDir,
    hadronic: setup.hadronic,
  };
}
