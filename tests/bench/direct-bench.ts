/**
 * Direct-detection stage speed (physics/direct/prepare.ts).
 *
 * A mixed grid like a real scan: both DM kinds x four mediators x 25 DM masses x 12 mediator masses
 * (0.1 GeV - 5 TeV, so light mediators with their (m_chi, m_med) kernels are included) x 4 x 4
 * couplings, two invented detectors (a xenon TPC with an efficiency table and an argon detector).
 * Per-scan work (prepareDirect) and every kernel computed on a cache miss are inside the timing.
 * Also reported: the cost of one cache miss (fresh DM masses, i.e. random sampling) and of the
 * per-point path once kernels are cached.
 */
import { directObservables, prepareDirect } from '../../physics/direct/index.js';
import { DM_KINDS, MEDIATOR_KINDS, type ModelPoint } from '../../physics/model.js';
import { DEFAULT_HADRONIC, DEFAULT_HALO, type ScanPhysicsSetup } from '../../physics/setup.js';

// invented demo detectors (fictional experiments)
const SETUP: ScanPhysicsSetup = {
  halo: DEFAULT_HALO,
  detectors: [
    { name: 'demo_xenon', target: 'Xe', windowKeV: [3, 50], efficiency: [[2, 0], [5, 0.5], [10, 0.85], [40, 0.9], [50, 0.7]], exposureKgDay: 1e6 },
    { name: 'demo_argon', target: 'Ar', windowKeV: [30, 200], efficiency: 0.8, exposureKgDay: 3e6 },
  ],
  targets: [],
  hadronic: DEFAULT_HADRONIC,
};

const logspace = (a: number, b: number, n: number): number[] =>
  Array.from({ length: n }, (_, i) => a * (b / a) ** (i / (n - 1)));

function gridPoints(): ModelPoint[] {
  const out: ModelPoint[] = [];
  for (const dm of DM_KINDS) for (const mediator of MEDIATOR_KINDS) for (const m_chi of logspace(3, 1e4, 25))
    for (const m_med of logspace(0.1, 5000, 12)) for (const g_chi of [0.1, 0.5, 1, 2]) for (const g_q of [0.01, 0.1, 0.25, 1])
      out.push({ dm, mediator, m_chi, m_med, g_chi, g_q, g_l: 0, width_med: null });
  return out;
}

export async function benchDirect(): Promise<{ pointsPerSecond: number; lines: string[] }> {
  const points = gridPoints();
  let sink = 0;
  const t0 = performance.now();
  const prepared = prepareDirect(SETUP);
  for (const p of points) sink += directObservables(p, prepared).eventsByDetector[0]!;
  const seconds = (performance.now() - t0) / 1000;
  const pointsPerSecond = points.length / seconds;
  const kernels = prepared.cachedKernels();

  const t1 = performance.now();
  for (const p of points) sink += directObservables(p, prepared).eventsByDetector[1]!;
  const hitRate = points.length / ((performance.now() - t1) / 1000);

  // cache misses only: a fresh DM mass every point (random sampling), vector mediator, contact limit
  const misses = 2000;
  const fresh = prepareDirect(SETUP);
  const t2 = performance.now();
  for (let i = 0; i < misses; i++) {
    sink += directObservables({ dm: 'dirac', mediator: 'vector', m_chi: 5 + i * 0.731, m_med: 2000, g_chi: 1, g_q: 0.25, g_l: 0, width_med: null }, fresh).eventsByDetector[0]!;
  }
  const missRate = misses / ((performance.now() - t2) / 1000);
  if (!Number.isFinite(sink)) throw new Error('non-finite events in the direct bench');

  return {
    pointsPerSecond,
    lines: [
      `mixed grid, 2 detectors: ${points.length} points in ${seconds.toFixed(2)} s = ${Math.round(pointsPerSecond)} points/s (target >= 5000), incl. prepare and ${kernels.join('+')} kernels`,
      `cached path (all kernels hit): ${Math.round(hitRate)} points/s`,
      `every point a cache miss (random sampling): ${Math.round(missRate)} points/s`,
    ],
  };
}
