/**
 * The relic-target line Omega h^2 = 0.120 (Planck 2018, from physics/constants.ts) in a gridded
 * parameter plane. Marching squares runs on log10(Omega h^2), which is close to linear across a
 * cell of a log-spaced mass grid (Omega h^2 scales roughly as 1 / <sigma v>), so the crossing lands
 * nearer the true one than interpolating Omega h^2 itself.
 *
 * A line needs one point per grid cell. When other parameters vary (say the mediator type, or a
 * coupling axis), each combination of their values is a slice of its own: with at most
 * MAX_RELIC_SLICES slices, each full grid, one line per slice is drawn, labelled with the slice;
 * otherwise no line is drawn and a note says why (one line through mixed slices would be wrong).
 */
import { BASE } from '../../physics/constants.js';
import { PARAMETER_NAMES } from '../../physics/model.js';
import { NO_SLICE, type Slice } from './slice.js';
import type { LedgerView } from './ledger-view.js';
import { quoteId } from '../ledger.js';
import type { PlaneData } from './plane-data.js';
import type { Overlay } from './render-plane.js';
import { isoLines, indexToValue } from './marching-squares.js';
import { formatLinear } from './notation.js';

export const RELIC_COLUMN = 'omega_h2';
export const RELIC_TARGET = BASE.omegaCh2.value;
export const RELIC_LABEL = 'Ωh² = 0.120';
/** Knob: most slices (combinations of the other varying parameters) that get a relic line each. */
export const MAX_RELIC_SLICES = 4;
/** Dash patterns told apart in greyscale, one per slice. */
const SLICE_DASHES = ['6,3', '2,2', '9,3,2,3', '1,4'] as const;

export interface RelicContourResult {
  readonly overlays: readonly Overlay[];
  /** why no line was drawn, when that is not obvious from the plane */
  readonly note: string | null;
}

type SliceValue = string | number | null;

/** The grid's relic line(s) for one slice (`where` restricts the points to it). */
function sliceLines(
  view: LedgerView, scanId: number, data: PlaneData, where: string, params: SliceValue[], fixed: Slice,
): { lines: { x: number; y: number }[][]; perCell: number } {
  const xc = quoteId(data.x.column);
  const yc = quoteId(data.y.column);
  const rows = view.db.prepare(
    `SELECT ${xc} AS x, ${yc} AS y, COUNT(*) AS n, MIN(${quoteId(RELIC_COLUMN)}) AS o
       FROM points WHERE scan_id = ?${fixed.sql('')} AND ${xc} IS NOT NULL AND ${yc} IS NOT NULL${where} GROUP BY ${xc}, ${yc}`,
  ).all(scanId, ...fixed.params, ...params) as { x: number; y: number; n: number; o: number | null }[];
  const perCell = rows.reduce((m, r) => Math.max(m, r.n), 0);
  const xi = new Map(data.gridX.map((v, i) => [v, i]));
  const yi = new Map(data.gridY.map((v, j) => [v, j]));
  const values = data.gridY.map(() => data.gridX.map(() => NaN));
  for (const r of rows) {
    const i = xi.get(r.x);
    const j = yi.get(r.y);
    if (i === undefined || j === undefined || r.o === null || !(r.o > 0)) continue;
    (values[j] as number[])[i] = Math.log10(r.o);
  }
  const lines = isoLines(values, Math.log10(RELIC_TARGET)).map((line) => line.map((p) => ({
    x: indexToValue(data.gridX, p.i, data.x.type === 'log'),
    y: indexToValue(data.gridY, p.j, data.y.type === 'log'),
  })));
  return { lines, perCell };
}

/** The other parameter columns that take more than one value in the scan (within the fixed slice). */
function varyingParameters(view: LedgerView, scanId: number, data: PlaneData, fixed: Slice): string[] {
  const columns = new Set(view.pointColumns().map((c) => c.name));
  return PARAMETER_NAMES.filter((p) => columns.has(p) && p !== data.x.column && p !== data.y.column).filter((p) => {
    const n = view.db.prepare(`SELECT COUNT(*) AS n FROM (SELECT DISTINCT ${quoteId(p)} FROM points WHERE scan_id = ?${fixed.sql('')} LIMIT 2)`).get(scanId, ...fixed.params) as { n: number };
    return n.n > 1;
  });
}

const sliceText = (v: SliceValue): string => (v === null ? 'default' : typeof v === 'number' ? formatLinear(v) : v);

export function relicContour(view: LedgerView, scanId: number, data: PlaneData, fixed: Slice = NO_SLICE): RelicContourResult {
  const none = { overlays: [], note: null };
  if (data.mode !== 'grid') return none;
  if (data.x.column === RELIC_COLUMN || data.y.column === RELIC_COLUMN) return none;
  if (!view.numericColumns(scanId).includes(RELIC_COLUMN)) return none;
  if (data.pointsPerCell === 1) {
    const { lines } = sliceLines(view, scanId, data, '', [], fixed);
    if (lines.length === 0) return { overlays: [], note: 'Ωh² does not cross 0.120 in this plane' };
    return { overlays: [{ label: RELIC_LABEL, lines, dash: SLICE_DASHES[0] }], note: null };
  }
  const notDrawn = { overlays: [], note: `relic line not drawn: ${data.pointsPerCell} points share each cell (other axes vary; --fix name=value picks one slice)` };
  if (data.pointsPerCell > MAX_RELIC_SLICES) return notDrawn;
  const varying = varyingParameters(view, scanId, data, fixed);
  if (varying.length === 0) return notDrawn;
  const cols = varying.map(quoteId).join(', ');
  const slices = view.db.prepare(`SELECT DISTINCT ${cols} FROM points WHERE scan_id = ?${fixed.sql('')} LIMIT ${MAX_RELIC_SLICES + 1}`)
    .raw().all(scanId, ...fixed.params) as SliceValue[][];
  if (slices.length !== data.pointsPerCell) return notDrawn;
  const overlays: Overlay[] = [];
  slices.forEach((slice, k) => {
    const where = varying.map((c) => ` AND ${quoteId(c)} IS ?`).join('');
    const { lines, perCell } = sliceLines(view, scanId, data, where, slice, fixed);
    if (perCell !== 1 || lines.length === 0) return;
    const label = `${RELIC_LABEL} (${varying.map((c, i) => `${c} = ${sliceText(slice[i] ?? null)}`).join(', ')})`;
    const tag = varying.length === 1 ? `${RELIC_LABEL}: ${sliceText(slice[0] ?? null)}` : label;
    overlays.push({ label, tag, lines, dash: SLICE_DASHES[k % SLICE_DASHES.length] as string });
  });
  if (overlays.length === 0) return { overlays: [], note: 'Ωh² does not cross 0.120 in any slice of this plane' };
  return { overlays, note: null };
}
