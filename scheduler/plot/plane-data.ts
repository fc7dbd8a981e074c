/**
 * Reads what a picture of one plane needs from a ledger, choosing how to show it:
 *  - `grid`: both axes take a small set of values that every combination covers (a grid scan's
 *    own axes): one cell per grid node, aggregated over any other axes;
 *  - `scatter`: up to PLOT_DENSITY.scatterMax points (20,000), each drawn;
 *  - `binned`: more points than that: a 2-D histogram with per-bin aggregates computed in SQL
 *    (GROUP BY on bin indices), so a 10^6-point ledger never crosses into JavaScript point by point.
 * Grid detection reads the data, not the spec: a plane is gridded when the distinct x values times
 * the distinct y values are at most the number of points and every pair occurs. Random sampling
 * never passes that test; a grid scan's axes always do.
 */
import type { LedgerView } from './ledger-view.js';
import { NO_SLICE, type Slice } from './slice.js';
import { quoteId } from '../ledger.js';
import {
  chooseScale, paddedDomain, toScaleSpace, fromScaleSpace,
  type ColumnStats, type ScaleChoice, type ScaleType,
} from './axis-scale.js';

/** How finely a plane is drawn: when points stop being drawn one by one, and the histogram size. */
export interface PlaneDensity {
  /** largest number of points drawn one by one */
  readonly scatterMax: number;
  /** histogram bins along x and y above that */
  readonly binsX: number;
  readonly binsY: number;
}

/**
 * Knob: `plot` defaults. 2*10^4 dots render in about a second and keep the SVG near 2 MB; 110 x 80
 * bins are about 5 px each at the default size.
 */
export const PLOT_DENSITY: PlaneDensity = Object.freeze({ scatterMax: 20_000, binsX: 110, binsY: 80 });
export const SCATTER_MAX_POINTS = PLOT_DENSITY.scatterMax;
/** Knob: a plane with more distinct values than this along an axis is never treated as a grid. */
export const GRID_MAX_VALUES = 400;

export type PointStatus = 'survives' | 'excluded' | 'unjudged';

export interface PlaneRequest {
  readonly scanId: number;
  readonly x: string;
  readonly y: string;
  readonly color?: string;
  readonly survivorsOnly: boolean;
  /** constraint set whose verdicts tell survivors from excluded points; null: not judged */
  readonly constraintSet: string | null;
  readonly xScale: ScaleChoice;
  readonly yScale: ScaleChoice;
  readonly colorScale: ScaleChoice;
  /** default PLOT_DENSITY */
  readonly density?: PlaneDensity;
  /** only the points of this slice (plot --fix); default all */
  readonly slice?: Slice;
}

export interface AxisInfo {
  readonly column: string;
  readonly type: ScaleType;
  readonly domain: [number, number];
}

/** One drawn point (scatter mode). */
export interface ScatterPoint {
  readonly x: number;
  readonly y: number;
  readonly c: number | null;
  readonly status: PointStatus;
}

/** One rectangle (binned and grid modes), in data coordinates. */
export interface Cell {
  readonly x1: number;
  readonly x2: number;
  readonly y1: number;
  readonly y2: number;
  /** points in the cell */
  readonly n: number;
  /** points in the cell that survive the constraint set (0 when the scan is not judged) */
  readonly nSurvive: number;
  /** colour value: aggregate over the cell's survivors when it has any, else over all its points */
  readonly c: number | null;
}

export interface PlaneData {
  readonly mode: 'scatter' | 'binned' | 'grid';
  readonly x: AxisInfo;
  readonly y: AxisInfo;
  readonly color: AxisInfo | null;
  readonly judged: boolean;
  /** only survivors were read (--survivors-only) */
  readonly survivorsOnly: boolean;
  /** points with x and y on their axes */
  readonly drawnPoints: number;
  /** points left out: a missing (NULL) x or y, or a value <= 0 on a log axis */
  readonly omittedPoints: number;
  readonly points: readonly ScatterPoint[];
  readonly cells: readonly Cell[];
  /** grid mode: sorted distinct axis values */
  readonly gridX: readonly number[];
  readonly gridY: readonly number[];
  /** grid mode: largest number of points sharing one cell (1: the plane is the whole grid) */
  readonly pointsPerCell: number;
}

interface SqlParts {
  from: string;
  params: unknown[];
  survive: string;
}

function sqlParts(req: PlaneRequest): SqlParts {
  if (req.constraintSet === null) return { from: 'points p', params: [], survive: 'NULL' };
  return {
    from: 'points p LEFT JOIN verdicts v ON v.scan_id = p.scan_id AND v.point_id = p.point_id AND v.constraint_set = ?',
    params: [req.constraintSet],
    survive: 'v.survives',
  };
}

interface PlaneStats {
  readonly total: number;
  readonly x: ColumnStats;
  readonly y: ColumnStats;
  readonly c: ColumnStats | null;
  /** points with x and y present, split by which of them is > 0 (for the drawn count per scale) */
  readonly both: { any: number; xPos: number; yPos: number; pos: number };
}

/**
 * Range statistics of x, y and colour and the counts of drawable points, in one pass over the
 * scan (the verdicts join only when --survivors-only needs it): on 10^6 points each pass costs
 * about a second here, so passes are what this module economises.
 */
function planeStats(view: LedgerView, req: PlaneRequest, parts: SqlParts): PlaneStats {
  const cols = { x: `p.${quoteId(req.x)}`, y: `p.${quoteId(req.y)}`, c: req.color ? `p.${quoteId(req.color)}` : 'NULL' };
  const stat = (k: 'x' | 'y' | 'c'): string => {
    const c = cols[k];
    return `COUNT(${c}) AS ${k}Count, MIN(${c}) AS ${k}Min, MAX(${c}) AS ${k}Max,
            MIN(CASE WHEN ${c} > 0 THEN ${c} END) AS ${k}MinPositive, TOTAL(${c} <= 0) AS ${k}NonPositive`;
  };
  const from = req.survivorsOnly ? parts.from : 'points p';
  const slice = req.slice ?? NO_SLICE;
  const params = [...(req.survivorsOnly ? parts.params : []), req.scanId, ...slice.params];
  const row = view.db.prepare(
    `SELECT COUNT(*) AS total, ${stat('x')}, ${stat('y')}, ${stat('c')},
            TOTAL(${cols.x} IS NOT NULL AND ${cols.y} IS NOT NULL) AS bothAny,
            TOTAL(${cols.x} > 0 AND ${cols.y} IS NOT NULL) AS bothXPos,
            TOTAL(${cols.x} IS NOT NULL AND ${cols.y} > 0) AS bothYPos,
            TOTAL(${cols.x} > 0 AND ${cols.y} > 0) AS bothPos
       FROM ${from} WHERE p.scan_id = ?${slice.sql('p')}${req.survivorsOnly ? ` AND ${parts.survive} = 1` : ''}`,
  ).get(...params) as Record<string, number | null>;
  const pick = (k: string): ColumnStats => ({
    count: row[`${k}Count`] ?? 0, min: row[`${k}Min`] ?? null, max: row[`${k}Max`] ?? null,
    minPositive: row[`${k}MinPositive`] ?? null, nonPositive: row[`${k}NonPositive`] ?? 0,
  });
  return {
    total: row.total ?? 0, x: pick('x'), y: pick('y'), c: req.color ? pick('c') : null,
    both: { any: row.bothAny ?? 0, xPos: row.bothXPos ?? 0, yPos: row.bothYPos ?? 0, pos: row.bothPos ?? 0 },
  };
}

function statusOf(survives: number | null): PointStatus {
  if (survives === null || survives === undefined) return 'unjudged';
  return survives ? 'survives' : 'excluded';
}

interface AggregateRow {
  n: number;
  nSurvive: number;
  cSurvive: number | null;
  cAll: number | null;
}

/** Gathers the data of one plane; throws nothing for an empty plane (the picture says so). */
export function readPlane(view: LedgerView, req: PlaneRequest): PlaneData {
  const parts = sqlParts(req);
  const stats = planeStats(view, req, parts);
  const xType = chooseScale(stats.x, req.xScale);
  const yType = chooseScale(stats.y, req.yScale);
  const xDomain = paddedDomain(stats.x, xType) ?? [0, 1];
  const yDomain = paddedDomain(stats.y, yType) ?? [0, 1];
  const x: AxisInfo = { column: req.x, type: xType, domain: xDomain };
  const y: AxisInfo = { column: req.y, type: yType, domain: yDomain };
  let color: AxisInfo | null = null;
  if (req.color !== undefined && stats.c) {
    const cType = chooseScale(stats.c, req.colorScale);
    const lo = cType === 'log' ? stats.c.minPositive : stats.c.min;
    const hi = stats.c.max;
    const domain: [number, number] = lo === null || hi === null ? [1, 10]
      : hi > lo ? [lo, hi] : cType === 'log' ? [lo / 2, lo * 2] : [lo - 1, lo + 1];
    color = { column: req.color, type: cType, domain };
  }
  const drawn = xType === 'log'
    ? (yType === 'log' ? stats.both.pos : stats.both.xPos)
    : (yType === 'log' ? stats.both.yPos : stats.both.any);

  const xc = `p.${quoteId(req.x)}`;
  const yc = `p.${quoteId(req.y)}`;
  const slice = req.slice ?? NO_SLICE;
  // the slice's placeholders follow scan_id's: params below list them in that order
  const conds = [`p.scan_id = ?${slice.sql('p')}`, `${xc} IS NOT NULL`, `${yc} IS NOT NULL`];
  if (xType === 'log') conds.push(`${xc} > 0`);
  if (yType === 'log') conds.push(`${yc} > 0`);
  // the grid is recognised on all points, so that --survivors-only keeps the grid's layout
  const gridWhere = conds.join(' AND ');
  if (req.survivorsOnly) conds.push(`${parts.survive} = 1`);
  const where = conds.join(' AND ');
  const params = [...parts.params, req.scanId, ...slice.params];
  const base = { x, y, color, judged: req.constraintSet !== null, survivorsOnly: req.survivorsOnly, drawnPoints: drawn, omittedPoints: stats.total - drawn };

  const cExpr = colorExpr(req.color, color?.type);
  const aggregates = `COUNT(*) AS n, TOTAL(${parts.survive} = 1) AS nSurvive,
              AVG(CASE WHEN ${parts.survive} = 1 THEN ${cExpr} END) AS cSurvive, AVG(${cExpr}) AS cAll`;
  const cellColor = (r: AggregateRow): number | null => colorValue(r.nSurvive > 0 ? r.cSurvive : r.cAll, color?.type);

  // with --survivors-only the drawn count is the survivors', which says nothing about the grid
  const gridAxes = gridCandidate(view, parts, gridWhere, params, xc, yc, req.survivorsOnly ? Infinity : drawn);
  if (gridAxes) {
    const rows = view.db.prepare(
      `SELECT ${xc} AS x, ${yc} AS y, ${aggregates} FROM ${parts.from} WHERE ${gridWhere} GROUP BY ${xc}, ${yc}`,
    ).all(...params) as (AggregateRow & { x: number; y: number })[];
    // every (x, y) pair present: a grid; otherwise the data only looked like one (rare) and are binned
    if (rows.length === gridAxes.xs.length * gridAxes.ys.length) {
      const xEdges = cellEdges(gridAxes.xs, xType);
      const yEdges = cellEdges(gridAxes.ys, yType);
      const xIndex = new Map(gridAxes.xs.map((v, i) => [v, i]));
      const yIndex = new Map(gridAxes.ys.map((v, i) => [v, i]));
      const perCell = Math.max(...rows.map((r) => r.n));
      const cells: Cell[] = rows
        .filter((r) => !req.survivorsOnly || r.nSurvive > 0)
        .map((r) => {
          const i = xIndex.get(r.x) as number;
          const j = yIndex.get(r.y) as number;
          const kept = req.survivorsOnly ? { n: r.nSurvive, nSurvive: r.nSurvive, c: colorValue(r.cSurvive, color?.type) }
            : { n: r.n, nSurvive: r.nSurvive, c: cellColor(r) };
          return { x1: xEdges[i] as number, x2: xEdges[i + 1] as number, y1: yEdges[j] as number, y2: yEdges[j + 1] as number, ...kept };
        });
      return {
        ...base, mode: 'grid', points: [], cells, gridX: gridAxes.xs, gridY: gridAxes.ys, pointsPerCell: perCell,
        x: { ...x, domain: [xEdges[0] as number, xEdges[xEdges.length - 1] as number] },
        y: { ...y, domain: [yEdges[0] as number, yEdges[yEdges.length - 1] as number] },
      };
    }
  }

  const density = req.density ?? PLOT_DENSITY;
  if (drawn <= density.scatterMax) {
    const rows = view.db.prepare(
      `SELECT ${xc} AS x, ${yc} AS y, ${req.color ? `p.${quoteId(req.color)}` : 'NULL'} AS c, ${parts.survive} AS s
         FROM ${parts.from} WHERE ${where} ORDER BY p.point_id`,
    ).raw().all(...params) as [number, number, number | null, number | null][];
    const points = rows.map(([px, py, pc, ps]) => ({
      x: px, y: py, c: pc === null || (color?.type === 'log' && pc <= 0) ? null : pc, status: statusOf(ps),
    }));
    return { ...base, drawnPoints: points.length, mode: 'scatter', points, cells: [], gridX: [], gridY: [], pointsPerCell: 0 };
  }

  const [ux0, ux1] = xDomain.map((v) => toScaleSpace(xType, v)) as [number, number];
  const [uy0, uy1] = yDomain.map((v) => toScaleSpace(yType, v)) as [number, number];
  const { binsX, binsY } = density;
  const dx = (ux1 - ux0) / binsX;
  const dy = (uy1 - uy0) / binsY;
  const ux = xType === 'log' ? `log10(${xc})` : xc;
  const uy = yType === 'log' ? `log10(${yc})` : yc;
  const rows = view.db.prepare(
    `SELECT MIN(${binsX - 1}, CAST((${ux} - ?) / ? AS INTEGER)) AS i,
            MIN(${binsY - 1}, CAST((${uy} - ?) / ? AS INTEGER)) AS j, ${aggregates}
       FROM ${parts.from} WHERE ${where} GROUP BY i, j`,
  ).all(ux0, dx, uy0, dy, ...params) as (AggregateRow & { i: number; j: number })[];
  const cells: Cell[] = rows.map((r) => ({
    x1: fromScaleSpace(xType, ux0 + r.i * dx), x2: fromScaleSpace(xType, ux0 + (r.i + 1) * dx),
    y1: fromScaleSpace(yType, uy0 + r.j * dy), y2: fromScaleSpace(yType, uy0 + (r.j + 1) * dy),
    n: r.n, nSurvive: r.nSurvive, c: cellColor(r),
  }));
  return { ...base, mode: 'binned', points: [], cells, gridX: [], gridY: [], pointsPerCell: 0 };
}

/** SQL for the per-cell colour aggregate: the mean of log10 (a geometric mean) on log colour scales. */
function colorExpr(column: string | undefined, type: ScaleType | undefined): string {
  if (column === undefined) return 'NULL';
  const c = `p.${quoteId(column)}`;
  return type === 'log' ? `CASE WHEN ${c} > 0 THEN log10(${c}) END` : c;
}

function colorValue(aggregate: number | null, type: ScaleType | undefined): number | null {
  if (aggregate === null || type === undefined) return null;
  return type === 'log' ? 10 ** aggregate : aggregate;
}

/**
 * Axis values when the plane may be a grid: few distinct x and y values (DISTINCT ... LIMIT stops
 * early on scattered data) whose combinations do not outnumber the points. Whether every pair
 * occurs is checked by the caller on the grouped rows it needs anyway.
 */
function gridCandidate(
  view: LedgerView, parts: SqlParts, where: string, params: unknown[], xc: string, yc: string, drawn: number,
): { xs: number[]; ys: number[] } | null {
  if (drawn < 4) return null;
  const distinct = (col: string): number[] =>
    (view.db.prepare(`SELECT DISTINCT ${col} AS v FROM points p WHERE ${where} LIMIT ${GRID_MAX_VALUES + 1}`)
      .raw().all(...params.slice(parts.params.length)) as [number][]).map((r) => r[0]);
  const xs = distinct(xc);
  if (xs.length < 2 || xs.length > GRID_MAX_VALUES) return null;
  const ys = distinct(yc);
  if (ys.length < 2 || ys.length > GRID_MAX_VALUES || xs.length * ys.length > drawn) return null;
  return { xs: xs.sort((a, b) => a - b), ys: ys.sort((a, b) => a - b) };
}

/** Cell boundaries halfway between neighbouring grid values (in scale space), half a step beyond the ends. */
function cellEdges(values: readonly number[], type: ScaleType): number[] {
  const u = values.map((v) => toScaleSpace(type, v));
  const edges: number[] = [];
  for (let i = 0; i <= u.length; i++) {
    const lo = u[Math.max(0, i - 1)] as number;
    const hi = u[Math.min(u.length - 1, i)] as number;
    if (i === 0) edges.push((u[0] as number) - ((u[1] as number) - (u[0] as number)) / 2);
    else if (i === u.length) edges.push((u[i - 1] as number) + ((u[i - 1] as number) - (u[i - 2] as number)) / 2);
    else edges.push((lo + hi) / 2);
  }
  return edges.map((e) => fromScaleSpace(type, e));
}
