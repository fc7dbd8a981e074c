/**
 * Survivor counts per constraint set and per constraint, computed from the verdicts in one SQL
 * pass per set: how many points each constraint excludes, how many it alone excludes (every other
 * constraint passes them), and how many survive them all. Constraint kinds come from the judge's
 * stored definition when there is one (scheduler/constraints/judge.ts), else they are unknown.
 */
import type { LedgerView } from '../plot/ledger-view.js';
import { quoteId } from '../ledger.js';

export interface ConstraintTally {
  readonly name: string;
  /** 'relic', 'limit_curve', ...; '' when the ledger does not record it */
  readonly kind: string;
  readonly failed: number;
  /** points this constraint alone excludes */
  readonly onlyThis: number;
}

export interface SetSummary {
  readonly set: string;
  /** points with a verdict in this set */
  readonly judged: number;
  readonly survivors: number;
  readonly constraints: readonly ConstraintTally[];
  /** when the set was judged, if the ledger records it */
  readonly judgedAt: string | null;
}

function storedKinds(view: LedgerView, scanId: number, set: string): { kinds: Map<string, string>; judgedAt: string | null } {
  const has = view.db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = 'constraint_sets'").get() !== undefined;
  const kinds = new Map<string, string>();
  if (!has) return { kinds, judgedAt: null };
  const row = view.db.prepare('SELECT definition_json AS d, judged_at AS t FROM constraint_sets WHERE scan_id = ? AND name = ?').get(scanId, set) as { d: string; t: string | null } | undefined;
  if (!row) return { kinds, judgedAt: null };
  for (const c of JSON.parse(row.d) as { name?: string; kind?: string }[]) if (c.name && c.kind) kinds.set(c.name, c.kind);
  return { kinds, judgedAt: row.t };
}

function summarizeSet(view: LedgerView, scanId: number, set: string): SetSummary {
  const columns = view.constraintColumns(scanId, set);
  const fails = columns.map((c) => `TOTAL(${quoteId(c)} = 0)`);
  const alone = columns.map((c) => {
    const others = columns.filter((o) => o !== c).map((o) => `${quoteId(o)} = 1`);
    return `TOTAL(${quoteId(c)} = 0${others.length ? ` AND ${others.join(' AND ')}` : ''})`;
  });
  const row = view.db.prepare(
    `SELECT COUNT(*) AS judged, TOTAL(survives = 1) AS survivors${fails.map((f, i) => `, ${f} AS f${i}`).join('')}${alone.map((a, i) => `, ${a} AS a${i}`).join('')}
       FROM verdicts WHERE scan_id = ? AND constraint_set = ?`,
  ).get(scanId, set) as Record<string, number>;
  const { kinds, judgedAt } = storedKinds(view, scanId, set);
  return {
    set, judged: row.judged ?? 0, survivors: row.survivors ?? 0, judgedAt,
    constraints: columns.map((name, i) => ({ name, kind: kinds.get(name) ?? '', failed: row[`f${i}`] ?? 0, onlyThis: row[`a${i}`] ?? 0 })),
  };
}

/** Summaries of every constraint set of the scan, most recently judged first. */
export function summarizeScan(view: LedgerView, scanId: number): SetSummary[] {
  return view.constraintSets(scanId).map((set) => summarizeSet(view, scanId, set));
}
