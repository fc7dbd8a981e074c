/**
 * Iso-lines by marching squares (scheduler/plot/marching-squares.ts): exact lines for linear fields,
 * a closed circle within the interpolation error, saddle cells, missing corners and log-spaced axes.
 */
import { describe, it, expect } from 'vitest';
import { isoLines, indexToValue } from '../../scheduler/plot/marching-squares.js';

const grid = (n: number, lo: number, hi: number): number[] => Array.from({ length: n }, (_, i) => lo + ((hi - lo) * i) / (n - 1));

describe('marching squares', () => {
  it('a field linear in x gives the exact vertical line (linear interpolation is exact; common practice, no source)', () => {
    const xs = grid(11, 0, 1);
    const values = xs.map(() => xs.map((x) => 3 * x - 1)); // rows along y, same in every row
    const lines = isoLines(values, 0.5); // 3x - 1 = 0.5 at x = 0.5 -> index 5
    expect(lines).toHaveLength(1);
    const line = lines[0] ?? [];
    expect(line).toHaveLength(11);
    for (const p of line) expect(Math.abs(p.i - 5), `point ${JSON.stringify(p)}: got i=${p.i}, expected 5`).toBeLessThan(1e-12);
    expect(line.map((p) => p.j).sort((a, b) => a - b)).toEqual(grid(11, 0, 10));
  });

  it('a circle r^2 = 1 closes on itself and stays within the O(h^2) interpolation error (common practice, no source)', () => {
    const h = 0.1;
    const xs = grid(41, -2, 2);
    const values = xs.map((y) => xs.map((x) => x * x + y * y));
    const lines = isoLines(values, 1);
    expect(lines).toHaveLength(1);
    const line = lines[0] ?? [];
    expect(line[0]).toEqual(line[line.length - 1]);
    // along an edge r^2 is quadratic; linear interpolation misplaces the crossing by at most
    // h^2/4 * (d2 f/ds2 = 2) / |grad f| = h^2 / 4 at r = 1: tolerance h^2 / 4 in radius
    for (const p of line) {
      const x = -2 + p.i * h;
      const y = -2 + p.j * h;
      const r = Math.hypot(x, y);
      expect(Math.abs(r - 1), `point (${x}, ${y}): got r=${r}, expected 1 +- ${h * h / 4}`).toBeLessThanOrEqual(h * h / 4 + 1e-12);
    }
  });

  it('resolves a saddle cell by its centre value', () => {
    // corners bl=1, br=0, tr=1, tl=0: centre 0.5 >= 0.4 joins the high corners, cutting off br and tl
    const high = isoLines([[1, 0], [0, 1]], 0.4);
    expect(high).toHaveLength(2);
    const cutsOff = (line: { i: number; j: number }[], corner: [number, number]): boolean =>
      line.every((p) => Math.hypot(p.i - corner[0], p.j - corner[1]) < 0.7);
    expect(high.some((l) => cutsOff(l, [1, 0])) && high.some((l) => cutsOff(l, [0, 1]))).toBe(true);
    // centre 0.5 < 0.6: the high corners bl and tr are the isolated ones
    const low = isoLines([[1, 0], [0, 1]], 0.6);
    expect(low.some((l) => cutsOff(l, [0, 0])) && low.some((l) => cutsOff(l, [1, 1]))).toBe(true);
  });

  it('skips cells with a missing corner and draws nothing when the level is not crossed', () => {
    const values = [[0, 1, NaN], [0, 1, 2], [0, 1, 2]];
    const lines = isoLines(values, 1.5);
    // only the lower-right cell has the crossing but holds NaN; the upper-right cell is complete
    expect(lines).toHaveLength(1);
    for (const p of lines[0] ?? []) expect(p.j).toBeGreaterThanOrEqual(1);
    expect(isoLines([[0, 0], [0, 0]], 1)).toEqual([]);
  });

  it('maps fractional indices through log-spaced axis values', () => {
    const axis = [10, 100, 1000];
    expect(indexToValue(axis, 0.5, true)).toBeCloseTo(Math.sqrt(1000), 9);
    expect(indexToValue(axis, 1.5, false)).toBeCloseTo(550, 9);
    expect(indexToValue(axis, 2, true)).toBeCloseTo(1000, 9);
  });
});
