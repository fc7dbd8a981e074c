/**
 * The stand-in physics of fake-physics.ts (same prepare, same values, same knobs, so a scan started
 * with one resumes with the other), except that each point first sleeps SLOW_MS_PER_POINT ms without
 * using the CPU: chunks then take a known minimum time on any machine, which the signal tests need
 * to have chunks in flight when a signal arrives. Not physics.
 */
import type { ModelPoint } from '../../physics/model.js';
import type { Observables } from '../../physics/observables.js';
import { evaluate as fakeEvaluate, prepare, type FakePrepared } from './fake-physics.js';

export { prepare };

export const SLOW_MS_PER_POINT = 20;
const cell = new Int32Array(new SharedArrayBuffer(4));

export function evaluate(point: ModelPoint, prepared: FakePrepared): Observables {
  Atomics.wait(cell, 0, 0, SLOW_MS_PER_POINT);
  return fakeEvaluate(point, prepared);
}
