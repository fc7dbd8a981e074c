/**
 * Redis transport speed against the embedded pool, on the same real-physics spec in one run (so the
 * ratios share the machine's load): points/s of `darksieve worker` processes spawned through the
 * real CLI (1 process of 1 thread, 2 of 1, 1 of 2: LAYOUTS) against an embedded pool of as many
 * threads.
 *
 * The rate is read from the ledger: all points over the time from the start of the first chunk to
 * the end of the last. That leaves out start-up that does not grow with the scan (process and
 * thread start, physics preparation) for both transports alike.
 * Redis: REDIS_URL or 127.0.0.1:6379, under a uuid key prefix removed afterwards.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { randomUUID } from 'node:crypto';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import Database from 'better-sqlite3';
import { codeVersion, runScan } from '../../scheduler/run.js';
import { openClient, probeRedis, redisOptionsFromUrl } from '../../scheduler/redis/connection.js';
import { ledgerTag, liveWorkers } from '../../scheduler/redis/keys.js';
import { RedisTransport } from '../../scheduler/redis/transport.js';
import { cleanupPrefix, exited, waitFor } from '../redis/helpers.js';
import { median } from './measure.js';

const REPO = path.resolve(import.meta.dirname, '../..');
const CHUNK = 1500;
/** alternating embedded and Redis runs per worker count; the median ratio is reported (the machines are noisy) */
const ROUNDS = 3;
/**
 * 50 x 2 x 10 x 15 = 15000 real points in 10 chunks (run.ts aims at 1.5 s of compute per chunk; these
 * took 0.15 to 0.6 s each on the 2-core development machine, so one-off costs of a scan, such as a
 * worker starting later than another or the last chunks finishing unevenly, weigh on these figures)
 */
const SPEC = {
  name: 'redis-bench',
  model: { dm: 'dirac', g_chi: 1 },
  axes: {
    m_chi: { from: 20, to: 2000, steps: 50, spacing: 'log' },
    mediator: { values: ['vector', 'scalar'] },
    g_q: { from: 0.05, to: 0.5, steps: 10, spacing: 'log' },
    m_med: { from: 50, to: 5000, steps: 15, spacing: 'log' },
  },
};

/**
 * Points/s from the chunk rows of a ledger, between the start of the first chunk (its finish minus
 * its eval_ms) and the last finish, and the share of the workers' wall time in that span not spent
 * evaluating (1 - sum of eval_ms / (span x workers)): dispatch, transport and ingest overhead, the
 * tail where some workers have no chunk left, and any time the machine gave to other processes.
 */
function steadyRate(db: string, workers: number): { pointsPerS: number; chunks: number; idleShare: number } {
  const conn = new Database(db, { readonly: true });
  try {
    const rows = conn.prepare(`SELECT n, finished_at, eval_ms FROM chunks WHERE status = 'done'`).all() as { n: number; finished_at: string; eval_ms: number }[];
    const start = Math.min(...rows.map((r) => Date.parse(r.finished_at) - r.eval_ms));
    const end = Math.max(...rows.map((r) => Date.parse(r.finished_at)));
    const points = rows.reduce((s, r) => s + r.n, 0);
    const evalMs = rows.reduce((s, r) => s + r.eval_ms, 0);
    return { pointsPerS: points / ((end - start) / 1000), chunks: rows.length, idleShare: 1 - evalMs / ((end - start) * workers) };
  } finally {
    conn.close();
  }
}

function startWorker(url: string, prefix: string, concurrency: number): ChildProcess {
  return spawn(process.execPath, [path.join(REPO, 'bin/darksieve.mjs'), 'worker', '--redis', url, '--concurrency', String(concurrency)], {
    cwd: REPO, env: { ...process.env, DARKSIEVE_REDIS_PREFIX: prefix }, stdio: 'ignore',
  });
}

/**
 * Worker layouts compared with an embedded pool of the same number of threads: 2 processes of 1
 * thread (as on two machines, but here they share 2 cores with the scheduler and redis-server) and
 * 1 process of 2 threads (how one machine is served).
 */
const LAYOUTS: readonly { processes: number; concurrency: number }[] = [
  { processes: 1, concurrency: 1 },
  { processes: 2, concurrency: 1 },
  { processes: 1, concurrency: 2 },
];


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
    for (const { processes, concurrency } of LAYOUTS) {
      const n = processes * concurrency;
      const prefix = `bench-${randomUUID()}`;
      prefixes.push(prefix);
      const workers = Array.from({ length: processes }, () => startWorker(url, prefix, concurrency));
      // the first embedded run must not share the cores with the workers' start-up (module loading)
      const client = openClient(redisOptionsFromUrl(url), () => {});
      try {
        await waitFor('the bench workers to report', async () => (await liveWorkers(client, prefix)).length === processes, 30_000);
      } finally {
        client.disconnect();
      }
      const embedded: number[] = [];
      const redis: number[] = [];
      const idle = { embedded: [] as number[], redis: [] as number[] };
      try {
        for (let round = 0; round < ROUNDS; round++) {
          const e = path.join(dir, `run-${++run}.db`);
          await runScan({ specPath, dbPath: e, workers: n, chunkSize: CHUNK, ...quiet });
          const se = steadyRate(e, n);
          embedded.push(se.pointsPerS);
          idle.embedded.push(se.idleShare);
          const r = path.join(dir, `run-${++run}.db`);
          const transport = new RedisTransport({ url, prefix, ledgerTag: ledgerTag(r), codeVersion: codeVersion(), ...quiet }); // the workers' own: they refuse scans of other code
          await runScan({ specPath, dbPath: r, chunkSize: CHUNK, transport, ...quiet });
          const sr = steadyRate(r, n);
          redis.push(sr.pointsPerS);
          idle.redis.push(sr.idleShare);
        }
      } finally {
        for (const w of workers) w.kill('SIGTERM');
        await Promise.all(workers.map(exited));
      }
      const ratios = redis.map((r, i) => r / embedded[i]!);
      const fmt = (xs: number[]) => xs.map((x) => x.toFixed(0)).join(', ');
      lines.push(
        `${n} thread${n === 1 ? '' : 's'}: embedded pool ${fmt(embedded)} points/s; Redis (${processes} \`darksieve worker --concurrency ${concurrency}\` process${processes === 1 ? '' : 'es'}) ${fmt(redis)} points/s`,
      );
      lines.push(`   Redis / embedded, median of ${ROUNDS} paired runs: ${median(ratios).toFixed(3)} (pairs ${ratios.map((x) => x.toFixed(2)).join(', ')}; target >= 0.95)`);
      const pct = (xs: number[]) => `${(100 * median(xs)).toFixed(1)} %`;
      lines.push(`   worker wall time not spent evaluating (median): embedded ${pct(idle.embedded)}, Redis ${pct(idle.redis)} (target < 5 % on an idle machine)`);
    }
  } finally {
    for (const p of prefixes) await cleanupPrefix(url, p);
    rmSync(dir, { recursive: true, force: true });
  }
  return { lines };
}
