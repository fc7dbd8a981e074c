/**
 * Limit curves to draw over a plane: the curves of `limit_curve` and `sd_limit_pair` constraints
 * whose observable and `versus` parameter are the plane's y and x. The curve drawn is the one the verdicts were judged against:
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
  /** said under the picture when the curve is drawn: how its verdicts differ from "below the line passes" */
  readonly note?: string;
}

const str = (v: unknown): string | undefined => (typeof v === 'string' && v !== '' ? v : undefined);

/** An inline curve table of a resolved definition ({x, y, ...}), if well formed. */
function tableOf(curve: unknown): CurveConstraint['table'] {
  const t = curve as { x?: unknown; y?: unknown } | undefined;
  return t && Array.isArray(t.x) && Array.isArray(t.y) ? { x: t.x as number[], y: t.y as number[] } : undefined;
}

/**
 * The curves of `limit_curve` constraints (one each) and of `sd_limit_pair` constraints (the proton
 * curve over sigma_sd_p_cm2, the neutron curve over sigma_sd_n_cm2), with a note where the verdict is
 * not "the plotted observable below the line": an SI curve measured on a target element is compared
 * with the isospin-corrected cross section on that element, and the SD sum rule judges proton and
 * neutron together.
 */
function fromList(list: unknown): CurveConstraint[] {
  if (!Array.isArray(list)) return [];
  const out: CurveConstraint[] = [];
  list.forEach((raw: unknown, k) => {
    if (typeof raw !== 'object' || raw === null) return;
    const c = raw as Record<string, unknown>;
    const versus = str(c.versus) ?? 'm_chi';
    if (c.kind === 'limit_curve') {
      const observable = str(c.observable);
      if (!observable) return;
      const label = str(c.name) ?? `limit_curve_${k}`;
      const target = str(c.target);
      const note = target
        ? `'${label}' was measured on ${target}: its verdicts compare the point's isospin-corrected cross section on ${target} (from sigma_si_p and sigma_si_n), which equals the plotted ${observable} only when f_n = f_p`
        : undefined;
      out.push({ label, versus, observable, table: tableOf(c.curve), file: str(c.file), note });
    } else if (c.kind === 'sd_limit_pair') {
      const name = str(c.name) ?? `sd_limit_pair_${k}`;
      const curves = (c.curves ?? {}) as { proton?: unknown; neutron?: unknown };
      const note = c.combine === 'separate'
        ? undefined
        : `'${name}' judges proton and neutron together by the SD sum rule${str(c.target) ? ` on ${str(c.target)}` : ''}: a point below its drawn proton or neutron curve can still be excluded`;
      out.push({ label: `${name} (proton)`, versus, observable: 'sigma_sd_p_cm2', table: tableOf(curves.proton), file: str(c.proton), note });
      out.push({ label: `${name} (neutron)`, versus, observable: 'sigma_sd_n_cm2', table: tableOf(curves.neutron), file: str(c.neutron), note });
    }
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
      if (c.note) notes.push(c.note);
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
    if (c.note) notes.push(c.note);
  }
  return { overlays, notes };
}
