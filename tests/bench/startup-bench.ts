/**
 * Start-up cost (`npm run bench -- startup`): the cached bundles of bin/bundle-cache.mjs against the
 * same sources through the tsx loader (DARKSIEVE_NO_BUNDLE=1), run alternately so both see the same
 * machine load; medians of ROUNDS runs of each.
 *  - `darksieve point` and `darksieve run` of an 8-point scan (1 worker) in a fresh process: wall
 *    seconds and the CPU of the whole process (cpu-at-exit.mjs);
 *  - one embedded-pool worker thread from spawn to ready (physics loaded and prepared, no calibration).
 * The bundles are built before timing (a first use after a source change adds ~0.2 s once).
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { bundledEntry } from '../../bin/bundle-cache.mjs';
import { EmbeddedPool } from '../../scheduler/embedded-pool.js';
import { numericObservableNames } from '../../physics/observables.js';
import { parseSpec, resolvedSpecJson } from '../../scheduler/spec.js';
import { BENCH_SPEC } from './scan-bench.js';
import { cliCpu, median } from './measure.js';

const ROUNDS = 5;
/** `darksieve ARGS` in a fresh process, from the bundle or (DARKSIEVE_NO_BUNDLE) through tsx. */
function cli(args: readonly string[], bundle: boolean, cwd: string): { wallS: number; cpuS: number } {
  // an empty value is unset for bin/bundle-cache.mjs
  return cliCpu(args, { cwd, env: { DARKSIEVE_NO_BUNDLE: bundle ? '' : '1' } });
}

async function threadReadyMs(bundle: boolean, specJson: string, observableNames: readonly string[]): Promise<number> {
  if (bundle) delete process.env.DARKSIEVE_NO_BUNDLE;
  else process.env.DARKSIEVE_NO_BUNDLE = '1';
  try {
    const pool = new EmbeddedPool({ workers: 1 });
    const t0 = performance.now();
    await pool.open({ scanKey: 'startup', resolvedSpecJson: specJson, observableNames });
    const ms = performance.now() - t0;
    await pool.close();
    return ms;
  } finally {
    delete process.env.DARKSIEVE_NO_BUNDLE;
  }
}

export async function benchStartup(): Promise<{ lines: string[] }> {
  const dir = mkdtempSync(path.join(tmpdir(), 'darksieve-bench-startup-'));
  try {
    const tiny = { ...BENCH_SPEC, name: 'tiny', axes: { ...BENCH_SPEC.axes, m_chi: { from: 5, to: 5000, steps: 2, spacing: 'log' }, m_med: { from: 10, to: 10000, steps: 2, spacing: 'log' } } };
    writeFileSync(path.join(dir, 'tiny.json'), JSON.stringify(tiny));
    for (const entry of ['../../scheduler/cli.ts', '../../workers/thread.ts']) {
      if (!(await bundledEntry(new URL(entry, import.meta.url)))) throw new Error(`no bundle of ${entry} (DARKSIEVE_NO_BUNDLE set, or the build failed: run with DARKSIEVE_DEBUG=1)`);
    }
    const spec = parseSpec(BENCH_SPEC).spec!;
    const observables = numericObservableNames(['xe_bench'], ['gc']);
    const cases = [
      { what: 'darksieve point (fresh process)', run: (b: boolean) => cli(['point', 'm_chi=100', 'm_med=1000'], b, dir) },
      {
        what: 'darksieve run, 8 points, 1 worker (fresh process)',
        run: (b: boolean) => {
          rmSync(path.join(dir, 'tiny.db'), { force: true });
          return cli(['run', 'tiny.json', '--db', 'tiny.db', '--workers', '1', '--chunk', '8', '--quiet'], b, dir);
        },
      },
    ];
    const lines: string[] = [];
    for (const c of cases) {
      const got: Record<'bundle' | 'tsx', { wallS: number; cpuS: number }[]> = { bundle: [], tsx: [] };
      for (let i = 0; i < ROUNDS; i++) {
        got.bundle.push(c.run(true));
        got.tsx.push(c.run(false));
      }
      const w = { b: median(got.bundle.map((x) => x.wallS)), t: median(got.tsx.map((x) => x.wallS)) };
      const u = { b: median(got.bundle.map((x) => x.cpuS)), t: median(got.tsx.map((x) => x.cpuS)) };
      lines.push(`${c.what}: bundle ${w.b.toFixed(2)} s wall / ${u.b.toFixed(2)} s CPU, tsx ${w.t.toFixed(2)} s / ${u.t.toFixed(2)} s (wall ratio ${(w.b / w.t).toFixed(2)}, CPU ratio ${(u.b / u.t).toFixed(2)})`);
    }
    const ready: Record<'bundle' | 'tsx', number[]> = { bundle: [], tsx: [] };
    for (let i = 0; i < ROUNDS; i++) {
      ready.bundle.push(await threadReadyMs(true, resolvedSpecJson(spec), observables));
      ready.tsx.push(await threadReadyMs(false, resolvedSpecJson(spec), observables));
    }
    const r = { b: median(ready.bundle), t: median(ready.tsx) };
    lines.push(`worker thread, spawn to ready: bundle ${r.b.toFixed(0)} ms, tsx ${r.t.toFixed(0)} ms (ratio ${(r.b / r.t).toFixed(2)}); medians of ${ROUNDS}, alternating`);
    return { lines };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
