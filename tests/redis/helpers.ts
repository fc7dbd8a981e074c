/**
 * Shared helpers of the Redis tests: the real server under test (TEST_REDIS_URL, REDIS_URL, or
 * 127.0.0.1:6379), a uuid key prefix per test with clean-up by obliterate, worker and scheduler
 * child processes, and private redis-server instances for restart tests.
 *
 * When the server is unreachable the suites skip and print why, except under CI=true, where the
 * check throws so the run fails (RULES.md 10).
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { randomUUID } from 'node:crypto';
import { createServer } from 'node:net';
import path from 'node:path';
import { Queue } from 'bullmq';
import { Redis } from 'ioredis';
import { bullConnection, probeRedis, redisOptionsFromUrl } from '../../scheduler/redis/connection.js';
import { scanSetKey } from '../../scheduler/redis/keys.js';
import { REPO } from '../scan/helpers.js';
import { codeVersion } from '../../scheduler/run.js';

/**
 * The code version every scheduler and worker of the tests announces: the real one, because worker
 * processes (runBullWorker) announce it and refuse scans of any other.
 */
export const TEST_CODE_VERSION = codeVersion();

export const TEST_REDIS_URL = process.env.TEST_REDIS_URL ?? process.env.REDIS_URL ?? 'redis://127.0.0.1:6379';
export const SLOW_PHYSICS = new URL('./slow-physics.ts', import.meta.url).href;
export const CRASHY_PHYSICS = new URL('./crashy-physics.ts', import.meta.url).href;
const RUN_TS = path.join(REPO, 'bin/run-ts.mjs');

/** Whether the shared test Redis answers; under CI=true an unreachable one throws. */
export async function redisAvailable(): Promise<boolean> {
  try {
    await probeRedis(TEST_REDIS_URL, 1500);
    return true;
  } catch (err) {
    const reason = `Redis tests: ${(err as Error).message}`;
    if (process.env.CI === 'true') throw new Error(`${reason} (CI=true: Redis is required)`);
    console.warn(`skipping ${reason}`);
    return false;
  }
}

export const newPrefix = (): string => `dstest-${randomUUID()}`;

/** Obliterates every queue under a prefix and deletes darksieve's own keys there. */
export async function cleanupPrefix(url: string, prefix: string): Promise<void> {
  const client = new Redis(redisOptionsFromUrl(url));
  try {
    const keys: string[] = [];
    let cursor = '0';
    do {
      const [next, batch] = await client.scan(cursor, 'MATCH', `${prefix}:*`, 'COUNT', 1000);
      cursor = next;
      keys.push(...batch);
    } while (cursor !== '0');
    const queues = new Set(keys.filter((k) => k.endsWith(':meta')).map((k) => k.slice(prefix.length + 1, -':meta'.length)));
    for (const name of queues) {
      const q = new Queue(name, { connection: bullConnection(redisOptionsFromUrl(url)), prefix });
      await q.obliterate({ force: true });
      await q.close();
    }
    const rest: string[] = [];
    cursor = '0';
    do {
      const [next, batch] = await client.scan(cursor, 'MATCH', `${prefix}:*`, 'COUNT', 1000);
      cursor = next;
      rest.push(...batch);
    } while (cursor !== '0');
    if (rest.length > 0) await client.del(...rest);
  } finally {
    client.disconnect();
  }
}

/** Keys left under a prefix (for checks that a finished scan cleans up after itself). */
export async function keysUnder(url: string, prefix: string): Promise<string[]> {
  const client = new Redis(redisOptionsFromUrl(url));
  try {
    return await client.keys(`${prefix}:*`);
  } finally {
    client.disconnect();
  }
}

export async function announcedScans(url: string, prefix: string): Promise<string[]> {
  const client = new Redis(redisOptionsFromUrl(url));
  try {
    return await client.smembers(scanSetKey(prefix));
  } finally {
    client.disconnect();
  }
}

/** The scan of the Redis tests (the same shape as tests/scan/run.test.ts), 120 points. */
export const MECH_SPEC = {
  name: 'mech',
  model: { dm: 'majorana' },
  axes: {
    m_chi: { from: 10, to: 1000, steps: 12, spacing: 'log' },
    mediator: { values: ['vector', 'scalar'] },
    g_q: { from: 0.1, to: 1.0, steps: 5 },
    m_med: { equals: '3 * m_chi' },
  },
  detectors: [{ name: 'xe_fake', target: 'Xe', windowKeV: [5, 40], efficiency: 0.5, exposureKgDay: 1000 }],
};
export const MECH_TOTAL = 12 * 2 * 5;

export interface WorkerProcessOptions {
  /** wall time per point of the slow stand-in physics, ms (default 3) */
  readonly msPerPoint?: number;
  readonly concurrency?: number;
  readonly physics?: string;
  readonly lockMs?: number;
  readonly stalledMs?: number;
}

/** Starts tests/redis/worker-process.ts (runBullWorker with test physics and short locks) as a child. */
export function startWorker(url: string, prefix: string, o: WorkerProcessOptions = {}): ChildProcess & { output: () => string } {
  const child = spawn(process.execPath, [RUN_TS, path.join(REPO, 'tests/redis/worker-process.ts')], {
    cwd: REPO,
    env: {
      ...process.env, DSTEST_URL: url, DSTEST_PREFIX: prefix, DSTEST_CONCURRENCY: String(o.concurrency ?? 1),
      DSTEST_PHYSICS: o.physics ?? SLOW_PHYSICS, DSTEST_MS_PER_POINT: String(o.msPerPoint ?? 3), DSTEST_LOCK_MS: String(o.lockMs ?? 2000), DSTEST_STALLED_MS: String(o.stalledMs ?? 1000),
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  child.stdout!.on('data', (d: Buffer) => (out += d.toString()));
  child.stderr!.on('data', (d: Buffer) => (out += d.toString()));
  return Object.assign(child, { output: () => out });
}

/** Resolves when a child has exited (at once if it already has). */
export function exited(child: ChildProcess): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return Promise.resolve();
  return new Promise((resolve) => child.once('exit', () => resolve()));
}

export async function killAll(children: readonly ChildProcess[]): Promise<void> {
  for (const c of children) if (c.exitCode === null && c.signalCode === null) c.kill('SIGKILL');
  await Promise.all(children.map(exited));
}

/** Polls `check` every 100 ms; rejects with `what` after timeoutMs (so event-driven waits cannot hang). */
export async function waitFor<T>(what: string, check: () => Promise<T | null | undefined | false> | T | null | undefined | false, timeoutMs = 20_000): Promise<T> {
  const end = Date.now() + timeoutMs;
  for (;;) {
    const v = await check();
    if (v) return v;
    if (Date.now() > end) throw new Error(`timed out after ${timeoutMs} ms waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.once('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const port = (srv.address() as { port: number }).port;
      srv.close(() => resolve(port));
    });
  });
}

/** Starts tests/redis/scheduler-process.ts (runScan through Redis) as a child; its stdout ends with the summary JSON. */
export function startScheduler(url: string, prefix: string, specFile: string, dbFile: string, chunk: number): ChildProcess & { output: () => string } {
  const child = spawn(process.execPath, [RUN_TS, path.join(REPO, 'tests/redis/scheduler-process.ts')], {
    cwd: REPO,
    env: { ...process.env, DSTEST_URL: url, DSTEST_PREFIX: prefix, DSTEST_SPEC: specFile, DSTEST_DB: dbFile, DSTEST_CHUNK: String(chunk) },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  child.stdout!.on('data', (d: Buffer) => (out += d.toString()));
  child.stderr!.on('data', (d: Buffer) => (out += d.toString()));
  return Object.assign(child, { output: () => out });
}

export const haveRedisServer = (): boolean => spawnSync('redis-server', ['--version'], { stdio: 'ignore' }).status === 0;

/** A private redis-server on its own port that keeps nothing on disk; `restart` kills it and starts a fresh one on the same port. */
export class PrivateRedis {
  private child: ChildProcess | null = null;
  constructor(readonly port: number, private readonly extraArgs: readonly string[] = []) {}

  get url(): string {
    return `redis://127.0.0.1:${this.port}`;
  }

  async start(): Promise<void> {
    this.child = spawn('redis-server', ['--port', String(this.port), '--bind', '127.0.0.1', '--save', '', '--appendonly', 'no', ...this.extraArgs], { stdio: 'ignore' });
    const password = this.extraArgs[this.extraArgs.indexOf('--requirepass') + 1];
    const url = this.extraArgs.includes('--requirepass') ? `redis://:${password}@127.0.0.1:${this.port}` : this.url;
    await waitFor('the private redis-server to answer', () => probeRedis(url, 500).then(() => true, () => false), 10_000);
  }

  async stop(): Promise<void> {
    const c = this.child;
    this.child = null;
    if (c && c.exitCode === null && c.signalCode === null) {
      c.kill('SIGKILL');
      await exited(c);
    }
  }

  async restart(downMs = 500): Promise<void> {
    await this.stop();
    await new Promise((r) => setTimeout(r, downMs));
    await this.start();
  }
}
