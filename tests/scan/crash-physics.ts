/**
 * The stand-in physics of fake-physics.ts, except that a point with g_q > 0.95 and m_chi > 500 kills its worker
 * thread outright (as a native crash or out-of-memory would), to test chunk retries and failures.
 */
import type { ModelPoint } from '../../physics/model.js';
import type { Observables } from '../../physics/observables.js';
import { evaluate as fakeEvaluate, prepare, type FakePrepared } from './fake-physics.js';

export { prepare };

export function evaluate(point: ModelPoint, prepared: FakePrepared): Observables {
  if (point.g_q > 0.95 && point.m_chi > 500) process.exit(3);
  return fakeEvaluate(point, prepared);
}
