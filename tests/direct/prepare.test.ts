/**
 * The direct-detection stage end to end (physics/direct/prepare.ts) on invented demo detectors:
 * cache hits equal misses bit for bit, detector order, contact-limit and light-mediator scaling,
 * SD events and flags, the bounded kernel memo, and errors that name the field.
 */
import { describe, expect, it } from 'vitest';
import { directObservables, prepareDirect, KERNEL_MEMO_CAPACITY } from '../../physics/direct/index.js';
import type { ModelPoint } from '../../physics/model.js';
import { DEFAULT_HADRONIC, DEFAULT_HALO, type Detector, type ScanPhysicsSetup } from '../../physics/setup.js';

// invented demo detectors (fictional experiments)
const DETECTORS: Detector[] = [
  { name: 'demo_xenon', target: 'Xe', windowKeV: [3, 45], efficiency: [[2, 0], [5, 0.6], [20, 0.9], [45, 0.8]], exposureKgDay: 2e5 },
  { name: 'demo_argon', target: 'Ar', windowKeV: [30, 120], efficiency: 0.7, exposureKgDay: 5e5 },
  { name: 'demo_bolometer', target: 'CaWO4', windowKeV: [1, 40], efficiency: 0.9, exposureKgDay: 100 },
];
const setup = (detectors = DETECTORS, extra: Partial<ScanPhysicsSetup> = {}): ScanPhysicsSetup =>
  ({ halo: DEFAULT_HALO, detectors, targets: [], hadronic: DEFAULT_HADRONIC, ...extra });
const point = (p: Partial<ModelPoint>): ModelPoint => ({
  dm: 'dirac', mediator: 'vector', m_chi: 100, m_med: 1000, g_chi: 1, g_q: 0.25, g_l: 0, width_med: null, ...p,
});

describe('prepareDirect / directObservables', () => {
  it('a cache hit is bit-identical to a miss, whatever was evaluated before', () => {
    const points = [point({}), point({ mediator: 'scalar', m_chi: 37.5, m_med: 12 }), point({ mediator: 'axial', m_chi: 8 }),
      point({ m_med: 0.05, m_chi: 250 })];
    const warm = prepareDirect(setup());
    for (const p of points) directObservables(p, warm);
    for (const p of [...points].reverse()) {
      const hit = directObservables(p, warm);
      const miss = directObservables(p, prepareDirect(setup()));
      expect(hit.eventsByDetector.length).toBe(3);
      for (let d = 0; d < 3; d++) expect(Object.is(hit.eventsByDetector[d], miss.eventsByDetector[d]), `detector ${d} point ${JSON.stringify(p)}`).toBe(true);
      expect(hit.flags).toEqual(miss.flags);
    }
    expect(warm.tableNodes().every((n) => n > 0)).toBe(true);
  });

  it('events follow the detector order of the setup', () => {
    const p = point({});
    const a = directObservables(p, prepareDirect(setup()));
    const b = directObservables(p, prepareDirect(setup([...DETECTORS].reverse())));
    expect([...b.eventsByDetector]).toEqual([...a.eventsByDetector].reverse());
  });

  it('events scale as (g_chi g_q)^2 and m_med^-4 in the contact limit', () => {
    const pr = prepareDirect(setup());
    const a = directObservables(point({ g_chi: 0.3, g_q: 0.2, m_med: 2000 }), pr);
    const b = directObservables(point({ g_chi: 0.6, g_q: 0.5, m_med: 1000 }), pr);
    for (let d = 0; d < 3; d++) {
      const ratio = b.eventsByDetector[d]! / a.eventsByDetector[d]!;
      expect(Math.abs(ratio / ((0.6 * 0.5) / (0.3 * 0.2)) ** 2 / 16 - 1)).toBeLessThan(1e-12);
    }
  });

  it('light mediator: propagator suppresses the events relative to the contact scaling, flagged', () => {
    const pr = prepareDirect(setup());
    const heavy = directObservables(point({ m_med: 100 }), pr);
    const light = directObservables(point({ m_med: 0.05 }), pr);
    expect(light.flags).toContain('light_mediator');
    for (let d = 0; d < 3; d++) {
      const contact = heavy.eventsByDetector[d]! * (100 / 0.05) ** 4;
      expect(light.eventsByDetector[d]!).toBeLessThan(contact);
      expect(light.eventsByDetector[d]!).toBeGreaterThan(0);
    }
    // same sigma at q = 0 (contact definition)
    expect(light.sigmaSiPCm2 / heavy.sigmaSiPCm2).toBeCloseTo((100 / 0.05) ** 4, -8);
  });

  it('axial mediator: SD events only where spin-carrying isotopes exist, flagged approximate', () => {
    const r = directObservables(point({ mediator: 'axial' }), prepareDirect(setup()));
    expect(r.sigmaSiPCm2).toBe(0);
    expect(r.eventsByDetector[0]).toBeGreaterThan(0); // 129Xe, 131Xe
    expect(r.eventsByDetector[1]).toBe(0); // natural argon: no spin data
    expect(r.eventsByDetector[2]).toBeGreaterThan(0); // 17O in CaWO4
    expect(r.flags).toContain('sd_events_approximate');
  });

  it('suppressed and vanishing cases give zero events with the right flags', () => {
    const pr = prepareDirect(setup());
    const ps = directObservables(point({ mediator: 'pseudoscalar' }), pr);
    expect([...ps.eventsByDetector]).toEqual([0, 0, 0]);
    expect(ps.flags).toEqual(['dd_suppressed_o6', 'velocity_suppressed_dd']);
    const mv = directObservables(point({ dm: 'majorana' }), pr);
    expect([...mv.eventsByDetector]).toEqual([0, 0, 0]);
    const lep = directObservables(point({ g_q: 0, g_l: 1 }), pr);
    expect(lep.flags).toEqual(['leptophilic']);
    expect(pr.cachedKernels()).toEqual([0, 0, 0]);
  });

  it('no detectors: cross sections only', () => {
    const r = directObservables(point({}), prepareDirect(setup([])));
    expect(r.eventsByDetector.length).toBe(0);
    expect(r.sigmaSiPCm2).toBeGreaterThan(0);
  });

  it('the memo of exact kernels (light mediator, window from 0 keV) stays bounded', () => {
    const pr = prepareDirect(setup([{ name: 'tiny', target: 'F', windowKeV: [0, 20], efficiency: 1, exposureKgDay: 1 }]));
    for (let i = 0; i < KERNEL_MEMO_CAPACITY + 50; i++) directObservables(point({ m_chi: 50 + i * 1e-3, m_med: 0.01 }), pr);
    expect(pr.cachedKernels()[0]).toBe(KERNEL_MEMO_CAPACITY);
    expect(pr.tableNodes()[0]).toBe(0);
  });

  it('invalid setup: errors name the field', () => {
    expect(() => prepareDirect(setup([{ ...DETECTORS[0]!, target: 'Xx' }]))).toThrow(/detectors\[0\]\.target/);
    expect(() => prepareDirect(setup(DETECTORS, { hadronic: { scalarSet: 'Z' as 'A', spinSet: 'H' } }))).toThrow(/hadronic\.scalarSet/);
    expect(() => prepareDirect(setup(DETECTORS, { halo: { ...DEFAULT_HALO, local: { ...DEFAULT_HALO.local, rhoLocalGeVcm3: 0 } } }))).toThrow(/rhoLocalGeVcm3/);
  });
});
