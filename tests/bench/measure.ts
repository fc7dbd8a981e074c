/** Measuring helpers shared by the benchmarks. */
import { spawnSync } from 'node:child_process';

const REPO = new URL('../..', import.meta.url);

/** The middle value (the larger middle one for an even count). */
export const median = (xs: readonly number[]): number => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)]!;

/** Lower quartile, median and upper quartile (nearest rank; common practice, no source). */
export function quartiles(xs: readonly number[]): [number, number, number] {
  const s = [...xs].sort((a, b) => a - b);
  const at = (q: number): number => s[Math.min(s.length - 1, Math.max(0, Math.ceil(q * s.length) - 1))]!;
  return [at(0.25), median(xs), at(0.75)];
}

/**
 * `node bin/darksieve.mjs ARGS` in a fresh process (REDIS_URL cleared, so `run` uses the embedded
 * pool; `env` adds or overrides variables): wall seconds and the CPU seconds of the whole process,
 * every thread, reported by the cpu-at-exit.mjs preload.
 */
export function cliCpu(args: readonly string[], opts: { cwd?: string | URL; env?: NodeJS.ProcessEnv } = {}): { wallS: number; cpuS: number } {
  const t0 = performance.now();
  const r = spawnSync(process.execPath, ['--import', new URL('./cpu-at-exit.mjs', import.meta.url).href, new URL('bin/darksieve.mjs', REPO).pathname, ...args], {
    cwd: opts.cwd ?? REPO, env: { ...process.env, REDIS_URL: '', ...opts.env }, encoding: 'utf8',
  });
  const wallS = (performance.now() - t0) / 1000;
  const m = /cpu-at-exit-us (\d+)/.exec(r.stderr);
  if (r.status !== 0 || !m) throw new Error(`darksieve ${args.join(' ')} failed (exit ${r.status}): ${r.stderr}`);
  return { wallS, cpuS: Number(m[1]) / 1e6 };
}
