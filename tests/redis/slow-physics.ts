/**
 * The deterministic stand-in physics of tests/scan/fake-physics.ts (not physics), made to take a
 * fixed wall time per point (DSTEST_MS_PER_POINT, default 3 ms) so that kills land mid-chunk. The
 * values are exactly those of fake-physics.ts: only the timing differs.
 */
import type { ModelPoint } from '../../physics/model.js';
import type { Observables } from '../../physics/observables.js';
import type { ScanPhysicsSetup } from '../../physics/setup.js';
import { evaluate as fakeEvaluate, prepare as fakePrepare, type FakePrepared } from '../scan/fake-physics.js';

const MS_PER_POINT = Number(process.env.DSTEST_MS_PER_POINT ?? 3);

export function prepare(setup: ScanPhysicsSetup): FakePrepared {
  return fakePrepare(setup);
}

export function evaluate(point: ModelPoint, prepared: FakePrepared): Observables {
  const until = performance.now() + MS_PER_POINT;
  while (performance.now() < until);
  return fakeEvaluate(point, prepared);
}
