/**
 * `darksieve report`: gathers the survivor summaries, the standard planes (as SVG, through the same
 * code as `darksieve plot`) and the provenance of one scan, and writes DIR/index.html. Input
 * problems are reported before anything is written; the page appears whole or not at all.
 */
import fs from 'node:fs';
import path from 'node:path';
import { InvalidInputError } from '../../physics/issue.js';
import { LedgerView, type ScanRow } from '../plot/ledger-view.js';
import { planeImage, writeWhole } from '../plot/plot-plane.js';
import type { PlaneDensity } from '../plot/plane-data.js';
import { summarizeScan } from './survivor-summary.js';
import { standardPlanes } from './standard-planes.js';
import { reportHtml, type ProvenanceItem, type ReportFigure } from './report-page.js';

export interface ReportRequest {
  readonly db: string;
  /** directory to write index.html into (created if needed) */
  readonly out: string;
  /** scan id or name; default the only scan */
  readonly scan?: string;
  /** constraint set shown in the planes; default the most recently judged */
  readonly set?: string;
}

export interface ReportResult {
  readonly file: string;
  readonly figures: number;
  readonly skipped: readonly string[];
  readonly sets: readonly string[];
}

/**
 * Knob: the report's planes are drawn coarser than `plot` so four of them keep the page to a few MB:
 * scans beyond 4,000 points are binned, 80 x 60 bins.
 */
export const REPORT_DENSITY: PlaneDensity = Object.freeze({ scatterMax: 4_000, binsX: 80, binsY: 60 });

/** Scans columns shown as JSON documents rather than table cells. */
const DOCUMENT_COLUMNS: Readonly<Record<string, string>> = {
  spec_json: 'Resolved scan spec',
  knobs_json: 'Numerical knobs',
  observables_json: 'Observable columns',
};
const LABELS: Readonly<Record<string, string>> = {
  id: 'scan id', name: 'scan name', status: 'status', created_at: 'created', updated_at: 'last update',
  code_version: 'code version', spec_hash: 'spec hash', constants_edition: 'constants edition',
  n_points: 'points planned', chunk_size: 'chunk size', n_chunks: 'chunks',
};

function pretty(json: string): string {
  try {
    return JSON.stringify(JSON.parse(json), null, 2);
  } catch {
    return json;
  }
}

/** The spec's indirect-detection options, or null when the spec cannot be read. */
function indirectOptions(specJson: unknown): { sommerfeld?: unknown; yieldTables?: Record<string, unknown> } | null {
  try {
    return (JSON.parse(String(specJson)) as { indirect?: { sommerfeld?: unknown; yieldTables?: Record<string, unknown> } }).indirect ?? {};
  } catch {
    return null;
  }
}

/** Whether sigma v today carries the Sommerfeld factor (a model assumption the page states outright). */
export function sommerfeldText(specJson: unknown): string {
  const options = indirectOptions(specJson);
  if (!options) return 'unknown (no readable spec)';
  return options.sommerfeld === 'hulthen'
    ? 'on: Hulthén approximation on the s-wave part of σv today (sigv0 and fluxes), scalar and Dirac vector mediators; not in the relic abundance'
    : 'off: σv today without it (no enhancement by light mediators)';
}

/** Where the photon spectra come from: the user's tables (in the spec) or the approximate built-in fits. */
export function yieldsText(specJson: unknown): string {
  const options = indirectOptions(specJson);
  if (!options) return 'unknown (no readable spec)';
  const tables = Object.keys(options.yieldTables ?? {});
  const fits = 'built-in analytic fits, approximate (factor ~2)';
  return tables.length === 0 ? fits : `user tables for ${tables.join(', ')} (in the resolved spec); ${fits} for any other final state`;
}

function provenanceOf(scan: ScanRow): { items: ProvenanceItem[]; documents: { label: string; json: string }[] } {
  const items: ProvenanceItem[] = [];
  const documents: { label: string; json: string }[] = [];
  for (const [key, value] of Object.entries(scan)) {
    if (value === null || value === undefined) continue;
    const doc = DOCUMENT_COLUMNS[key];
    if (doc) documents.push({ label: doc, json: pretty(String(value)) });
    else items.push({ label: LABELS[key] ?? key, value: String(value) });
  }
  items.push({ label: 'Sommerfeld factor', value: sommerfeldText(scan.spec_json) });
  items.push({ label: 'photon yields', value: yieldsText(scan.spec_json) });
  if (!('constants_edition' in scan)) items.push({ label: 'constants edition', value: 'not recorded in this ledger' });
  if (!('knobs_json' in scan)) items.push({ label: 'numerical knobs', value: 'not recorded in this ledger' });
  return { items, documents };
}

function constraintDefinitions(view: LedgerView, scanId: number): { label: string; json: string }[] {
  const has = view.db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = 'constraint_sets'").get() !== undefined;
  if (!has) return [];
  const rows = view.db.prepare('SELECT name, definition_json AS d FROM constraint_sets WHERE scan_id = ? ORDER BY name').all(scanId) as { name: string; d: string }[];
  return rows.map((r) => ({ label: `Constraint set “${r.name}” as judged (defaults filled in, curve tables inline)`, json: pretty(r.d) }));
}

export function writeReport(req: ReportRequest): ReportResult {
  if (fs.existsSync(req.out) && !fs.statSync(req.out).isDirectory()) {
    throw new InvalidInputError([{ code: 'not_a_directory', path: '--out', message: 'the report goes into a directory, and this path is a file', seen: req.out, allowed: 'a directory (created if missing)' }]);
  }
  const view = LedgerView.open(req.db);
  try {
    const scan = view.scan(req.scan);
    const scanId = Number(scan.id);
    const set = view.resolveConstraintSet(scanId, req.set);
    const summaries = summarizeScan(view, scanId);
    const { planes, skipped } = standardPlanes(view, scanId);
    const figures: ReportFigure[] = planes.map((p) => {
      const image = planeImage(view, req.db, { x: p.x, y: p.y, color: p.color, set: set ?? undefined, scan: String(scanId), width: 640, height: 480, density: REPORT_DENSITY });
      return { heading: p.heading, svg: image.svg, notes: image.notes };
    });
    const points = (view.db.prepare('SELECT COUNT(*) AS n FROM points WHERE scan_id = ?').get(scanId) as { n: number }).n;
    const { items, documents } = provenanceOf(scan);
    const html = reportHtml({
      title: `darksieve report: ${scan.name}`,
      points, summaries, figures, skippedPlanes: skipped, provenance: items,
      documents: [...documents, ...constraintDefinitions(view, scanId)],
      generatedAt: new Date().toISOString(),
    });
    const file = path.join(req.out, 'index.html');
    writeWhole(file, html);
    return { file, figures: figures.length, skipped, sets: summaries.map((s) => s.set) };
  } finally {
    view.close();
  }
}
