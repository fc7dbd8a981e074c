/**
 * Full observable set per point through physics/evaluate.ts, with the invented demo scenario's two
 * detectors and two targets (scans/demo/demo.json). Two workloads: a grid (masses repeat, so the
 * per-scan caches of detector kernels and photon yields are hit) and random masses (every point
 * new). Issue target: >= 5,000 points/s on one core for the full set with per-scan work cached.
 */
import path from 'node:path';
import { prepare, evaluate } from '../../physics/evaluate.js';
import { parsePoint, MEDIATOR_KINDS, DM_KINDS, type ModelPoint } from '../../physics/model.js';
import { loadSpecSetup } from '../../scheduler/spec.js';
import { mulberry32 } from './random.js';

function point(raw: Record<string, unknown>): ModelPoint {
  const { point: p, issues } = parsePoint(raw);
  if (!p) throw new Error(JSON.stringify(issues));
  return p;
}


function rate(points: readonly ModelPoint[], setupPrepared: ReturnType<typeof prepare>): number {
  const t0 = performance.now();
  let sink = 0;
  for (const p of points) sink += evaluate(p, setupPrepared).values.omega_h2 ?? 0;
  const dt = (performance.now() - t0) / 1000;
  if (Number.isNaN(sink)) sink = 0;
  return points.length / dt;
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
  for (let k = 0; k < 600; k++) {
    random.push(point({
      dm: DM_KINDS[k % 2], mediator: MEDIATOR_KINDS[k % 4],
      m_chi: 10 ** (1 + 2.5 * u()), m_med: 10 ** (1 + 3 * u()), g_chi: 10 ** (-1 + u()), g_q: 10 ** (-2 + 1.5 * u()),
    }));
  }
  const t0 = performance.now();
  const prepared = prepare(setup);
  const prepMs = performance.now() - t0;
  const cold = rate(grid, prepared);
  const warm = rate(grid, prepared);
  const rnd = rate(random, prepare(setup));
  return {
    lines: [
      `prepare (2 detectors, 2 targets): ${prepMs.toFixed(0)} ms`,
      `grid ${grid.length} points, first pass (caches filling): ${cold.toFixed(0)} points/s`,
      `grid ${grid.length} points, second pass (caches warm):   ${warm.toFixed(0)} points/s`,
      `random ${random.length} points (every mass new):        ${rnd.toFixed(0)} points/s`,
      'target: >= 5,000 points/s on one core for the full observable set',
    ],
  };
}
