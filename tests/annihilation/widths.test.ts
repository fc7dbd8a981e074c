/**
 * Mediator widths (physics/widths.ts): partial widths against explicit-spinor numerics and mpmath
 * (tests/fixtures/annihilation/generate_annihilation_fixtures.py), the benchmark widths of the shared
 * notes indirect.md A3, the gluon-loop amplitudes and their heavy- and light-quark limits, and the
 * Majorana and threshold conventions.
 */
import { describe, expect, it } from 'vitest';
import type { ModelPoint } from '../../physics/model.js';
import { QUARKS } from '../../physics/constants.js';
import {
  loopAmplitudePseudoscalar, loopAmplitudeScalar, mediatorWidth,
} from '../../physics/widths.js';
import { FIXTURES, expectRel } from './fixtures.js';

const point = (p: Partial<ModelPoint>): ModelPoint => ({
  dm: 'dirac', mediator: 'vector', m_chi: 100, m_med: 1000, g_chi: 1, g_q: 0.25, g_l: 0, width_med: null, ...p,
});
const opts = { alphaS: FIXTURES.alphaS, vevGeV: FIXTURES.vevGeV };

describe('mediator partial widths against explicit-spinor numerics and mpmath (generate_annihilation_fixtures.py)', () => {
  for (const c of FIXTURES.widths) {
    const label = `${c.point.mediator} m_chi=${c.point.m_chi} M=${c.point.m_med} g=(${c.point.g_chi},${c.point.g_q},${c.point.g_l})`;
    it(label, () => {
      const w = mediatorWidth({ ...c.point, width_med: null }, FIXTURES.fermions, opts);
      expect(Object.keys(w.partialsGeV).sort()).toEqual(Object.keys(c.partialsGeV).sort());
      // tree-level widths are closed forms vs numerical spin sums: agreement to rounding (1e-9 allows
      // the light-quark cancellations in beta); the gg width is the same formula in mpmath
      for (const [k, expected] of Object.entries(c.partialsGeV)) {
        expectRel(w.partialsGeV[k] as number, expected, 1e-9, `${label} partial ${k}`);
      }
      expectRel(w.totalGeV, c.totalGeV, 1e-9, `${label} total`);
    });
  }
});

describe('benchmark widths of indirect.md A3 (shared notes, [derived+num]); printed to 4 digits', () => {
  const cases: Array<[Partial<ModelPoint>, number, number]> = [
    [{ mediator: 'vector', m_chi: 100, m_med: 1000, g_chi: 1, g_q: 0.25 }, 56.32, 0.0563],
    [{ mediator: 'axial', m_chi: 100, m_med: 1000, g_chi: 1, g_q: 0.25 }, 53.93, 0.0539],
    [{ mediator: 'scalar', m_chi: 100, m_med: 300, g_chi: 1, g_q: 1 }, 4.957, 0.0165],
    [{ mediator: 'pseudoscalar', m_chi: 100, m_med: 300, g_chi: 1, g_q: 1 }, 8.918, 0.0297],
  ];
  for (const [p, gamma, ratio] of cases) {
    it(`${p.mediator} M=${p.m_med}: Gamma=${gamma} GeV`, () => {
      const w = mediatorWidth(point(p), FIXTURES.fermions, opts);
      // tolerance: half a unit of the last printed digit
      expect(Math.abs(w.totalGeV - gamma), `got ${w.totalGeV}, expected ${gamma}`).toBeLessThanOrEqual(0.5 * 10 ** (Math.floor(Math.log10(gamma)) - 3));
      expect(Math.abs(w.totalGeV / (p.m_med as number) - ratio)).toBeLessThanOrEqual(0.5e-4 + 1e-12);
    });
  }
  it('V benchmark: five light quarks share the quark width equally (Gamma/M 5.6%, Boveia et al. 2016 [memory])', () => {
    const w = mediatorWidth(point({}), FIXTURES.fermions, opts);
    for (const q of ['u', 'd', 's', 'c', 'b']) expectRel(w.partialsGeV[q] as number, 0.25 ** 2 * 3 * 1000 / (12 * Math.PI), 1e-4, q);
  });
});

describe('loop amplitudes of the gluon width', () => {
  for (const c of FIXTURES.loops) {
    it(`${c.kind} tau=${c.tau} against mpmath`, () => {
      const a = c.kind === 'scalar' ? loopAmplitudeScalar(c.tau) : loopAmplitudePseudoscalar(c.tau);
      // closed form, double precision; tau=1e-4 loses ~8 digits in (tau + (tau-1) f)/tau^2 for the scalar
      const tol = c.tau < 1e-3 ? 1e-6 : 1e-12;
      expectRel(a.re, c.re, tol, `re A(${c.tau})`);
      expect(Math.abs(a.im - c.im), `im A(${c.tau}): got ${a.im}, expected ${c.im}`).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(c.im)));
    });
  }
  it('heavy-quark limits A_S -> 4/3, A_P -> 2 (Djouadi 2008, Phys. Rept. 457, 1 and 459, 1)', () => {
    expectRel(loopAmplitudeScalar(1e-3).re, 4 / 3, 1e-3, 'A_S(1e-3)');
    expectRel(loopAmplitudePseudoscalar(1e-6).re, 2, 1e-6, 'A_P(1e-6)');
    // leading correction from the Taylor series arcsin^2(sqrt t) = t + t^2/3 + 8 t^3/45 + ...
    // (common practice, no source): A_S = 4/3 (1 + 7 tau/30), A_P = 2 (1 + tau/3); O(tau^2) left over
    expectRel(loopAmplitudeScalar(1e-2).re, (4 / 3) * (1 + 0.07 / 30), 1e-4, 'A_S(1e-2)');
    expectRel(loopAmplitudePseudoscalar(1e-2).re, 2 * (1 + 1e-2 / 3), 1e-4, 'A_P(1e-2)');
  });
  it('light-quark limit: amplitudes vanish like ln^2(tau)/tau and are continuous at tau = 1', () => {
    expect(Math.hypot(loopAmplitudeScalar(1e8).re, loopAmplitudeScalar(1e8).im)).toBeLessThan(1e-5);
    const below = loopAmplitudePseudoscalar(1 - 1e-12);
    const above = loopAmplitudePseudoscalar(1 + 1e-12);
    expect(Math.abs(below.re - above.re)).toBeLessThan(1e-5);
    expect(Math.abs(above.im)).toBeLessThan(1e-5);
  });
});

describe('width conventions and thresholds', () => {
  it('Majorana: DM partial width is half the Dirac one for S, P, A and zero for V (indirect.md A6)', () => {
    for (const mediator of ['scalar', 'pseudoscalar', 'axial'] as const) {
      const d = mediatorWidth(point({ mediator }));
      const m = mediatorWidth(point({ mediator, dm: 'majorana' }));
      expectRel(m.partialsGeV.dm as number, (d.partialsGeV.dm as number) / 2, 1e-15, mediator);
      expectRel(m.partialsGeV.b as number, d.partialsGeV.b as number, 0, mediator);
    }
    const mv = mediatorWidth(point({ dm: 'majorana' }));
    expect(mv.partialsGeV.dm).toBeUndefined();
  });
  it('closed channels do not contribute: no top below 2 m_t, no DM pair below 2 m_chi', () => {
    const w = mediatorWidth(point({ m_chi: 200, m_med: 340 }));
    expect(w.partialsGeV.t).toBeUndefined();
    expect(w.partialsGeV.dm).toBeUndefined();
    const mt = (QUARKS.find((q) => q.name === 't') as { massGeV: number }).massGeV;
    expect(mediatorWidth(point({ m_med: 2 * mt * (1 + 1e-9) })).partialsGeV.t).toBeGreaterThan(0);
  });
  it('leptons count only when g_l > 0; gluons only for spin 0', () => {
    expect(mediatorWidth(point({})).partialsGeV.tau).toBeUndefined();
    expect(mediatorWidth(point({ g_l: 0.01 })).partialsGeV.tau).toBeGreaterThan(0);
    expect(mediatorWidth(point({})).partialsGeV.gg).toBeUndefined();
    expect(mediatorWidth(point({ mediator: 'scalar' })).partialsGeV.gg).toBeGreaterThan(0);
  });
  it('default fermion masses come from physics/constants (PDG 2024) and differ slightly from the A3 set', () => {
    const a = mediatorWidth(point({ mediator: 'scalar', m_med: 300, g_q: 1 }));
    const b = mediatorWidth(point({ mediator: 'scalar', m_med: 300, g_q: 1 }), FIXTURES.fermions, opts);
    expect(a.partialsGeV.b).not.toBe(b.partialsGeV.b);
    expectRel(a.partialsGeV.b as number, b.partialsGeV.b as number, 0.01, 'm_b 4.183 vs 4.18');
  });
  it('total is the sum of the partials and scales as g^2 for a single open channel', () => {
    const w = mediatorWidth(point({ m_chi: 600 }));
    const sum = Object.values(w.partialsGeV).reduce((x, y) => x + y, 0);
    expect(w.totalGeV).toBe(sum);
    const w2 = mediatorWidth(point({ m_chi: 600, g_q: 0.5 }));
    expectRel(w2.totalGeV, 4 * w.totalGeV, 1e-14, 'g_q doubled');
  });
});
