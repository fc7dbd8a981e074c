/**
 * Plot speed on a 10^6-point ledger (contract shape, synthetic values made in SQL: a mechanics
 * load, not physics). Measures `plot` to SVG and PNG through the same code as the CLI, for a
 * scattered plane (binned in SQL) and for a 200 x 200 grid plane with 25 points per cell.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { createContractLedger } from '../plot/contract-ledger.js';
import { writePlot } from '../../scheduler/plot/plot-plane.js';

const N = 1_000_000;

function buildLedger(file: string): number {
  const t0 = performance.now();
  const db = createContractLedger(file, { name: 'bench 1e6' });
  // u, v, w: deterministic fractions in [0, 1) from the point id (Weyl sequences)
  db.exec(`
    WITH RECURSIVE ids(id) AS (SELECT 0 UNION ALL SELECT id + 1 FROM ids WHERE id + 1 < ${N}),
    f AS (SELECT id, (id * 0.6180339887) - floor(id * 0.6180339887) AS u, (id * 0.7548776662) - floor(id * 0.7548776662) AS v, (id * 0.5698402910) - floor(id * 0.5698402910) AS w FROM ids)
    INSERT INTO points (scan_id, point_id, dm, mediator, m_chi, m_med, g_chi, g_q, omega_h2, sigma_si_p_cm2, sigv0_cm3s, flags)
    SELECT 1, id, 'dirac', 'vector',
           pow(10, 1 + 3 * (id % 200) / 199.0), pow(10, 1 + 3 * ((id / 200) % 200) / 199.0), 0.1 + 0.9 * w, 0.25,
           pow(10, -4 + 6 * v), pow(10, -50 + 8 * u * v), pow(10, -30 + 5 * w), ''
      FROM f;
    INSERT INTO verdicts (scan_id, constraint_set, point_id, relic, direct, survives)
    SELECT 1, 'default', point_id, omega_h2 <= 0.12, sigma_si_p_cm2 < 1e-46, omega_h2 <= 0.12 AND sigma_si_p_cm2 < 1e-46 FROM points;
  `);
  db.close();
  return performance.now() - t0;
}

export async function benchPlot(): Promise<{ lines: string[] }> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'darksieve-plot-bench-'));
  try {
    const db = path.join(dir, 'bench.db');
    const buildMs = buildLedger(db);
    const lines = [`plot: built a ${N.toLocaleString('en-US')}-point ledger in ${(buildMs / 1000).toFixed(1)} s (SQL, synthetic values)`];
    const cases = [
      { what: 'scattered plane sigma_si_p vs m_chi, colour omega_h2 (binned)', x: 'm_chi', y: 'sigma_si_p_cm2', out: 'scatter' },
      { what: 'grid plane m_med vs m_chi, colour omega_h2 (200x200 cells)', x: 'm_chi', y: 'm_med', out: 'grid' },
    ];
    for (const c of cases) {
      for (const ext of ['svg', 'png'] as const) {
        const t0 = performance.now();
        const cpu0 = process.cpuUsage();
        const r = writePlot({ db, x: c.x, y: c.y, color: 'omega_h2', out: path.join(dir, `${c.out}.${ext}`) });
        const ms = performance.now() - t0;
        const cpu = process.cpuUsage(cpu0);
        // CPU time alongside wall time: on a shared, loaded machine the wall time mostly measures the load
        lines.push(`plot: ${c.what} -> ${ext}: ${(ms / 1000).toFixed(2)} s wall, ${((cpu.user + cpu.system) / 1e6).toFixed(2)} s CPU (${r.mode}, ${r.drawnPoints.toLocaleString('en-US')} points, ${(r.bytes / 1024).toFixed(0)} KiB)`);
      }
    }
    return { lines };
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}
