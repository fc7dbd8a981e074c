/**
 * The relic-target line Omega h^2 = 0.120 (Planck 2018, from physics/constants.ts) in a gridded
 * parameter plane. Marching squares runs on log10(Omega h^2), which is close to linear across a
 * cell of a log-spaced mass grid (Omega h^2 scales roughly as 1 / <sigma v>), so the crossing lands
 * nearer the true one than interpolating Omega h^2 itself. The line is drawn only where the plane
 * is the whole scan (one point per grid cell); when other axes vary, a single line would mix
 * different slices and is left out with a note saying so.
 */
import { BASE } from '../../physics/constants.js';
import type { LedgerView } from './ledger-view.js';
import { quoteId } from './ledger-view.js';
import type { PlaneData } from './plane-data.js';
import type { Overlay } from './render-plane.js';
import { isoLines, indexToValue } from './marching-squares.js';

export const RELIC_COLUMN = 'omega_h2';
export const RELIC_TARGET = BASE.omegaCh2.value;
export const RELIC_LABEL = 'Ωh² = 0.120';

export interface RelicContourResult {
  readonly overlay: Overlay | null;
  /** why no line was drawn, when that is not obvious from the plane */
  readonly note: string | null;
}

export function relicContour(view: LedgerView, scanId: number, data: PlaneData): RelicContourResult {
  if (data.mode !== 'grid') return { overlay: null, note: null };
  if (data.x.column === RELIC_COLUMN || data.y.column === RELIC_COLUMN) return { overlay: null, note: null };
  if (!view.numericColumns(scanId).includes(RELIC_COLUMN)) return { overlay: null, note: null };
  if (data.pointsPerCell > 1) {
    return { overlay: null, note: `relic line not drawn: ${data.pointsPerCell} points share each cell (other axes vary)` };
  }
  const xc = quoteId(data.x.column);
  const yc = quoteId(data.y.column);
  const rows = view.db.prepare(
    `SELECT ${xc} AS x, ${yc} AS y, COUNT(*) AS n, MIN(${quoteId(RELIC_COLUMN)}) AS o
       FROM points WHERE scan_id = ? AND ${xc} IS NOT NULL AND ${yc} IS NOT NULL GROUP BY ${xc}, ${yc}`,
  ).all(scanId) as { x: number; y: number; n: number; o: number | null }[];
  const perCell = rows.reduce((m, r) => Math.max(m, r.n), 0);
  if (perCell > 1) {
    return { overlay: null, note: `relic line not drawn: ${perCell} points share each cell (other axes vary)` };
  }
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
  if (lines.length === 0) return { overlay: null, note: 'Ωh² does not cross 0.120 in this plane' };
  return { overlay: { label: RELIC_LABEL, lines, dashed: true }, note: null };
}
