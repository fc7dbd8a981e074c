/**
 * Sommerfeld factor (physics/indirect/sommerfeld.ts): the Hulthen S(v) and its Maxwellian average
 * against an independent 40-digit mpmath evaluation (tests/fixtures/indirect/sommerfeld.json, made by
 * make_sommerfeld_fixtures.py next to it), the notes' check table against the exact Yukawa factor,
 * the Coulomb limit, which mediators have a potential at all, and the factor in sigv0 and the fluxes.
 */
import { describe, expect, it } from 'vitest';
import fixture from '../fixtures/indirect/sommerfeld.json' with { type: 'json' };
import { maxwellSommerfeld, sommerfeldAlpha, sommerfeldHulthen } from '../../physics/indirect/sommerfeld.js';
import { relativeVelocityScale } from '../../physics/indirect/velocity-average.js';
import { parsePoint, type ModelPoint } from '../../physics/model.js';
import { indirectObservables, prepareIndirect } from '../../physics/indirect/index.js';
import { buildAnnihilation } from '../../physics/annihilation.js';
import { mediatorWidth } from '../../physics/widths.js';
import { DEFAULT_HADRONIC, DEFAULT_HALO, type ScanPhysicsSetup, type Target } from '../../physics/setup.js';

function close(label: string, got: number, expected: number, relTol: number): void {
  const diff = Math.abs(got - expected) / Math.abs(expected);
  expect(diff, `${label}: got ${got}, expected ${expected}, rel diff ${diff.toExponential(2)} > tol ${relTol}`).toBeLessThanOrEqual(relTol);
}

describe('Hulthen S(v) vs mpmath (fixture sommerfeld.json)', () => {
  for (const c of fixture.hulthen) {
    // 1e-12: one closed form in double precision (its denominator written without cancellation)
    it(`m_phi = ${c.mPhiGeV} GeV, v = ${c.vRel}`, () => close('S', sommerfeldHulthen(c.vRel, c.alpha, c.mChiGeV, c.mPhiGeV), c.S, 1e-12));
  }
});

describe('Maxwellian average of S vs mpmath (fixture sommerfeld.json)', () => {
  for (const c of fixture.maxwellMeans) {
    it(c.what, () => {
      const w = relativeVelocityScale(c.sigmaKmS);
      close('w', w, c.w, 1e-14);
      const avg = maxwellSommerfeld(w, c.alpha, c.mChiGeV, c.mPhiGeV);
      expect(avg.converged).toBe(true);
      // the adaptive rule runs at 1e-8 relative; 1e-7 leaves room for its error estimate
      close('<S>', avg.mean, c.meanS, 1e-7);
    });
  }
});

describe('regression: cancellation in the denominator at small x and c', () => {
  it('a heavy mediator with a tiny coupling averages to 1 + 1e-11 and converges (the terms of order 1 used to cancel to noise of 1e-7)', () => {
    const c = fixture.maxwellMeans.find((m) => m.what.startsWith('heavy mediator, tiny coupling'))!;
    const avg = maxwellSommerfeld(relativeVelocityScale(c.sigmaKmS), c.alpha, c.mChiGeV, c.mPhiGeV);
    expect(avg.converged).toBe(true);
    expect(Math.abs(avg.mean - c.meanS), `got ${avg.mean}, mpmath ${c.meanS}`).toBeLessThan(1e-13);
  });
});

describe('limits and the approximation', () => {
  it('Coulomb limit: S -> (2 pi alpha / v)/(1 - exp(-2 pi alpha / v)) as m_phi -> 0 (Sommerfeld factor, e.g. Cassel 2010 eq. for the Coulomb case; indirect.md B8)', () => {
    for (const [alpha, v] of [[0.01, 1e-3], [0.1, 1e-2], [0.03, 0.3]] as const) {
      const t = (2 * Math.PI * alpha) / v;
      close(`alpha ${alpha}, v ${v}`, sommerfeldHulthen(v, alpha, 1000, 1e-9), t / -Math.expm1(-t), 1e-6);
    }
  });

  it('within 3 % of the exact Yukawa factor away from resonances, 25 % near them (indirect.md B8 check table, numerical Schroedinger solution)', () => {
    // [m_phi, v, exact]; m_chi = 1000 GeV, alpha = 0.01
    const exact = [[1.0, 1e-1, 1.345], [1.0, 1e-2, 6.284], [0.5, 1e-3, 61.93]] as const;
    for (const [mPhi, v, s] of exact) close(`m_phi ${mPhi}, v ${v}`, sommerfeldHulthen(v, 0.01, 1000, mPhi), s, 0.03);
    const nearResonance = [[1.0, 1e-3, 52.72], [5.0, 1e-3, 110.8]] as const;
    for (const [mPhi, v, s] of nearResonance) close(`m_phi ${mPhi}, v ${v}`, sommerfeldHulthen(v, 0.01, 1000, mPhi), s, 0.25);
  });

  it('saturates below v ~ m_phi/m_chi at 2 pi^2 c / (1 - cos 2 pi sqrt c) off resonance (indirect.md B8)', () => {
    const c = (6 * 0.01 * 1000) / (Math.PI ** 2 * 1.0);
    close('S(v -> 0)', sommerfeldHulthen(1e-9, 0.01, 1000, 1.0), (2 * Math.PI ** 2 * c) / (1 - Math.cos(2 * Math.PI * Math.sqrt(c))), 1e-6);
  });

  it('no coupling, no enhancement; a heavy mediator barely enhances (common practice, no source)', () => {
    expect(maxwellSommerfeld(1e-3, 0, 100, 1).mean).toBe(1);
    const heavy = maxwellSommerfeld(1e-3, 0.001, 100, 1000).mean;
    expect(heavy).toBeGreaterThan(1);
    expect(heavy).toBeLessThan(1.01);
  });

  it('a potential for scalar (Dirac, Majorana) and vector (Dirac) exchange only (indirect.md B8)', () => {
    const pt = (dm: string, mediator: string): ModelPoint => parsePoint({ dm, mediator, m_chi: 100, m_med: 1, g_chi: 0.5, g_q: 0.1 }).point!;
    const alpha = 0.25 / (4 * Math.PI);
    expect(sommerfeldAlpha(pt('dirac', 'scalar'))).toBeCloseTo(alpha, 15);
    expect(sommerfeldAlpha(pt('majorana', 'scalar'))).toBeCloseTo(alpha, 15);
    expect(sommerfeldAlpha(pt('dirac', 'vector'))).toBeCloseTo(alpha, 15);
    expect(sommerfeldAlpha(pt('majorana', 'vector'))).toBeNull();
    expect(sommerfeldAlpha(pt('dirac', 'axial'))).toBeNull();
    expect(sommerfeldAlpha(pt('dirac', 'pseudoscalar'))).toBeNull();
  });
});

describe('the factor in sigv0 and the fluxes (physics/indirect/index.ts)', () => {
  // alpha = 0.01, m_chi = 1000 GeV, m_phi = 1 GeV: the fixture's Milky-Way and dwarf cases
  const gChi = Math.sqrt(4 * Math.PI * 0.01);
  const halo = { ...DEFAULT_HALO, galactic: { ...DEFAULT_HALO.galactic, sigmaVKmS: 150 } };
  // invented targets for tests (not real objects)
  const gc: Target = { name: 'gc_cone', kind: 'galactic_centre', coneDeg: 1, energyGeV: [1, Infinity] };
  const dwarf: Target = {
    name: 'invented_dwarf', kind: 'satellite', coneDeg: 0.5, distanceKpc: 100, energyGeV: [1, Infinity], velocityDispersionKmS: 10,
    profile: { kind: 'nfw', rsKpc: 0.5, rhoSGeVcm3: 3.8, rTruncKpc: 5 },
  };
  const setupWith = (sommerfeld: boolean): ScanPhysicsSetup => ({
    halo, detectors: [], targets: [gc, dwarf], hadronic: DEFAULT_HADRONIC, ...(sommerfeld ? { sommerfeld: 'hulthen' as const } : {}),
  });
  const both = (p: ModelPoint) => {
    const ann = buildAnnihilation(p, mediatorWidth(p).totalGeV);
    return [indirectObservables(p, ann, prepareIndirect(setupWith(false))), indirectObservables(p, ann, prepareIndirect(setupWith(true)))] as const;
  };
  const mw = fixture.maxwellMeans.find((c) => c.sigmaKmS === 150 && c.mPhiGeV === 1)!;
  const dw = fixture.maxwellMeans.find((c) => c.sigmaKmS === 10 && c.mPhiGeV === 1)!;

  it('vector, Dirac, light mediator (s-wave pair annihilation): sigv0 and the GC flux grow by <S> of the Milky Way, the dwarf flux by its own', () => {
    const [off, on] = both(parsePoint({ dm: 'dirac', mediator: 'vector', m_chi: 1000, m_med: 1, g_chi: gChi, g_q: 0.25 }).point!);
    // every channel is s-wave here: the ratio is <S> up to the p-wave part, ~ v^2 ~ 1e-6
    close('sigv0 on/off vs mpmath <S> (Milky Way)', on.sigv0Cm3s / off.sigv0Cm3s, mw.meanS, 1e-4);
    close('GC flux on/off', (on.fluxByTarget[0] as number) / (off.fluxByTarget[0] as number), mw.meanS, 1e-4);
    close('dwarf flux on/off vs mpmath <S> (sigma = 10 km/s)', (on.fluxByTarget[1] as number) / (off.fluxByTarget[1] as number), dw.meanS, 1e-4);
    expect(on.flags).toContain('sommerfeld_hulthen');
    expect(off.flags).not.toContain('sommerfeld_hulthen');
    for (const [k, v] of Object.entries(off.branching)) close(`BR ${k}`, on.branching[k] as number, v, 1e-4);
  });

  it('scalar, Dirac: p-wave annihilation is not enhanced (the s-wave factor only; indirect.md B8)', () => {
    const [off, on] = both(parsePoint({ dm: 'dirac', mediator: 'scalar', m_chi: 1000, m_med: 1, g_chi: gChi, g_q: 0.25 }).point!);
    // the s-wave part is extrapolated to v = 0 from two probes, so the p-wave sigma v leaks in at O(v^4)
    expect(on.sigv0Cm3s / off.sigv0Cm3s).toBeLessThan(1 + 1e-6);
    expect(on.sigv0Cm3s / off.sigv0Cm3s).toBeGreaterThanOrEqual(1);
  });

  it('axial exchange: no factor, and a flag says so', () => {
    const [off, on] = both(parsePoint({ dm: 'dirac', mediator: 'axial', m_chi: 1000, m_med: 1, g_chi: gChi, g_q: 0.25 }).point!);
    expect(on.sigv0Cm3s).toBe(off.sigv0Cm3s);
    expect(on.flags).toContain('sommerfeld_not_applied');
    expect(off.flags).not.toContain('sommerfeld_not_applied');
  });
});
