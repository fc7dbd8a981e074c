/**
 * A read-only view of a scan ledger for pictures and reports, in the ledger contract shape
 * (scans, points, verdicts; see the project design), on the ledger module's read-only connection
 * so that a plot taken while a scan runs never blocks or alters the writer. Name checks return
 * Issues, so a wrong column or constraint set is reported with what exists.
 */
import fs from 'node:fs';
import type Database from 'better-sqlite3';
import { LedgerReader, quoteId } from '../ledger.js';
import { InvalidInputError, type Issue } from '../../physics/issue.js';
import { listSets } from '../constraints/judge.js';

export interface ScanRow {
  readonly id: number;
  readonly name: string;
  readonly spec_json: string;
  readonly spec_hash: string;
  readonly code_version: string;
  readonly created_at: string;
  readonly status: string;
  /** any further provenance columns the ledger writer stores (constants edition, knobs...) */
  readonly [extra: string]: unknown;
}

/** Columns of `points` that are bookkeeping rather than quantities. */
const POINT_KEYS = new Set(['scan_id', 'point_id']);
/** Columns of `verdicts` that are not constraint outcomes. */
const VERDICT_KEYS = new Set(['scan_id', 'constraint_set', 'point_id', 'survives']);

export class LedgerView {
  readonly db: Database.Database;
  private readonly reader: LedgerReader;

  private constructor(reader: LedgerReader) {
    this.reader = reader;
    this.db = reader.connection;
  }

  /**
   * Opens a ledger read-only through the ledger module's reader (WAL snapshot, busy timeout, so a
   * picture can be taken while a scan runs); a missing or non-ledger file is bad input naming `path`.
   */
  static open(file: string, path = 'DB'): LedgerView {
    if (!fs.existsSync(file)) {
      throw new InvalidInputError([{ code: 'missing_file', path, message: `ledger file not found: ${file}`, seen: file }]);
    }
    let reader: LedgerReader | undefined;
    try {
      reader = LedgerReader.openReadonly(file);
      reader.connection.prepare('SELECT 1 FROM scans LIMIT 1').get();
    } catch (err) {
      reader?.close();
      throw new InvalidInputError([{
        code: 'not_a_ledger', path, seen: file,
        message: `not a darksieve ledger (no readable scans table): ${(err as Error).message}`,
      }]);
    }
    return new LedgerView(reader);
  }

  /** Closes the connection; a second call does nothing. */
  close(): void {
    this.reader.close();
  }

  scans(): ScanRow[] {
    return this.db.prepare('SELECT * FROM scans ORDER BY id').all() as ScanRow[];
  }

  /**
   * The scan `ref` (its id or its name), or the only scan when no ref is given; several scans and
   * no ref is ambiguous and reported with the choices (as the judge and survivors commands do).
   */
  scan(ref: string | undefined, path = '--scan'): ScanRow {
    const all = this.scans();
    const list = all.map((s) => `${s.id} (${s.name})`).join(', ');
    if (all.length === 0) throw new InvalidInputError([{ code: 'empty_ledger', path: 'DB', message: 'the ledger holds no scan' }]);
    if (ref === undefined) {
      if (all.length === 1) return all[0] as ScanRow;
      throw new InvalidInputError([{ code: 'scan_required', path, message: 'the ledger holds several scans; name one with --scan', allowed: list }]);
    }
    const found = all.find((s) => String(s.id) === ref) ?? all.find((s) => s.name === ref);
    if (!found) {
      throw new InvalidInputError([{ code: 'unknown_scan', path, message: `no scan '${ref}' in this ledger`, seen: ref, allowed: list }]);
    }
    return found;
  }

  /** Quantity columns of `points` (parameters and observables) with their declared SQL type. */
  pointColumns(): { name: string; type: string }[] {
    const cols = this.db.prepare("SELECT name, type FROM pragma_table_info('points')").all() as { name: string; type: string }[];
    return cols.filter((c) => !POINT_KEYS.has(c.name));
  }

  /** Columns that hold numbers (text columns such as dm, mediator and flags are left out). */
  numericColumns(scanId: number): string[] {
    return this.pointColumns()
      .filter((c) => {
        if (/INT|REAL|NUM|FLOA|DOUB/i.test(c.type)) return true;
        if (c.type !== '') return false;
        const row = this.db.prepare(`SELECT typeof(${quoteId(c.name)}) AS t FROM points WHERE scan_id = ? AND ${quoteId(c.name)} IS NOT NULL LIMIT 1`).get(scanId) as { t: string } | undefined;
        return row !== undefined && (row.t === 'real' || row.t === 'integer');
      })
      .map((c) => c.name);
  }

  hasVerdicts(): boolean {
    return this.db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = 'verdicts'").get() !== undefined;
  }

  /**
   * Constraint sets with verdicts for the scan, most recently judged first where the judge's
   * `constraint_sets` table says when (scheduler/constraints/judge.ts), else in verdict order.
   */
  constraintSets(scanId: number): string[] {
    if (!this.hasVerdicts()) return [];
    const withVerdicts = (this.db.prepare('SELECT DISTINCT constraint_set AS s FROM verdicts WHERE scan_id = ?').all(scanId) as { s: string }[]).map((r) => r.s);
    const judged = listSets(this.db, scanId).filter((s) => withVerdicts.includes(s));
    return [...judged, ...withVerdicts.filter((s) => !judged.includes(s))];
  }

  /** Constraint outcome columns of `verdicts` holding values for this set (other sets' columns are NULL). */
  constraintColumns(scanId: number, set: string): string[] {
    const cols = (this.db.prepare("SELECT name FROM pragma_table_info('verdicts')").all() as { name: string }[])
      .map((c) => c.name).filter((n) => !VERDICT_KEYS.has(n));
    return cols.filter((c) => this.db.prepare(`SELECT 1 FROM verdicts WHERE scan_id = ? AND constraint_set = ? AND ${quoteId(c)} IS NOT NULL LIMIT 1`).get(scanId, set) !== undefined);
  }

  /**
   * The constraint set to show: the named one, else the most recently judged one (as `survivors`
   * does), else the only one; null when the scan was never judged. Several sets and no way to
   * order them is ambiguous and reported with the choices.
   */
  resolveConstraintSet(scanId: number, name: string | undefined, path = '--set'): string | null {
    const sets = this.constraintSets(scanId);
    if (name !== undefined) {
      if (!sets.includes(name)) {
        throw new InvalidInputError([{
          code: 'unknown_constraint_set', path, message: `no verdicts for constraint set '${name}' in scan ${scanId}`,
          seen: name, allowed: sets.length ? sets.join(', ') : '(the scan has not been judged)',
        }]);
      }
      return name;
    }
    if (sets.length === 0) return null;
    if (sets.length === 1 || listSets(this.db, scanId).includes(sets[0] as string)) return sets[0] as string;
    throw new InvalidInputError([{
      code: 'ambiguous_constraint_set', path, message: 'the scan was judged against several constraint sets: choose one with --set',
      allowed: sets.join(', '),
    }]);
  }

  /** Issues for names that are not numeric point columns of this scan. */
  checkColumns(scanId: number, wanted: readonly { path: string; name: string }[]): Issue[] {
    const numeric = this.numericColumns(scanId);
    return wanted
      .filter((w) => !numeric.includes(w.name))
      .map((w) => ({
        code: 'unknown_column', path: w.path, message: `'${w.name}' is not a numeric parameter or observable of this scan`,
        seen: w.name, allowed: numeric.join(', '),
      }));
  }
}
