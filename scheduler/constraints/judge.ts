/**
 * The judge: applies a compiled constraint set to the observables stored in a ledger and writes one
 * verdict row per point, without recomputing any physics.
 *
 * Tables (design contract `verdicts`, plus `constraint_sets` which records what each set was):
 *  - `verdicts(scan_id, constraint_set, point_id, survives, <one 0/1 column per constraint>)`,
 *    primary key (scan_id, constraint_set, point_id). Sets live side by side; a column of another
 *    set's constraint is NULL in this set's rows.
 *  - `constraint_sets(scan_id, name, definition_json, judged_at, points, survivors, summary_json)`:
 *    the resolved constraints (defaults filled in, curve tables inline) and the per-constraint counts
 *    of the last complete judging.
 *
 * Method: one INSERT ... SELECT per batch of point ids (one transaction each, so memory stays flat
 * for any scan size and a reader sees whole batches): SQLite passes each point's input columns to a
 * JS function that judges it and returns the verdicts as a bit mask, which SQL splits into columns.
 * Only the inputs cross into JS; this is about twice as fast as reading rows into JS and inserting
 * them one by one (tests/bench/constraints-bench.ts).
 * Judging is idempotent: rows are replaced, so re-running the same set (after a resumed run, or after
 * a crash half-way) gives the same table. A set name that already holds a different definition is
 * refused rather than silently mixed.
 */
import type { Database } from 'better-sqlite3';
import { InvalidInputError } from '../../physics/issue.js';
import { quoteId } from '../ledger.js';
import type { CompiledConstraints } from './compile.js';
import { MAX_CONSTRAINTS } from './schema.js';

/** Points judged per transaction: large enough that commits cost little, small enough to stay responsive. */
export const JUDGE_BATCH = 20_000;

/** SQL function registered on the connection while judging. */
const JUDGE_FUNCTION = 'darksieve_judge';

/** 2^k for each verdict bit. */
const BIT: readonly number[] = Array.from({ length: MAX_CONSTRAINTS }, (_, k) => 2 ** k);

export interface ConstraintCount {
  /** verdict column */
  readonly name: string;
  readonly kind: string;
  /** points failing this constraint */
  readonly failed: number;
  /** points failing only this constraint (it alone removed them) */
  readonly onlyThis: number;
}

export interface JudgeSummary {
  readonly scanId: number;
  readonly set: string;
  /** points judged (points stored for the scan) */
  readonly points: number;
  readonly survivors: number;
  readonly constraints: readonly ConstraintCount[];
  readonly judgedAt: string;
}


/** Creates the verdict tables if needed and adds a column for each constraint not seen before. */
function ensureVerdictTables(db: Database, columns: readonly string[]): void {
  db.exec(`CREATE TABLE IF NOT EXISTS verdicts (
    scan_id INTEGER NOT NULL, constraint_set TEXT NOT NULL, point_id INTEGER NOT NULL, survives INTEGER NOT NULL,
    PRIMARY KEY (scan_id, constraint_set, point_id)) WITHOUT ROWID`);
  db.exec(`CREATE TABLE IF NOT EXISTS constraint_sets (
    scan_id INTEGER NOT NULL, name TEXT NOT NULL, definition_json TEXT NOT NULL, judged_at TEXT,
    points INTEGER, survivors INTEGER, summary_json TEXT, PRIMARY KEY (scan_id, name))`);
  const existing = new Set((db.prepare('SELECT name FROM pragma_table_info(?)').pluck().all('verdicts') as string[]));
  for (const c of columns) {
    if (!existing.has(c)) db.exec(`ALTER TABLE verdicts ADD COLUMN ${quoteId(c)} INTEGER`);
  }
}

function definitionJson(compiled: CompiledConstraints): string {
  return JSON.stringify(compiled.definition);
}

/**
 * Refuses (exit 2) a set name that already holds a different definition for this scan. Read-only,
 * so commands can call it before writing anything.
 */
export function checkSetName(db: Database, scanId: number, set: string, compiled: CompiledConstraints): void {
  const hasTable = db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = 'constraint_sets'").get();
  if (!hasTable) return;
  const row = db.prepare('SELECT definition_json FROM constraint_sets WHERE scan_id = ? AND name = ?').get(scanId, set) as
    | { definition_json: string }
    | undefined;
  if (row && row.definition_json !== definitionJson(compiled)) {
    throw new InvalidInputError([{
      code: 'set_exists', path: 'set',
      message: `constraint set '${set}' already exists for scan ${scanId} with different constraints; choose another name with --set`,
      seen: set, allowed: 'a set name not used for this scan, or the same constraints as before',
    }]);
  }
}

/**
 * Judges every stored point of a scan against a compiled constraint set and stores the verdicts and
 * the summary under `set`. Returns the summary.
 */
export function judgeScan(db: Database, scanId: number, set: string, compiled: CompiledConstraints, batchSize = JUDGE_BATCH): JudgeSummary {
  checkSetName(db, scanId, set, compiled);
  const columns = compiled.columns;
  const nc = columns.length;
  db.transaction(() => {
    ensureVerdictTables(db, columns);
    db.prepare(`INSERT INTO constraint_sets (scan_id, name, definition_json) VALUES (?, ?, ?)
      ON CONFLICT (scan_id, name) DO NOTHING`).run(scanId, set, definitionJson(compiled));
  })();

  const inputs = compiled.inputs;
  const values = new Float64Array(inputs.length);
  const verdicts = new Uint8Array(nc);
  const failed = new Array<number>(nc).fill(0);
  const onlyThis = new Array<number>(nc).fill(0);
  let points = 0;
  let survivors = 0;
  // One call per point: reads the input columns, judges, counts, and returns the verdicts as a bit
  // mask (bit k = constraint k passed; exact in a double for up to MAX_CONSTRAINTS bits).
  db.function(JUDGE_FUNCTION, { varargs: true, deterministic: false }, (...args: unknown[]) => {
    for (let i = 0; i < args.length; i++) {
      const x = args[i];
      values[i] = typeof x === 'number' ? x : NaN;
    }
    const survives = compiled.judgePoint(values, verdicts);
    let mask = 0;
    let nFailed = 0;
    let lastFailed = -1;
    for (let k = 0; k < nc; k++) {
      if (verdicts[k] === 1) mask += BIT[k]!;
      else {
        failed[k]!++;
        nFailed++;
        lastFailed = k;
      }
    }
    if (nFailed === 1) onlyThis[lastFailed]!++;
    points++;
    if (survives) survivors++;
    return mask;
  });
  // The judged rows never cross into JS: SQLite feeds the function the input columns and splits its
  // mask into verdict columns. MATERIALIZED keeps the function to one call per point (a flattened
  // subquery would call it once per reference to its result).
  const allPassed = nc === 0 ? 0 : BIT[nc - 1]! * 2 - 1;
  const judgeBatch = db.prepare(`WITH judged AS MATERIALIZED (
      SELECT point_id, ${JUDGE_FUNCTION}(${inputs.map(quoteId).join(', ')}) AS mask FROM points
      WHERE scan_id = @scan AND point_id >= @lo AND point_id < @hi)
    INSERT OR REPLACE INTO verdicts (scan_id, constraint_set, point_id, survives${columns.map((c) => `, ${quoteId(c)}`).join('')})
    SELECT @scan, @set, point_id, mask = ${allPassed}${columns.map((_, k) => `, (mask >> ${k}) & 1`).join('')} FROM judged`);
  // Batch edges walk the stored ids (sparse when chunks are missing), batchSize points per batch.
  const edge = db.prepare('SELECT point_id FROM points WHERE scan_id = ? AND point_id >= ? ORDER BY point_id LIMIT 1 OFFSET ?').pluck();
  const runBatch = db.transaction((lo: number, hi: number) => judgeBatch.run({ scan: scanId, set, lo, hi }));
  let lo = edge.get(scanId, Number.MIN_SAFE_INTEGER, 0) as number | undefined;
  while (lo !== undefined) {
    const next = edge.get(scanId, lo, batchSize) as number | undefined;
    runBatch(lo, next ?? Number.MAX_SAFE_INTEGER);
    lo = next;
  }

  const judgedAt = new Date().toISOString();
  const summary: JudgeSummary = {
    scanId, set, points, survivors, judgedAt,
    constraints: columns.map((name, k) => ({ name, kind: compiled.definition[k]!.kind, failed: failed[k]!, onlyThis: onlyThis[k]! })),
  };
  db.prepare('UPDATE constraint_sets SET judged_at = ?, points = ?, survivors = ?, summary_json = ? WHERE scan_id = ? AND name = ?')
    .run(judgedAt, points, survivors, JSON.stringify(summary.constraints), scanId, set);
  return summary;
}

/** The stored summary of a set, or undefined when the set was never completely judged. */
export function readSummary(db: Database, scanId: number, set: string): JudgeSummary | undefined {
  const row = db.prepare('SELECT judged_at, points, survivors, summary_json FROM constraint_sets WHERE scan_id = ? AND name = ?').get(scanId, set) as
    | { judged_at: string | null; points: number; survivors: number; summary_json: string | null }
    | undefined;
  if (!row || row.judged_at === null || row.summary_json === null) return undefined;
  return { scanId, set, points: row.points, survivors: row.survivors, judgedAt: row.judged_at, constraints: JSON.parse(row.summary_json) as ConstraintCount[] };
}

/** Names of the judged sets of a scan, most recent first. */
export function listSets(db: Database, scanId: number): string[] {
  const hasTable = db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = 'constraint_sets'").get();
  if (!hasTable) return [];
  return db.prepare('SELECT name FROM constraint_sets WHERE scan_id = ? AND judged_at IS NOT NULL ORDER BY judged_at DESC, name').pluck().all(scanId) as string[];
}

/** Text form of a summary, one line per constraint. */
export function formatSummary(s: JudgeSummary, scanLabel = String(s.scanId)): string {
  const lines = [`scan ${scanLabel}, constraint set '${s.set}': ${s.points} points judged, ${s.survivors} survive`];
  if (s.constraints.length > 0) {
    const w = Math.max(10, ...s.constraints.map((c) => c.name.length));
    lines.push(`  ${'constraint'.padEnd(w)}  ${'kind'.padEnd(12)}  ${'fail'.padStart(10)}  ${'fail only this'.padStart(14)}`);
    for (const c of s.constraints) {
      lines.push(`  ${c.name.padEnd(w)}  ${c.kind.padEnd(12)}  ${String(c.failed).padStart(10)}  ${String(c.onlyThis).padStart(14)}`);
    }
  }
  return `${lines.join('\n')}\n`;
}
