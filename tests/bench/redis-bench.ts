/**
 * Redis transport speed against the embedded pool, on the same real-physics spec in one run (so the
 * ratios share the machine's load): points/s with 1 and 2 BullMQ worker processes (`darksieve
 * worker --concurrency 1`, spawned through the real CLI) and with 1 and 2 embedded threads.
 *
 * The rate is the steady state read from the ledger: points of the chunks finished after the first
 * one, over the time between the first and the last chunk. That leaves out start-up that does not
 * grow with the scan (process and thread start, physics preparation) for both transports alike.
 * Redis: REDIS_URL or 127.0.0.1:6379, under a uuid key prefix removed afterwards.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { randomUUID } from 'node:crypto';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import Database from 'better-sqlite3';
import { runScan } from '../../scheduler/run.js';
import { probeRedis } from '../../scheduler/redis/connection.js';
import { ledgerTag } from '../../scheduler/redis/keys.js';
import { RedisTransport } from '../../scheduler/redis/transport.js';
import { cleanupPrefix, exited } from '../redis/helpers.js';

const REPO = path.resolve(import.meta.dirname, '../..');
const CHUNK = 300;
/** alternating embedded and Redis runs per worker count; the median ratio is reported (the machines are noisy) */
const ROUNDS = 3;
/** 20 x 2 x 5 x 15 = 3000 real points in 10 chunks of 0.3-1 s of compute each on this kind of machine */
const SPEC = {
  name: 'redis-bench',
  model: { dm: 'dirac', g_chi: 1 },
  axes: {
    m_chi: { from: 20, to: 2000, steps: 20, spacing: 'log' },
    mediator: { values: ['vector', 'scalar'] },
    g_q: { from: 0.05, to: 0.5, steps: 5, spacing: 'log' },
    m_med: { from: 50, to: 5000, steps: 15, spacing: 'log' },
  },
};

/** Steady-state points/s from the chunk rows of a ledger. */
function steadyRate(db: string): { pointsPerS: number; chunks: number } {
  const conn = new Database(db, { readonly: true });
  try {
    const rows = conn.prepare(`SELECT n, finished_at FROM chunks WHERE status = 'done' ORDER BY finished_at`).all() as { n: number; finished_at: string }[];
    const t = rows.map((r) => Date.parse(r.finished_at));
    const points = rows.slice(1).reduce((s, r) => s + r.n, 0);
    return { pointsPerS: points / ((t.at(-1)! - t[0]!) / 1000), chunks: rows.length };
  } finally {
    conn.close();
  }
}

function startWorker(url: string, prefix: string): ChildProcess {
  return spawn(process.execPath, [path.join(REPO, 'bin/darksieve.mjs'), 'worker', '--redis', url, '--concurrency', '1'], {
    cwd: REPO, env: { ...process.env, DARKSIEVE_REDIS_PREFIX: prefix }, stdio: 'ignore',
  });
}

const median = (xs: number[]): number => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)]!;

export async function benchRedis(): Promise<{ lines: string[] }> {
  const url = process.env.REDIS_URL || 'redis://127.0.0.1:6379';
  try {
    await probeRedis(url);
  } catch (err) {
    return { lines: [`skipped: ${(err as Error).message}`] };
  }
  const dir = mkdtempSync(path.join(tmpdir(), 'darksieve-redis-bench-'));
  const specPath = path.join(dir, 'spec.json');
  writeFileSync(specPath, JSON.stringify(SPEC));
  const quiet = { quiet: true, log: () => {} };
  const lines: string[] = [];
  const prefixes: string[] = [];
  let run = 0;
  try {
    for (const n of [1, 2]) {
      const prefix = `bench-${randomUUID()}`;
      prefixes.push(prefix);
      const workers = Array.from({ length: n }, () => startWorker(url, prefix));
      const embedded: number[] = [];
      const redis: number[] = [];
      try {
        for (let round = 0; round < ROUNDS; round++) {
          const e = path.join(dir, `run-${++run}.db`);
          await runScan({ specPath, dbPath: e, workers: n, chunkSize: CHUNK, ...quiet });
          embedded.push(steadyRate(e).pointsPerS);
          const r = path.join(dir, `run-${++run}.db`);
          const transport = new RedisTransport({ url, prefix, ledgerTag: ledgerTag(r), codeVersion: 'bench', ...quiet });
          await runScan({ specPath, dbPath: r, chunkSize: CHUNK, transport, ...quiet });
          redis.push(steadyRate(r).pointsPerS);
        }
      } finally {
        for (const w of workers) w.kill('SIGTERM');
        await Promise.all(workers.map(exited));
      }
      const ratios = redis.map((r, i) => r / embedded[i]!);
      const fmt = (xs: number[]) => xs.map((x) => x.toFixed(0)).join(', ');
      lines.push(`${n} worker${n === 1 ? '' : 's'}: embedded pool ${fmt(embedded)} points/s; Redis (${n} \`darksieve worker --concurrency 1\` process${n === 1 ? '' : 'es'}) ${fmt(redis)} points/s`);
      lines.push(`   Redis / embedded, median of ${ROUNDS} paired runs: ${median(ratios).toFixed(3)} (pairs ${ratios.map((x) => x.toFixed(2)).join(', ')}; target >= 0.95)`);
    }
  } finally {
    for (const p of prefixes) await cleanupPrefix(url, p);
    rmSync(dir, { recursive: true, force: true });
  }
  return { lines };
}
