/**
 * Interpolated response kernels (physics/direct/kernel-table.ts) against the direct quadrature of
 * physics/direct/rate.ts (itself checked against scipy to 1e-8 in rate.test.ts). Dense in m_chi,
 * including the kinematic thresholds, the masses where E_R,max crosses the window edges and
 * efficiency nodes, compound targets, efficiency tables and light mediators.
 */
import { describe, expect, it } from 'vitest';
import { shmEta } from '../../physics/direct/halo.js';
import { DetectorKernelTable, chebyshevTermsFor, effectiveLowEdgeKeV, massForRecoilGeV } from '../../physics/direct/kernel-table.js';
import { directObservables, prepareDirect } from '../../physics/direct/index.js';
import { prepareDetector, responseKernel, type PreparedDetector } from '../../physics/direct/rate.js';
import type { ModelPoint } from '../../physics/model.js';
import { DEFAULT_HADRONIC, DEFAULT_HALO, type Detector, type ScanPhysicsSetup } from '../../physics/setup.js';

const HALO = { rhoLocalGeVcm3: 0.3, v0KmS: 238, vEscKmS: 544, vEarthKmS: 252.2 };
const shm = shmEta(HALO);

// invented demo detectors (fictional experiments)
const DETECTORS: Detector[] = [
  { name: 'xe_table', target: 'Xe', windowKeV: [3, 50], efficiency: [[2, 0], [5, 0.5], [10, 0.85], [40, 0.9], [50, 0.7]], exposureKgDay: 1e6 },
  { name: 'xe_flat', target: 'Xe', windowKeV: [5, 40], efficiency: 1, exposureKgDay: 1e6 },
  { name: 'ar', target: 'Ar', windowKeV: [30, 200], efficiency: 0.8, exposureKgDay: 3e6 },
  { name: 'ge_late_table', target: 'Ge', windowKeV: [1, 100], efficiency: [[0, 0], [4, 0], [8, 0.7], [60, 0.9]], exposureKgDay: 1e4 },
  { name: 'cawo4', target: 'CaWO4', windowKeV: [1, 40], efficiency: 0.9, exposureKgDay: 100 },
  { name: 'cf3i', target: 'CF3I', windowKeV: [3, 100], efficiency: 1, exposureKgDay: 1e3 },
  { name: 'nai', target: 'NaI', windowKeV: [2, 20], efficiency: 0.6, exposureKgDay: 1e5 },
];
const MEDIATORS: (number | null)[] = [null, 1e-3, 0.03, 1];

/** Masses: log grid over the model range plus dense approaches to every isotope breakpoint. */
function testMasses(det: PreparedDetector): number[] {
  const out: number[] = [];
  for (let i = 0; i <= 160; i++) out.push(0.01 * 1e7 ** (i / 160) * (1 + 0.013 * Math.sin(7 * i)));
  const eEff = effectiveLowEdgeKeV(det)!;
  const edges = [eEff, det.hiKeV, ...det.efficiencyNodesKeV];
  for (const iso of det.isotopes.filter((_, i) => i % 3 === 0)) {
    for (const v of [shm.vMaxKmS, shm.vKinkKmS]) {
      for (const e of edges) {
        const mb = massForRecoilGeV(v, e, iso.massGeV);
        if (!Number.isFinite(mb)) continue;
        for (const d of [-0.3, -0.03, -1e-3, 1e-9, 1e-6, 1e-3, 3e-3, 0.01, 0.03, 0.1, 0.3, 1]) out.push(mb * (1 + d));
      }
    }
  }
  return out.filter((m) => m >= 0.01 && m <= 1e5);
}

describe('interpolated kernels vs direct quadrature', () => {
  it.each(DETECTORS.map((d) => [d.name, d] as const))('%s: every kernel entry within 1e-4 where it exceeds 1e-6 of its maximum', (_name, d) => {
    const det = prepareDetector(d, 'detectors[0]');
    const table = new DetectorKernelTable(det, shm, HALO.rhoLocalGeVcm3);
    const masses = testMasses(det);
    for (const mMed of MEDIATORS) {
      const light = mMed !== null && !table.isContact(mMed);
      const exact = masses.map((m) => {
        const k = new Float64Array(6);
        responseKernel(det, shm, HALO.rhoLocalGeVcm3, m, light ? mMed : null, k);
        return k;
      });
      const got = masses.map((m) => {
        const k = new Float64Array(6);
        table.kernel(m, mMed, k);
        return k;
      });
      // the cross terms (pn) can change sign between isotopes (19F vs 127I): they are compared
      // relative to pp + nn, which bounds their isotope sum
      const scale = (k: Float64Array, c: number): number => (c === 1 ? k[0]! + k[2]! : c === 4 ? k[3]! + k[5]! : Math.abs(k[c]!));
      for (let c = 0; c < 6; c++) {
        const max = Math.max(...exact.map((k) => scale(k, c)));
        masses.forEach((m, i) => {
          const ref = scale(exact[i]!, c);
          if (max === 0 || ref < 1e-6 * max) return;
          const err = Math.abs(got[i]![c]! - exact[i]![c]!) / ref;
          // requirement of the interpolation (measured worst ~1e-6, module comment)
          expect(err, `${d.name} m_chi ${m} m_med ${mMed} K${c}: got ${got[i]![c]}, expected ${exact[i]![c]}, rel ${err}`).toBeLessThan(1e-4);
        });
      }
      // exactly zero where the quadrature is zero (below every threshold)
      masses.forEach((m, i) => {
        if (exact[i]!.every((x) => x === 0)) expect([...got[i]!], `${d.name} m_chi ${m}`).toEqual([0, 0, 0, 0, 0, 0]);
      });
    }
  });
});

describe('kinematic threshold and effective window edge', () => {
  it('the analytic threshold mass separates zero and non-zero quadrature (single isotope, 19F)', () => {
    const det = prepareDetector({ name: 'f', target: 'F', windowKeV: [10, 60], efficiency: 1, exposureKgDay: 1 }, 'd');
    const mThr = massForRecoilGeV(shm.vMaxKmS, 10, det.isotopes[0]!.massGeV);
    const k = new Float64Array(6);
    responseKernel(det, shm, 0.3, mThr * (1 - 1e-9), null, k);
    expect(k[0]).toBe(0);
    responseKernel(det, shm, 0.3, mThr * (1 + 1e-6), null, k);
    expect(k[0]).toBeGreaterThan(0);
  });
  it('effective low edge: first energy with positive efficiency; null when it vanishes on the window', () => {
    const det = (eff: Detector['efficiency'], w: [number, number] = [1, 100]): PreparedDetector =>
      prepareDetector({ name: 'g', target: 'Ge', windowKeV: w, efficiency: eff, exposureKgDay: 1 }, 'd');
    expect(effectiveLowEdgeKeV(det(1))).toBe(1);
    expect(effectiveLowEdgeKeV(det([[0, 0], [4, 0], [8, 0.7], [60, 0.9]]))).toBe(4);
    expect(effectiveLowEdgeKeV(det([[20, 0.5], [60, 0.9]]))).toBe(20);
    expect(effectiveLowEdgeKeV(det([[0, 0.5], [60, 0.9]]))).toBe(1);
    expect(effectiveLowEdgeKeV(det(0))).toBeNull();
    expect(effectiveLowEdgeKeV(det([[200, 1], [300, 1]]))).toBeNull();
  });
  it('a detector whose efficiency vanishes on the window gives zero kernels', () => {
    const det = prepareDetector({ name: 'z', target: 'Xe', windowKeV: [5, 40], efficiency: [[50, 1], [60, 1]], exposureKgDay: 1 }, 'd');
    const k = new Float64Array(6).fill(1);
    new DetectorKernelTable(det, shm, 0.3).kernel(100, null, k);
    expect([...k]).toEqual([0, 0, 0, 0, 0, 0]);
  });
});

describe('Chebyshev representation of the propagator', () => {
  it('a narrow window needs few terms, a wide one more, a window from 0 keV none (exact fallback)', () => {
    const narrow = chebyshevTermsFor(Math.log(30), Math.log(200), -30, 10);
    const wide = chebyshevTermsFor(Math.log(1), Math.log(200), -30, 10);
    expect(narrow).toBeGreaterThan(0);
    expect(wide).toBeGreaterThan(narrow);
    const zero = prepareDetector({ name: 'z', target: 'Xe', windowKeV: [0, 40], efficiency: 1, exposureKgDay: 1 }, 'd');
    expect(new DetectorKernelTable(zero, shm, 0.3).chebyshevTerms).toBe(0);
  });
});

describe('determinism of the lazily built tables', () => {
  const setup: ScanPhysicsSetup = { halo: DEFAULT_HALO, detectors: DETECTORS.slice(0, 5), targets: [], hadronic: DEFAULT_HADRONIC };
  const point = (m_chi: number, m_med: number, mediator: ModelPoint['mediator']): ModelPoint =>
    ({ dm: 'dirac', mediator, m_chi, m_med, g_chi: 1, g_q: 0.25, g_l: 0, width_med: null });
  it('events are bit-identical whatever order the points come in', () => {
    const points: ModelPoint[] = [];
    for (let i = 0; i < 120; i++) {
      points.push(point(0.01 * 1e7 ** ((i * 0.6180339887) % 1), 1e-3 * 1e7 ** ((i * 0.41421356) % 1), i % 2 ? 'vector' : 'axial'));
    }
    const forward = prepareDirect(setup);
    const a = points.map((p) => directObservables(p, forward).eventsByDetector);
    const backward = prepareDirect(setup);
    const b = [...points].reverse().map((p) => directObservables(p, backward).eventsByDetector).reverse();
    points.forEach((p, i) => {
      for (let d = 0; d < setup.detectors.length; d++) {
        expect(Object.is(a[i]![d], b[i]![d]), `point ${JSON.stringify(p)} detector ${d}: ${a[i]![d]} vs ${b[i]![d]}`).toBe(true);
      }
    });
    // a single point on a fresh preparation builds only the nodes its stencils need
    const single = prepareDirect(setup);
    const one = directObservables(points[7]!, single).eventsByDetector;
    for (let d = 0; d < setup.detectors.length; d++) expect(Object.is(one[d], a[7]![d])).toBe(true);
    expect(Math.max(...single.tableNodes())).toBeLessThan(Math.min(...forward.tableNodes().filter((n) => n > 0)));
  });
});
