/**
 * Automatic axis scale of plots (scheduler/plot/axis-scale.ts): when an axis goes logarithmic,
 * zeros on log axes, explicit choices, and the padding of axis domains.
 */
import { describe, it, expect } from 'vitest';
import { chooseScale, paddedDomain, type ColumnStats } from '../../scheduler/plot/axis-scale.js';

const stats = (values: number[]): ColumnStats => {
  const positive = values.filter((v) => v > 0);
  return {
    count: values.length, min: Math.min(...values), max: Math.max(...values),
    minPositive: positive.length ? Math.min(...positive) : null, nonPositive: values.length - positive.length,
  };
};

describe('automatic axis scale', () => {
  it('goes logarithmic for positive quantities spanning 1.5 decades or more', () => {
    expect(chooseScale(stats([10, 100, 1000]), 'auto')).toBe('log');
    expect(chooseScale(stats([10, 300]), 'auto')).toBe('linear'); // 1.48 decades
    expect(chooseScale(stats([10, 320]), 'auto')).toBe('log'); // 1.505 decades
    expect(chooseScale(stats([0.1, 0.5, 1]), 'auto')).toBe('linear');
  });

  it('keeps a log axis when exact zeros sit among values spanning decades (axial sigma_SI = 0)', () => {
    expect(chooseScale(stats([0, 1e-46, 1e-40]), 'auto')).toBe('log');
    expect(chooseScale(stats([0, 0]), 'auto')).toBe('linear');
  });

  it('stays linear with negative values unless forced, and obeys an explicit choice', () => {
    expect(chooseScale(stats([-1, 1e-3, 1e3]), 'auto')).toBe('linear');
    expect(chooseScale(stats([-1, 1e-3, 1e3]), 'log')).toBe('log');
    expect(chooseScale(stats([1, 1e6]), 'linear')).toBe('linear');
  });

  it('pads log domains in decades and widens a single value', () => {
    const [lo, hi] = paddedDomain(stats([1, 1000]), 'log') ?? [NaN, NaN];
    expect(Math.log10(lo)).toBeCloseTo(-0.09, 12);
    expect(Math.log10(hi)).toBeCloseTo(3.09, 12);
    expect(paddedDomain(stats([5, 5]), 'linear')).toEqual([5 - 0.5 - 0.03, 5 + 0.5 + 0.03]);
    expect(paddedDomain(stats([0]), 'log')).toBeNull();
  });
});
