/**
 * Choice of linear or logarithmic axes from the range a quantity spans, and the padded domain.
 * A quantity is drawn on a log axis when it is strictly positive and spans at least
 * LOG_AXIS_MIN_DECADES decades; the user can force either choice.
 */

export type ScaleChoice = 'auto' | 'log' | 'linear';
export type ScaleType = 'log' | 'linear';

/**
 * Knob: how many decades a positive quantity must span before its axis turns logarithmic. 1.5
 * decades (a factor ~32) keeps a 10-500 GeV mass axis logarithmic, where grid points are usually
 * log-spaced, while a 0.1-1 coupling axis stays linear.
 */
export const LOG_AXIS_MIN_DECADES = 1.5;
/** Knob: fraction of the (log or linear) range added on each side so marks do not sit on the frame. */
export const DOMAIN_PAD_FRACTION = 0.03;

/** Range statistics of one column over the points in a picture. */
export interface ColumnStats {
  /** non-null values */
  readonly count: number;
  readonly min: number | null;
  readonly max: number | null;
  /** smallest strictly positive value, or null when none is */
  readonly minPositive: number | null;
  /** values <= 0 (cannot be placed on a log axis) */
  readonly nonPositive: number;
}

/**
 * Log when no value is negative and the positive values span LOG_AXIS_MIN_DECADES or more. Exact
 * zeros do not prevent a log axis (an axial mediator's sigma_SI is 0 by symmetry, and the other
 * points still span decades): they are left out of the picture and counted in its notes.
 */
export function chooseScale(stats: ColumnStats, choice: ScaleChoice): ScaleType {
  if (choice !== 'auto') return choice;
  if (stats.min === null || stats.max === null || stats.minPositive === null || stats.min < 0) return 'linear';
  return Math.log10(stats.max / stats.minPositive) >= LOG_AXIS_MIN_DECADES ? 'log' : 'linear';
}

/** A padded domain [lo, hi] in data units, or null when no value can be drawn on this scale. */
export function paddedDomain(stats: ColumnStats, type: ScaleType): [number, number] | null {
  if (type === 'log') {
    if (stats.minPositive === null || stats.max === null || stats.max <= 0) return null;
    let lo = Math.log10(stats.minPositive);
    let hi = Math.log10(stats.max);
    if (hi - lo < 1e-9) {
      lo -= 0.5;
      hi += 0.5;
    }
    const pad = (hi - lo) * DOMAIN_PAD_FRACTION;
    return [10 ** (lo - pad), 10 ** (hi + pad)];
  }
  if (stats.min === null || stats.max === null) return null;
  let lo = stats.min;
  let hi = stats.max;
  if (hi - lo <= Math.abs(hi) * 1e-12) {
    const half = lo === 0 ? 1 : Math.abs(lo) * 0.1;
    lo -= half;
    hi += half;
  }
  const pad = (hi - lo) * DOMAIN_PAD_FRACTION;
  return [lo - pad, hi + pad];
}

/** Maps a value to the coordinate in which the scale is linear (log10 for log axes). */
export const toScaleSpace = (type: ScaleType, v: number): number => (type === 'log' ? Math.log10(v) : v);
export const fromScaleSpace = (type: ScaleType, u: number): number => (type === 'log' ? 10 ** u : u);
