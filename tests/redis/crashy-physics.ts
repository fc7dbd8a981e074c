/**
 * Stand-in physics (not physics) whose evaluation kills its worker thread at one point (m_chi = 1000
 * GeV, vector mediator, g_q = 0.1 in the test spec), so that the chunk holding it fails at chunk
 * level (not as a flagged point) on every attempt. Other points give the values of
 * tests/scan/fake-physics.ts.
 */
import type { ModelPoint } from '../../physics/model.js';
import type { Observables } from '../../physics/observables.js';
import type { ScanPhysicsSetup } from '../../physics/setup.js';
import { evaluate as fakeEvaluate, prepare as fakePrepare, type FakePrepared } from '../scan/fake-physics.js';

export function prepare(setup: ScanPhysicsSetup): FakePrepared {
  return fakePrepare(setup);
}

export function evaluate(point: ModelPoint, prepared: FakePrepared): Observables {
  if (point.m_chi > 999 && point.mediator === 'vector' && point.g_q < 0.2) process.exit(7);
  return fakeEvaluate(point, prepared);
}
