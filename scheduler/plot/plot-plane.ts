/**
 * `darksieve plot`: one picture of a scan. Validates the request against the ledger (unknown
 * columns, constraint sets, scans, output type are bad input, reported all at once before anything
 * is written), reads the plane (scatter, 2-D histogram or grid), adds the relic-target line and any
 * matching limit curves, renders SVG and, for .png, rasterises it. The file appears whole or not
 * at all (written beside the target, then renamed).
 */
import fs from 'node:fs';
import path from 'node:path';
import { InvalidInputError, type Issue } from '../../physics/issue.js';
import { LedgerView } from './ledger-view.js';
import { readPlane, type PlaneData, type PlaneDensity } from './plane-data.js';
import type { ScaleChoice } from './axis-scale.js';
import { renderPlane, type Overlay } from './render-plane.js';
import { relicContour } from './relic-contour.js';
import { limitCurveOverlays } from './limit-curves.js';
import { NO_SLICE, describeSlice, resolveSlice } from './slice.js';
import { svgToPng } from './rasterize.js';

export const SCALE_CHOICES: readonly ScaleChoice[] = ['auto', 'log', 'linear'];

export interface PlaneOptions {
  readonly x: string;
  readonly y: string;
  readonly color?: string;
  readonly survivorsOnly?: boolean;
  /** constraint set name (verdicts.constraint_set) */
  readonly set?: string;
  /** scan id or name; default the only scan of the ledger */
  readonly scan?: string;
  readonly xScale?: ScaleChoice;
  readonly yScale?: ScaleChoice;
  readonly colorScale?: ScaleChoice;
  readonly width?: number;
  readonly height?: number;
  /** default PLOT_DENSITY (plane-data.ts); the report draws coarser to stay small */
  readonly density?: PlaneDensity;
  /** `name=value` assignments holding parameters at a stored value (slice.ts) */
  readonly fix?: readonly string[];
}

export interface PlotRequest extends PlaneOptions {
  readonly db: string;
  /** .svg or .png */
  readonly out: string;
}

export interface PlaneImage {
  readonly svg: string;
  readonly data: PlaneData;
  readonly notes: readonly string[];
}

function checkScale(v: unknown, path: string, issues: Issue[]): void {
  if (v !== undefined && !SCALE_CHOICES.includes(v as ScaleChoice)) {
    issues.push({ code: 'invalid_choice', path, message: `${path} must be one of ${SCALE_CHOICES.join(', ')}`, seen: String(v), allowed: SCALE_CHOICES.join(', ') });
  }
}

function checkSize(v: number | undefined, path: string, issues: Issue[]): void {
  if (v !== undefined && !(Number.isInteger(v) && v >= 240 && v <= 4000)) {
    issues.push({ code: 'out_of_range', path, message: `${path} must be a whole number of pixels with 240 <= ${path} <= 4000`, seen: String(v), allowed: '240..4000' });
  }
}

/** Builds the SVG of one plane from an open ledger; every input problem is thrown together. */
export function planeImage(view: LedgerView, ledgerFile: string, opts: PlaneOptions): PlaneImage {
  const issues: Issue[] = [];
  checkScale(opts.xScale, '--x-scale', issues);
  checkScale(opts.yScale, '--y-scale', issues);
  checkScale(opts.colorScale, '--color-scale', issues);
  checkSize(opts.width, '--width', issues);
  checkSize(opts.height, '--height', issues);
  if (issues.length) throw new InvalidInputError(issues);
  const scan = view.scan(opts.scan);
  const scanId = Number(scan.id);
  const columns = [{ path: '--x', name: opts.x }, { path: '--y', name: opts.y }];
  if (opts.color !== undefined) columns.push({ path: '--color', name: opts.color });
  issues.push(...view.checkColumns(scanId, columns));
  let constraintSet: string | null = null;
  try {
    constraintSet = view.resolveConstraintSet(scanId, opts.set);
  } catch (err) {
    if (!(err instanceof InvalidInputError)) throw err;
    issues.push(...err.issues);
  }
  if (opts.survivorsOnly && constraintSet === null && issues.length === 0) {
    issues.push({ code: 'not_judged', path: '--survivors-only', message: `scan ${scanId} has no verdicts, so no point is known to survive` });
  }
  let slice = NO_SLICE;
  try {
    slice = resolveSlice(view, scanId, opts.fix ?? [], [opts.x, opts.y]);
  } catch (err) {
    if (!(err instanceof InvalidInputError)) throw err;
    issues.push(...err.issues);
  }
  if (issues.length) throw new InvalidInputError(issues);

  const data = readPlane(view, {
    scanId, x: opts.x, y: opts.y, color: opts.color, survivorsOnly: opts.survivorsOnly ?? false, constraintSet,
    xScale: opts.xScale ?? 'auto', yScale: opts.yScale ?? 'auto', colorScale: opts.colorScale ?? 'auto', density: opts.density, slice,
  });
  const overlays: Overlay[] = [];
  const extraNotes: string[] = [];
  const sliceNote = describeSlice(slice);
  if (sliceNote) extraNotes.push(sliceNote);
  const relic = relicContour(view, scanId, data, slice);
  overlays.push(...relic.overlays);
  if (relic.note) extraNotes.push(relic.note);
  const limits = limitCurveOverlays(view.db, scanId, constraintSet, scan.spec_json, opts.x, opts.y, ledgerFile);
  overlays.push(...limits.overlays);
  extraNotes.push(...limits.notes);

  const notes = [countsNote(data, constraintSet, opts.survivorsOnly ?? false), [modeNote(data), ...extraNotes].filter(Boolean).join(' · ')];
  const title = `${scan.name} (scan ${scanId})`;
  const provenance = {
    ledger: path.basename(ledgerFile), scan: scanId, scanName: scan.name, specHash: scan.spec_hash, codeVersion: scan.code_version,
    constantsEdition: typeof scan.constants_edition === 'string' ? scan.constants_edition : null,
    constraintSet, x: opts.x, y: opts.y, color: opts.color ?? null, survivorsOnly: opts.survivorsOnly ?? false,
  };
  const svg = renderPlane(data, { title, notes, overlays, width: opts.width, height: opts.height, provenance });
  return { svg, data, notes };
}

function countsNote(data: PlaneData, set: string | null, survivorsOnly: boolean): string {
  const parts = [`${data.drawnPoints.toLocaleString('en-US')} points${survivorsOnly ? ' (survivors only)' : ''}`];
  if (set !== null && !survivorsOnly) {
    const survivors = data.mode === 'scatter'
      ? data.points.filter((p) => p.status === 'survives').length
      : data.cells.reduce((s, c) => s + c.nSurvive, 0);
    parts.push(`${survivors.toLocaleString('en-US')} survive constraint set '${set}'`);
  }
  if (set === null) parts.push('not judged');
  if (data.omittedPoints > 0) parts.push(`${data.omittedPoints.toLocaleString('en-US')} omitted (no value, or <= 0 on a log axis)`);
  return parts.join(' · ');
}

function modeNote(data: PlaneData): string {
  if (data.mode === 'binned') return `binned: ${data.cells.length} occupied bins`;
  if (data.mode === 'grid') return `grid ${data.gridX.length}×${data.gridY.length}${data.pointsPerCell > 1 ? `, up to ${data.pointsPerCell} points per cell` : ''}`;
  return '';
}

/** Outcome of `darksieve plot`, for the CLI's message and --json. */
export interface PlotResult {
  readonly file: string;
  readonly format: 'svg' | 'png';
  readonly mode: PlaneData['mode'];
  readonly drawnPoints: number;
  readonly omittedPoints: number;
  readonly bytes: number;
}

/** Writes the picture; nothing is written when the request is invalid or rendering fails. */
export function writePlot(req: PlotRequest): PlotResult {
  const ext = path.extname(req.out).toLowerCase();
  if (ext !== '.svg' && ext !== '.png') {
    throw new InvalidInputError([{ code: 'bad_extension', path: '--out', message: 'the output file must end in .svg or .png', seen: req.out, allowed: '.svg, .png' }]);
  }
  const view = LedgerView.open(req.db);
  try {
    const image = planeImage(view, req.db, req);
    const bytes = ext === '.png' ? svgToPng(image.svg) : Buffer.from(image.svg, 'utf8');
    writeWhole(req.out, bytes);
    return {
      file: req.out, format: ext === '.png' ? 'png' : 'svg', mode: image.data.mode,
      drawnPoints: image.data.drawnPoints, omittedPoints: image.data.omittedPoints, bytes: bytes.length,
    };
  } finally {
    view.close();
  }
}

/** Writes a file so that it appears complete or not at all. */
export function writeWhole(file: string, bytes: Buffer | string): void {
  fs.mkdirSync(path.dirname(path.resolve(file)), { recursive: true });
  const tmp = `${file}.${process.pid}.partial`;
  try {
    fs.writeFileSync(tmp, bytes);
    fs.renameSync(tmp, file);
  } catch (err) {
    fs.rmSync(tmp, { force: true });
    throw err;
  }
}
