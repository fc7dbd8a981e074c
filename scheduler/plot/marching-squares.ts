/**
 * Iso-lines of a field sampled on a rectangular grid, by marching squares: each grid cell is
 * classified by which of its four corners lie at or above the level, the crossing on each cut edge
 * is placed by linear interpolation between the two corner values, and the segments are joined
 * into polylines through the edges they share. Saddle cells are resolved with the mean of the four
 * corners (the cell centre). Cells with a missing (NaN) corner are skipped, so a line stops where
 * the scan has no value.
 *
 * Why not Plot.contour (d3-contour): it places the raster linearly between x1 and x2, whereas scan
 * grids are usually log-spaced and sometimes irregular (explicit value lists). Here the crossings
 * are found in grid-index space and mapped through the actual axis values, so the line is right on
 * any spacing and on log axes.
 *
 * Accuracy: the crossing is exact for a field linear along each edge; for a smooth field the error
 * is O(h^2) in the grid step h (common practice, no source). Interpolate a quantity that is close to
 * linear over a cell, e.g. log10(Omega h^2) on log-spaced masses.
 */

export interface IsoPoint {
  /** fractional grid index along x (0 .. nx-1) */
  readonly i: number;
  /** fractional grid index along y (0 .. ny-1) */
  readonly j: number;
}

type Edge = 'bottom' | 'right' | 'top' | 'left';

/** Edge pairs cut in each of the 16 corner cases (bit 1 bl, 2 br, 4 tr, 8 tl); saddles 5 and 10 apart. */
const CASES: readonly (readonly [Edge, Edge][])[] = [
  [], [['left', 'bottom']], [['bottom', 'right']], [['left', 'right']],
  [['right', 'top']], [], [['bottom', 'top']], [['left', 'top']],
  [['left', 'top']], [['bottom', 'top']], [], [['right', 'top']],
  [['left', 'right']], [['bottom', 'right']], [['left', 'bottom']], [],
];

/**
 * Polylines where `values` crosses `level`. `values[j][i]` is the field at x index i, y index j
 * (rows along y). Returns point lists in fractional index coordinates.
 */
export function isoLines(values: readonly (readonly number[])[], level: number): IsoPoint[][] {
  const ny = values.length;
  const nx = ny > 0 ? (values[0] as readonly number[]).length : 0;
  const v = (i: number, j: number): number => (values[j] as readonly number[])[i] as number;
  const crossing = (i0: number, j0: number, i1: number, j1: number): IsoPoint => {
    const a = v(i0, j0);
    const b = v(i1, j1);
    const t = b === a ? 0.5 : (level - a) / (b - a);
    return { i: i0 + (i1 - i0) * t, j: j0 + (j1 - j0) * t };
  };
  const edgeKey = (i: number, j: number, e: Edge): string =>
    e === 'bottom' ? `h${i},${j}` : e === 'top' ? `h${i},${j + 1}` : e === 'left' ? `v${i},${j}` : `v${i + 1},${j}`;
  const edgePoint = (i: number, j: number, e: Edge): IsoPoint =>
    e === 'bottom' ? crossing(i, j, i + 1, j)
      : e === 'top' ? crossing(i, j + 1, i + 1, j + 1)
        : e === 'left' ? crossing(i, j, i, j + 1)
          : crossing(i + 1, j, i + 1, j + 1);

  // segments keyed by the grid edges they end on; every cut edge is shared by at most two segments
  const points = new Map<string, IsoPoint>();
  const ends = new Map<string, string[]>();
  const link = (a: string, b: string): void => {
    (ends.get(a) ?? ends.set(a, []).get(a) as string[]).push(b);
    (ends.get(b) ?? ends.set(b, []).get(b) as string[]).push(a);
  };
  for (let j = 0; j + 1 < ny; j++) {
    for (let i = 0; i + 1 < nx; i++) {
      const bl = v(i, j);
      const br = v(i + 1, j);
      const tr = v(i + 1, j + 1);
      const tl = v(i, j + 1);
      if (![bl, br, tr, tl].every(Number.isFinite)) continue;
      const code = (bl >= level ? 1 : 0) | (br >= level ? 2 : 0) | (tr >= level ? 4 : 0) | (tl >= level ? 8 : 0);
      let pairs = CASES[code] as readonly [Edge, Edge][];
      if (code === 5 || code === 10) {
        const centreHigh = (bl + br + tr + tl) / 4 >= level;
        const isolateBlTr: [Edge, Edge][] = [['left', 'bottom'], ['right', 'top']];
        const isolateBrTl: [Edge, Edge][] = [['bottom', 'right'], ['left', 'top']];
        // centre high joins the high corners, so the low corners are cut off (and vice versa)
        pairs = (code === 5) === centreHigh ? isolateBrTl : isolateBlTr;
      }
      for (const [e1, e2] of pairs) {
        const k1 = edgeKey(i, j, e1);
        const k2 = edgeKey(i, j, e2);
        if (!points.has(k1)) points.set(k1, edgePoint(i, j, e1));
        if (!points.has(k2)) points.set(k2, edgePoint(i, j, e2));
        link(k1, k2);
      }
    }
  }

  const used = new Set<string>();
  const lines: IsoPoint[][] = [];
  const walk = (start: string): IsoPoint[] => {
    const line = [start];
    used.add(start);
    let current = start;
    for (;;) {
      const next = (ends.get(current) ?? []).find((k) => !used.has(k));
      if (next === undefined) break;
      used.add(next);
      line.push(next);
      current = next;
    }
    // closed loop: repeat the first point so the drawn line closes
    if (line.length > 2 && (ends.get(current) ?? []).includes(start)) line.push(start);
    return line.map((k) => points.get(k) as IsoPoint);
  };
  // open lines start at an end that has one neighbour; what remains are closed loops
  for (const [key, nbrs] of ends) if (nbrs.length === 1 && !used.has(key)) lines.push(walk(key));
  for (const key of ends.keys()) if (!used.has(key)) lines.push(walk(key));
  return lines;
}

/** Maps a fractional index to a data value by interpolating between neighbouring axis values. */
export function indexToValue(axis: readonly number[], index: number, log: boolean): number {
  const i0 = Math.min(Math.max(Math.floor(index), 0), axis.length - 2);
  const t = index - i0;
  const a = axis[i0] as number;
  const b = axis[i0 + 1] as number;
  return log ? 10 ** (Math.log10(a) + t * (Math.log10(b) - Math.log10(a))) : a + t * (b - a);
}
