/**
 * Limit curves to draw over a plane: the `limit_curve` constraints whose observable and `versus`
 * parameter are the plane's y and x. The curve drawn is the one the verdicts were judged against:
 * the resolved definition of the constraint set (scheduler/constraints stores the table inline in
 * `constraint_sets.definition_json`). A scan not yet judged falls back to the spec's constraints,
 * read with the constraints module's own curve-file parser, paths taken from the ledger's directory
 * and then the working directory (the spec's own directory is not stored). Points are joined by
 * straight segments, which on log axes is the judge's log-log interpolation. A curve that cannot be
 * read leaves the picture intact and adds a note saying why.
 */
import fs from 'node:fs';
import path from 'node:path';
import type Database from 'better-sqlite3';
import { parseCurve } from '../constraints/curve-file.js';
import { PARAMETERS } from '../../physics/model.js';
import { observableUnit } from '../../physics/observables.js';
import type { Overlay } from './render-plane.js';

interface CurveConstraint {
  readonly label: string;
  readonly versus: string;
  readonly observable: string;
  /** inline table (resolved definition) */
  readonly table?: { readonly x: readonly number[]; readonly y: readonly number[] };
  /** file to read (spec fallback) */
  readonly file?: string;
}

const str = (v: unknown): string | undefined => (typeof v === 'string' && v !== '' ? v : undefined);

function fromList(list: unknown): CurveConstraint[] {
  if (!Array.isArray(list)) return [];
  const out: CurveConstraint[] = [];
  list.forEach((raw: unknown, k) => {
    if (typeof raw !== 'object' || raw === null) return;
    const c = raw as Record<string, unknown>;
    if (c.kind !== 'limit_curve') return;
    const observable = str(c.observable);
    if (!observable) return;
    const curve = c.curve as { x?: unknown; y?: unknown } | undefined;
    const table = curve && Array.isArray(curve.x) && Array.isArray(curve.y)
      ? { x: curve.x as number[], y: curve.y as number[] } : undefined;
    out.push({ label: str(c.name) ?? `limit_curve_${k}`, versus: str(c.versus) ?? 'm_chi', observable, table, file: str(c.file) });
  });
  return out;
}

/** The limit-curve constraints of the shown constraint set, else of the stored spec. */
function curveConstraints(db: Database.Database, scanId: number, set: string | null, specJson: string): { judged: boolean; list: CurveConstraint[] } {
  const hasSets = db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = 'constraint_sets'").get() !== undefined;
  if (set !== null && hasSets) {
    const row = db.prepare('SELECT definition_json AS d FROM constraint_sets WHERE scan_id = ? AND name = ?').get(scanId, set) as { d: string } | undefined;
    if (row) return { judged: true, list: fromList(JSON.parse(row.d)) };
  }
  let spec: { constraints?: unknown } = {};
  try {
    spec = JSON.parse(specJson) as { constraints?: unknown };
  } catch {
    return { judged: false, list: [] };
  }
  return { judged: false, list: fromList(spec.constraints) };
}

const parameterUnit = (name: string): string => PARAMETERS.find((p) => p.name === name)?.unit ?? '';

/** The overlays for the plane (x, y), with notes for curves that could not be read. */
export function limitCurveOverlays(
  db: Database.Database, scanId: number, set: string | null, specJson: string, x: string, y: string, ledgerFile: string,
): { overlays: Overlay[]; notes: string[] } {
  const overlays: Overlay[] = [];
  const notes: string[] = [];
  for (const c of curveConstraints(db, scanId, set, specJson).list) {
    if (c.versus !== x || c.observable !== y) continue;
    if (c.table) {
      overlays.push({ label: c.label, lines: [c.table.x.map((xv, i) => ({ x: xv, y: c.table?.y[i] as number }))], dash: null });
      continue;
    }
    if (!c.file) continue;
    const candidates = path.isAbsolute(c.file) ? [c.file] : [path.resolve(path.dirname(ledgerFile), c.file), path.resolve(c.file)];
    const found = candidates.find((f) => fs.existsSync(f));
    if (!found) {
      notes.push(`limit curve '${c.label}' not drawn: ${c.file} not found`);
      continue;
    }
    const parsed = parseCurve(fs.readFileSync(found, 'utf8'), parameterUnit(x), observableUnit(y), c.label);
    if (!parsed.curve) {
      notes.push(`limit curve '${c.label}' not drawn: ${parsed.issues[0]?.message ?? 'unreadable'}`);
      continue;
    }
    const curve = parsed.curve;
    overlays.push({ label: c.label, lines: [curve.x.map((xv, i) => ({ x: xv, y: curve.y[i] as number }))], dash: null });
  }
  return { overlays, notes };
}
