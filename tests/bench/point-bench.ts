/**
 * Full observable set per point through physics/evaluate.ts, with the invented demo scenario's two
 * detectors and two targets (scans/demo/demo.json). Two workloads: a grid (masses repeat, so the
 * per-scan caches of detector kernels and photon yields are hit) and random masses (every point
 * new; the tables over the reduced mass fill during the first points of a scan, as in a worker). Issue target: >= 5,000 points/s on one core for the full set with per-scan work cached.
 */
import path from 'node:path';
import { prepare, evaluate } from '../../physics/evaluate.js';
import { parsePoint, MEDIATOR_KINDS, DM_KINDS, type ModelPoint } from '../../physics/model.js';
import { loadSpecSetup } from '../../scheduler/spec.js';
import { mediatorWidth } from '../../physics/widths.js';
import { buildAnnihilation } from '../../physics/annihilation.js';
import { relicAbundance } from '../../physics/relic/relic.js';
import { prepareDirect, directObservables } from '../../physics/direct/index.js';
import { prepareIndirect, indirectObservables } from '../../physics/indirect/index.js';
import type { ScanPhysicsSetup } from '../../physics/setup.js';
import { mulberry32 } from './random.js';

function point(raw: Record<string, unknown>): ModelPoint {
  const { point: p, issues } = parsePoint(raw);
  if (!p) throw new Error(JSON.stringify(issues));
  return p;
}


/** CPU seconds of this process (user + system): on a loaded machine wall time mostly measures the load. */
function cpuSeconds(): number {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1e6;
}

/** Points per CPU second for one evaluate() pass over the points. */
function rate(points: readonly ModelPoint[], setupPrepared: ReturnType<typeof prepare>): number {
  const t0 = cpuSeconds();
  for (const p of points) evaluate(p, setupPrepared);
  return points.length / (cpuSeconds() - t0);
}

/**
 * Points per CPU second over whole passes until at least minSeconds of CPU time. process.cpuUsage
 * counts every thread of the process, so a single short pass right after the first one also pays
 * for the optimizing compiler and the garbage collector working in the background (measured: pass
 * 2 of the grid ~4,000/CPU-s at ~6,400/s wall, passes 4-8 ~8,000/CPU-s at ~8,500/s wall).
 */
function steadyRate(points: readonly ModelPoint[], setupPrepared: ReturnType<typeof prepare>, minSeconds: number): number {
  const t0 = cpuSeconds();
  let n = 0;
  while (cpuSeconds() - t0 < minSeconds) {
    for (const p of points) evaluate(p, setupPrepared);
    n += points.length;
  }
  return n / (cpuSeconds() - t0);
}

/** Mean CPU microseconds per point of each stage of evaluate(), called as evaluate() calls them. */
function stageBreakdown(points: readonly ModelPoint[], setup: ScanPhysicsSetup): string {
  const direct = prepareDirect(setup);
  const indirect = prepareIndirect(setup);
  const spent = { width: 0, cross_sections: 0, relic: 0, direct: 0, indirect: 0 };
  const timed = <T>(key: keyof typeof spent, f: () => T): T => {
    const t0 = process.cpuUsage();
    const out = f();
    const d = process.cpuUsage(t0);
    spent[key] += d.user + d.system;
    return out;
  };
  for (let pass = 0; pass < 2; pass++) {
    if (pass === 1) for (const k of Object.keys(spent) as (keyof typeof spent)[]) spent[k] = 0;
    for (const p of points) {
      const w = timed('width', () => mediatorWidth(p).totalGeV);
      const ann = timed('cross_sections', () => buildAnnihilation(p, w));
      timed('relic', () => relicAbundance(ann, p.dm));
      timed('direct', () => directObservables(p, direct));
      timed('indirect', () => indirectObservables(p, ann, indirect));
    }
  }
  return Object.entries(spent).map(([k, v]) => `${k} ${(v / points.length).toFixed(0)} us`).join(', ');
}

export async function benchPoint(): Promise<{ lines: string[] }> {
  const setup = await loadSpecSetup(path.resolve(import.meta.dirname, '../../scans/demo/demo.json'));
  const grid: ModelPoint[] = [];
  for (const dm of DM_KINDS) {
    for (const mediator of MEDIATOR_KINDS) {
      for (let i = 0; i < 12; i++) {
        for (let j = 0; j < 12; j++) {
          grid.push(point({ dm, mediator, m_chi: 10 * 10 ** (i / 4), m_med: 20 * 10 ** (j / 4), g_chi: 1, g_q: 0.25 }));
        }
      }
    }
  }
  const u = mulberry32(7);
  const random: ModelPoint[] = [];
  for (let k = 0; k < 6000; k++) {
    random.push(point({
      dm: DM_KINDS[k % 2], mediator: MEDIATOR_KINDS[k % 4],
      m_chi: 10 ** (1 + 2.5 * u()), m_med: 10 ** (1 + 3 * u()), g_chi: 10 ** (-1 + u()), g_q: 10 ** (-2 + 1.5 * u()),
    }));
  }
  const t0 = cpuSeconds();
  const prepared = prepare(setup);
  const prepMs = (cpuSeconds() - t0) * 1000;
  const cold = rate(grid, prepared);
  const second = rate(grid, prepared);
  const warm = steadyRate(grid, prepared, 3);
  // one prepare for the whole random sequence, as a scan's worker keeps it: the per-scan tables
  // (direct kernels over the reduced mass, photon yields) fill over the first points, then serve
  const randomPrepared = prepare(setup);
  const rndFirst = rate(random.slice(0, 600), randomPrepared);
  rate(random.slice(600, 3000), randomPrepared);
  rate(random.slice(3000), randomPrepared);
  // the same with the Sommerfeld factor on (one more halo average per velocity scale), alternating
  // with it off so that both see the same compiled code
  const withSommerfeld = prepare({ ...setup, sommerfeld: 'hulthen' });
  rate(random.slice(0, 3000), withSommerfeld);
  const late = random.slice(3000);
  const pairs = [0, 1, 2].map(() => [rate(late, randomPrepared), rate(late, withSommerfeld)] as const);
  const rndLate = Math.max(...pairs.map((p) => p[0]));
  const rndSommerfeld = Math.max(...pairs.map((p) => p[1]));
  return {
    lines: [
      `prepare (2 detectors, 2 targets): ${prepMs.toFixed(0)} ms CPU`,
      `grid ${grid.length} points, first pass (caches filling): ${cold.toFixed(0)} points per CPU second`,
      `grid ${grid.length} points, second pass (compiler still busy): ${second.toFixed(0)} points per CPU second`,
      `grid ${grid.length} points, warm passes (>= 3 s CPU):  ${warm.toFixed(0)} points per CPU second`,
      `random masses (every mass new), one prepare: first 600 points ${rndFirst.toFixed(0)} points per CPU second (per-scan tables filling), points 3001-6000 ${rndLate.toFixed(0)}, with the Sommerfeld factor on ${rndSommerfeld.toFixed(0)} (best of 3 alternating passes each)`,
      `per stage, grid, warm pass (CPU): ${stageBreakdown(grid, setup)}`,
      'target: >= 5,000 points/s on one core for the full observable set',
    ],
  };
}
