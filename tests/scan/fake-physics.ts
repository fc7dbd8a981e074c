/**
 * A deterministic stand-in for physics/evaluate.ts used only to test scheduling mechanics quickly
 * (it is not physics): every observable is a fixed smooth function of the parameters, and points with
 * g_q > 0.95 throw, to exercise the flagged-error path.
 */
import type { ModelPoint } from '../../physics/model.js';
import { numericObservableNames, type Observables } from '../../physics/observables.js';
import type { ScanPhysicsSetup } from '../../physics/setup.js';

export interface FakePrepared {
  readonly observableNames: readonly string[];
  readonly knobs: { readonly fake: number };
}

export function prepare(setup: ScanPhysicsSetup): FakePrepared {
  return { observableNames: numericObservableNames(setup.detectors.map((d) => d.name), setup.targets.map((t) => t.name)), knobs: { fake: 1 } };
}

export function evaluate(point: ModelPoint, prepared: FakePrepared): Observables {
  if (point.g_q > 0.95) throw new Error(`fake physics refuses g_q = ${point.g_q}, by design`);
  const values: Record<string, number> = {};
  prepared.observableNames.forEach((name, k) => {
    let x = Math.log(point.m_chi) * (k + 1) + point.g_chi * Math.sqrt(point.m_med) - point.g_q;
    for (let i = 0; i < 200; i++) x = Math.sin(x) * 1.7 + Math.cos(x * 0.3 + k);
    values[name] = k === 2 && point.m_chi > 500 ? NaN : Math.exp(x) * 1e-30;
  });
  return { values, flags: point.g_chi > 1 ? 'nonperturbative' : '' };
}
