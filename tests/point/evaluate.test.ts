/**
 * Properties of the whole pipeline (physics/evaluate.ts) on real model points: scaling with the
 * couplings, freeze-out range, determinism, and the validity flags.
 */
import { describe, expect, it } from 'vitest';
import { prepare, evaluate } from '../../physics/evaluate.js';
import { parsePoint, type ModelPoint } from '../../physics/model.js';
import { EMPTY_SETUP } from '../../physics/setup.js';

const prepared = prepare(EMPTY_SETUP);
function at(raw: Record<string, unknown>): ModelPoint {
  const { point, issues } = parsePoint(raw);
  if (!point) throw new Error(JSON.stringify(issues));
  return point;
}

describe('evaluate: properties', () => {
  it('Omega h^2 falls as the couplings grow away from resonance, roughly as 1/<sigma v>', () => {
    // s-wave vector exchange, m_med >> 2 m_chi: sigma v ~ g_chi^2 g_q^2 (relic.md §3.1: Y0 ~ x_f / (lambda <sigma v>),
    // Kolb & Turner 1990 ch. 5, from memory); the width grows too, but stays far from the pole.
    const omegas = [0.1, 0.2, 0.4, 0.8].map((g) => evaluate(at({ mediator: 'vector', m_chi: 200, m_med: 3000, g_chi: 1, g_q: g }), prepared).values.omega_h2!);
    for (let i = 1; i < omegas.length; i++) {
      expect(omegas[i]!).toBeLessThan(omegas[i - 1]!);
      // doubling g_q multiplies sigma v by ~4: Omega drops by ~4 up to the logarithmic x_f shift (common practice, no source)
      const ratio = omegas[i - 1]! / omegas[i]!;
      expect(ratio).toBeGreaterThan(3.3);
      expect(ratio).toBeLessThan(4.5);
    }
  });

  it('x_f lies in 18-30 for weak-scale points near the thermal cross section (relic.md §6.1 table; Kolb & Turner 1990, from memory)', () => {
    // "near thermal" = 0.01 < Omega h^2 < 10: far weaker annihilation freezes out earlier (x_f ~ 16 at Omega ~ 60)
    let checked = 0;
    for (const mediator of ['vector', 'axial', 'scalar', 'pseudoscalar']) {
      for (const [m, g] of [[30, 0.5], [300, 0.5], [3000, 0.5], [300, 1.5], [3000, 2]] as const) {
        const r = evaluate(at({ mediator, m_chi: m, m_med: 5 * m, g_chi: 1, g_q: g }), prepared);
        const omega = r.values.omega_h2!;
        if (!(omega > 0.01 && omega < 10)) continue;
        checked++;
        expect(r.values.x_f, `${mediator} m=${m} g_q=${g} omega=${omega}`).toBeGreaterThan(18);
        expect(r.values.x_f, `${mediator} m=${m} g_q=${g} omega=${omega}`).toBeLessThan(30);
      }
    }
    expect(checked).toBeGreaterThanOrEqual(6);
  });

  it('is deterministic: the same point gives bit-identical observables', () => {
    const p = at({ mediator: 'axial', dm: 'majorana', m_chi: 420, m_med: 900, g_chi: 0.7, g_q: 0.3 });
    const a = evaluate(p, prepared);
    const b = evaluate(p, prepare(EMPTY_SETUP));
    expect(Object.is(a.values.omega_h2, b.values.omega_h2)).toBe(true);
    expect(b).toEqual(a);
  });

  it('Majorana dark matter has no vector current: no annihilation, no SI signal (indirect.md A6)', () => {
    const r = evaluate(at({ mediator: 'vector', dm: 'majorana' }), prepared);
    expect(r.flags).toContain('no_annihilation');
    expect(Number.isNaN(r.values.omega_h2)).toBe(true);
    expect(r.values.sigma_si_p_cm2).toBe(0);
  });

  it('raises the validity flags at their documented thresholds', () => {
    expect(evaluate(at({ g_chi: 4 }), prepared).flags).toContain('nonperturbative');
    expect(evaluate(at({ g_chi: 3 }), prepared).flags).not.toContain('nonperturbative');
    expect(evaluate(at({ m_chi: 2, m_med: 100 }), prepared).flags).toContain('hadronic_threshold');
    expect(evaluate(at({ m_chi: 100, m_med: 1000, width_med: 400 }), prepared).flags).toContain('broad_mediator');
    expect(evaluate(at({ m_chi: 100, m_med: 1000 }), prepared).flags).toBe('');
    // sqrt(pi/2) m_med / g_chi = 125.3 GeV for m_med = 100, g_chi = 1 (Kahlhoefer et al. 2016, JHEP 02, 016, from memory)
    expect(evaluate(at({ mediator: 'axial', m_chi: 130, m_med: 100 }), prepared).flags).toContain('axial_unitarity');
    expect(evaluate(at({ mediator: 'axial', m_chi: 120, m_med: 100 }), prepared).flags).not.toContain('axial_unitarity');
  });

  it('a given width_med replaces the minimal width', () => {
    const r = evaluate(at({ m_chi: 100, m_med: 1000, width_med: 12.5 }), prepared);
    expect(r.values.width_med_gev).toBe(12.5);
  });
});
