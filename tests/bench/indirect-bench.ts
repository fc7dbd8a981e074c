/**
 * Indirect-detection stage speed (physics/indirect/index.ts), for `npm run bench`.
 *
 * Two invented targets (a 1-degree Galactic Centre cone above 1 GeV and an invented dwarf with a
 * 10 km/s dispersion, 1-100 GeV). Mixed points like a real scan: both DM kinds x four mediators x 20
 * DM masses x 8 mediator masses x 3 couplings, including light mediators (mediator-pair cascades)
 * and near-resonant points (m_med within 1e-6 of 2 m_chi, adaptive velocity average). Per-scan work
 * (prepareIndirect: J-factors) and every photon count computed on a memo miss are inside the timing;
 * the cross sections (physics/annihilation.ts) are built before the clock starts, since they are
 * the previous stage. Also reported: cost with the annihilation build included, cache misses only
 * (a fresh DM mass every point), and the near-resonant points alone.
 */
import { buildAnnihilation } from '../../physics/annihilation.js';
import type { Annihilation } from '../../physics/annihilation-model.js';
import { indirectObservables, prepareIndirect } from '../../physics/indirect/index.js';
import { DM_KINDS, MEDIATOR_KINDS, type ModelPoint } from '../../physics/model.js';
import { DEFAULT_HADRONIC, DEFAULT_HALO, type ScanPhysicsSetup } from '../../physics/setup.js';
import { mediatorWidth } from '../../physics/widths.js';

// invented demo targets (fictional)
const SETUP: ScanPhysicsSetup = {
  halo: DEFAULT_HALO,
  detectors: [],
  targets: [
    { name: 'demo_gc', kind: 'galactic_centre', coneDeg: 1, energyGeV: [1, Infinity] },
    {
      name: 'demo_dwarf', kind: 'satellite', coneDeg: 0.5, distanceKpc: 80, energyGeV: [1, 100], velocityDispersionKmS: 10,
      profile: { kind: 'nfw', rsKpc: 0.6, rhoSGeVcm3: 3, rTruncKpc: 6 },
    },
  ],
  hadronic: DEFAULT_HADRONIC,
};

const logspace = (a: number, b: number, n: number): number[] =>
  Array.from({ length: n }, (_, i) => a * (b / a) ** (i / (n - 1)));

function gridPoints(): ModelPoint[] {
  const out: ModelPoint[] = [];
  for (const dm of DM_KINDS) for (const mediator of MEDIATOR_KINDS) for (const m_chi of logspace(5, 5000, 20)) {
    for (const m_med of logspace(1, 1e4, 8)) for (const g_q of [0.01, 0.25, 1]) {
      out.push({ dm, mediator, m_chi, m_med, g_chi: 1, g_q, g_l: 0.01, width_med: null });
    }
    // near resonance: the pole inside the halo velocities
    out.push({ dm, mediator, m_chi, m_med: 2 * m_chi * (1 + 5e-7), g_chi: 0.1, g_q: 0.1, g_l: 0, width_med: null });
  }
  return out;
}

const build = (p: ModelPoint): Annihilation => buildAnnihilation(p, mediatorWidth(p).totalGeV);

export async function benchIndirect(): Promise<{ pointsPerSecond: number; lines: string[] }> {
  const points = gridPoints();
  const anns = points.map(build);
  let sink = 0;

  const t0 = performance.now();
  const prepared = prepareIndirect(SETUP);
  const tPrep = performance.now() - t0;
  points.forEach((p, i) => { sink += indirectObservables(p, anns[i]!, prepared).fluxByTarget[0]!; });
  const seconds = (performance.now() - t0) / 1000;
  const pointsPerSecond = points.length / seconds;

  const t1 = performance.now();
  points.forEach((p, i) => { sink += indirectObservables(p, anns[i]!, prepared).fluxByTarget[1]!; });
  const warmRate = points.length / ((performance.now() - t1) / 1000);

  const t2 = performance.now();
  for (const p of points) sink += indirectObservables(p, build(p), prepared).sigv0Cm3s;
  const withBuildRate = points.length / ((performance.now() - t2) / 1000);

  const resonant = points.filter((p) => Math.abs(p.m_med / (2 * p.m_chi) - 1) < 1e-5);
  const resAnns = resonant.map(build);
  const t3 = performance.now();
  resonant.forEach((p, i) => { sink += indirectObservables(p, resAnns[i]!, prepared).sigv0Cm3s; });
  const resonantRate = resonant.length / ((performance.now() - t3) / 1000);

  const misses = 1000;
  const fresh = prepareIndirect(SETUP);
  const missPoints = Array.from({ length: misses }, (_, i): ModelPoint => ({
    dm: 'dirac', mediator: 'vector', m_chi: 5 + i * 0.731, m_med: 3000, g_chi: 1, g_q: 0.25, g_l: 0.01, width_med: null,
  }));
  const missAnns = missPoints.map(build);
  const t4 = performance.now();
  missPoints.forEach((p, i) => { sink += indirectObservables(p, missAnns[i]!, fresh).fluxByTarget[0]!; });
  const missRate = misses / ((performance.now() - t4) / 1000);
  if (!Number.isFinite(sink)) throw new Error('non-finite result in the indirect bench');

  return {
    pointsPerSecond,
    lines: [
      `mixed grid, 2 targets, ${points.length} points incl. prepare (${tPrep.toFixed(0)} ms for J-factors): ${pointsPerSecond.toFixed(0)} points/s (target >= 5000)`,
      `same points, memo warm: ${warmRate.toFixed(0)} points/s; with buildAnnihilation + mediatorWidth per point: ${withBuildRate.toFixed(0)} points/s`,
      `near-resonant points only (adaptive velocity average): ${resonantRate.toFixed(0)} points/s (${resonant.length} points)`,
      `photon-count memo misses only (fresh m_chi every point, 9 channels): ${missRate.toFixed(0)} points/s; memo holds ${prepared.memo.size} DM masses`,
    ],
  };
}
