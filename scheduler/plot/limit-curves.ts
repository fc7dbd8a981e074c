/**
 * Limit curves to draw over a plane: the spec's `limit curve` constraints whose observable and
 * parameter are the plane's y and x. The curve is read from the constraint's CSV file (resolved
 * against the ledger's directory, then the working directory) and drawn as given, point to point;
 * on log axes a straight segment in the picture is the log-log interpolation the judge uses.
 * A curve that cannot be read leaves the picture intact and adds a note saying why.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { Overlay } from './render-plane.js';

/** What the picture needs from one limit-curve constraint of a spec. */
export interface LimitCurveRef {
  readonly label: string;
  /** parameter on the horizontal axis */
  readonly x: string;
  /** observable limited */
  readonly y: string;
  readonly file: string;
}

const str = (v: unknown): string | undefined => (typeof v === 'string' && v !== '' ? v : undefined);

/** The limit-curve constraints of a stored spec (the resolved spec JSON of the scans table). */
export function limitCurvesInSpec(specJson: string): LimitCurveRef[] {
  let spec: unknown;
  try {
    spec = JSON.parse(specJson);
  } catch {
    return [];
  }
  const constraints = (spec as { constraints?: unknown }).constraints;
  if (!Array.isArray(constraints)) return [];
  const out: LimitCurveRef[] = [];
  constraints.forEach((c: Record<string, unknown>, k) => {
    if (typeof c !== 'object' || c === null) return;
    const kind = str(c.kind) ?? str(c.type) ?? '';
    if (!/^limit[_ -]?curve$/i.test(kind)) return;
    const file = str(c.file) ?? str(c.csv);
    const y = str(c.observable);
    if (!file || !y) return;
    out.push({ label: str(c.label) ?? str(c.name) ?? `limit ${k + 1}`, x: str(c.parameter) ?? 'm_chi', y, file });
  });
  return out;
}

/**
 * Reads two numeric columns (x, y) from a CSV file: '#' starts a comment, a first line that is not
 * numeric is a header, separators are commas, semicolons or white space.
 */
export function readCurveCsv(file: string): { x: number; y: number }[] {
  const text = fs.readFileSync(file, 'utf8');
  const points: { x: number; y: number }[] = [];
  let lineNo = 0;
  for (const raw of text.split(/\r?\n/)) {
    lineNo++;
    const line = raw.replace(/#.*/, '').trim();
    if (line === '') continue;
    const cells = line.split(/[\s,;]+/);
    const x = Number(cells[0]);
    const y = Number(cells[1]);
    if (!Number.isFinite(x) || !Number.isFinite(y)) {
      if (points.length === 0 && Number.isNaN(x)) continue;
      throw new Error(`${file}:${lineNo}: expected two numbers, found '${raw.trim()}'`);
    }
    points.push({ x, y });
  }
  if (points.length < 2) throw new Error(`${file}: a limit curve needs at least two points`);
  return points;
}

/** The overlays for the plane (x, y), with notes for curves that could not be read. */
export function limitCurveOverlays(
  specJson: string, x: string, y: string, ledgerFile: string,
): { overlays: Overlay[]; notes: string[] } {
  const overlays: Overlay[] = [];
  const notes: string[] = [];
  for (const ref of limitCurvesInSpec(specJson)) {
    if (ref.x !== x || ref.y !== y) continue;
    const candidates = path.isAbsolute(ref.file)
      ? [ref.file]
      : [path.resolve(path.dirname(ledgerFile), ref.file), path.resolve(ref.file)];
    const found = candidates.find((f) => fs.existsSync(f));
    if (!found) {
      notes.push(`limit curve '${ref.label}' not drawn: ${ref.file} not found`);
      continue;
    }
    try {
      overlays.push({ label: ref.label, lines: [readCurveCsv(found)], dashed: false });
    } catch (err) {
      notes.push(`limit curve '${ref.label}' not drawn: ${(err as Error).message}`);
    }
  }
  return { overlays, notes };
}
