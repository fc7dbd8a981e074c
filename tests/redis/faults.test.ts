/**
 * Fault tolerance on the real Redis, each test with its own key prefix: a worker SIGKILLed while it
 * holds a chunk, the scheduler SIGKILLed mid-scan and run again, a Redis restart that loses every
 * key, and workers joining late. Every case must end with the points table of an uninterrupted run,
 * bit for bit, and every chunk ingested exactly once (chunks.attempts = 1). Kill moments are random;
 * tests/redis/soak.ts repeats these trials many times.
 */
import path from 'node:path';
import { Queue } from 'bullmq';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runScan } from '../../scheduler/run.js';
import { bullConnection, redisOptionsFromUrl } from '../../scheduler/redis/connection.js';
import { ledgerTag } from '../../scheduler/redis/keys.js';
import { redisLiveStatus } from '../../scheduler/redis/status.js';
import { RedisTransport } from '../../scheduler/redis/transport.js';
import { WorkerService } from '../../scheduler/redis/worker-service.js';
import { FAKE_PHYSICS, pointRows, query, tempDir, writeSpec } from '../scan/helpers.js';
import {
  MECH_SPEC, PrivateRedis, SLOW_PHYSICS, TEST_CODE_VERSION, TEST_REDIS_URL, cleanupPrefix, exited, freePort, haveRedisServer, killAll,
  newPrefix, redisAvailable, startScheduler, startWorker, waitFor,
} from './helpers.js';

const available = await redisAvailable();
const silent = (): void => {};
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
const CHUNK = 8;
// the threads of in-process workers with SLOW_PHYSICS read this when they load it: 160 ms per chunk
process.env.DSTEST_MS_PER_POINT = '20';

describe.skipIf(!available)('fault tolerance on Redis', () => {
  let tmp: ReturnType<typeof tempDir>;
  let specFile: string;
  let reference: string[][];
  const cleanups: (() => Promise<void>)[] = [];

  beforeAll(async () => {
    tmp = tempDir();
    specFile = writeSpec(tmp.dir, 'mech.json', MECH_SPEC);
    const db = path.join(tmp.dir, 'embedded.db');
    await runScan({ specPath: specFile, dbPath: db, physicsModule: FAKE_PHYSICS, quiet: true, log: silent, workers: 1, chunkSize: CHUNK });
    reference = pointRows(db);
  });
  afterAll(async () => {
    for (const c of cleanups.reverse()) await c();
    tmp.cleanup();
  });

  const prefix = (url = TEST_REDIS_URL): string => {
    const p = newPrefix();
    cleanups.push(() => cleanupPrefix(url, p));
    return p;
  };
  const expectExactlyOnce = (db: string): void => {
    expect(pointRows(db)).toEqual(reference);
    const c = query<{ n: number; max: number; failed: number }>(db, `SELECT COUNT(*) AS n, MAX(attempts) AS max, SUM(status <> 'done') AS failed FROM chunks`)[0]!;
    expect(c).toEqual({ n: 15, max: 1, failed: 0 });
  };

  it('a worker SIGKILLed while it holds a chunk: the chunk runs elsewhere, nothing lost or duplicated', async () => {
    const p = prefix();
    const a = startWorker(TEST_REDIS_URL, p, { msPerPoint: 60 });
    cleanups.push(() => killAll([a]));
    const t = new RedisTransport({ url: TEST_REDIS_URL, prefix: p, ledgerTag: 'test', codeVersion: TEST_CODE_VERSION, pollMs: 200, log: silent });
    const db = path.join(tmp.dir, 'worker-kill.db');
    const scan = runScan({ specPath: specFile, dbPath: db, physicsModule: FAKE_PHYSICS, quiet: true, log: silent, chunkSize: CHUNK, transport: t });
    const queue = await waitFor('the work queue', () => t.workQueue !== '' && new Queue(t.workQueue, { connection: bullConnection(redisOptionsFromUrl(TEST_REDIS_URL)), prefix: p }));
    try {
      const held = await waitFor('worker A to hold a chunk', async () => (await queue.getJobs(['active'])).find((j) => j.processedBy?.includes(`-${a.pid}-`)), 90_000);
      // B joins now, so that A surely holds chunks when it dies; B picks up the rest and A's stalled ones
      const b = new WorkerService({ url: TEST_REDIS_URL, prefix: p, concurrency: 1, codeVersion: TEST_CODE_VERSION, physicsModule: FAKE_PHYSICS, pollMs: 200, heartbeatMs: 500, lockDurationMs: 2000, stalledIntervalMs: 1000, log: silent });
      await b.start();
      cleanups.push(() => b.close(true));
      await sleep(Math.random() * 300);
      const heldAtKill = (await queue.getJobs(['active'])).filter((j) => j.processedBy?.includes(`-${a.pid}-`)).length;
      a.kill('SIGKILL');
      await exited(a);
      expect(heldAtKill, 'chunks A held when killed').toBeGreaterThan(0);
      const s = await scan;
      expect(s.status, a.output()).toBe('done');
      expect(held.id).toMatch(/^s1-[0-9a-f]{12}-c\d{6}$/);
      expectExactlyOnce(db);
    } finally {
      await queue.close();
    }
  }, 180_000);

  it('the scheduler SIGKILLed mid-scan: the same command resumes; results already in Redis are ingested once', async () => {
    const p = prefix();
    const w = new WorkerService({ url: TEST_REDIS_URL, prefix: p, concurrency: 2, codeVersion: TEST_CODE_VERSION, physicsModule: SLOW_PHYSICS, pollMs: 200, heartbeatMs: 500, log: silent });
    await w.start();
    cleanups.push(() => w.close(true));
    const db = path.join(tmp.dir, 'scheduler-kill.db');
    const first = startScheduler(TEST_REDIS_URL, p, specFile, db, CHUNK);
    cleanups.push(() => killAll([first]));
    await waitFor('a chunk stored by the first scheduler', () => {
      try {
        return query<{ n: number }>(db, 'SELECT COUNT(*) AS n FROM chunks')[0]!.n > 0;
      } catch {
        return false;
      }
    }, 90_000);
    await sleep(Math.random() * 600);
    first.kill('SIGKILL');
    await exited(first);
    const before = query<{ n: number }>(db, 'SELECT COUNT(*) AS n FROM chunks')[0]!.n;
    // let the worker finish chunks while no scheduler listens: their results wait in Redis
    await sleep(1000);
    const second = startScheduler(TEST_REDIS_URL, p, specFile, db, CHUNK);
    cleanups.push(() => killAll([second]));
    await exited(second);
    const summary = JSON.parse(second.output().trim().split('\n').at(-1)!) as { status: string; resumed: boolean };
    expect(summary, second.output()).toMatchObject({ status: 'done', resumed: true });
    expect(before).toBeLessThan(15);
    expectExactlyOnce(db);
  }, 180_000);

  it.skipIf(!haveRedisServer())('a Redis restart that loses every key mid-scan: the running scan waits, re-queues and completes', async () => {
    const redis = new PrivateRedis(await freePort());
    await redis.start();
    cleanups.push(() => redis.stop());
    const p = newPrefix();
    const worker = new WorkerService({ url: redis.url, prefix: p, concurrency: 2, codeVersion: TEST_CODE_VERSION, physicsModule: SLOW_PHYSICS, pollMs: 200, heartbeatMs: 500, lockDurationMs: 2000, stalledIntervalMs: 1000, log: silent });
    await worker.start();
    cleanups.push(() => worker.close(true));
    const lines: string[] = [];
    const t = new RedisTransport({ url: redis.url, prefix: p, ledgerTag: 'test', codeVersion: TEST_CODE_VERSION, pollMs: 200, log: (l) => lines.push(l) });
    const db = path.join(tmp.dir, 'redis-restart.db');
    const scan = runScan({ specPath: specFile, dbPath: db, physicsModule: FAKE_PHYSICS, quiet: true, log: silent, chunkSize: CHUNK, transport: t });
    await waitFor('a chunk stored before the restart', () => {
      try {
        return query<{ n: number }>(db, 'SELECT COUNT(*) AS n FROM chunks')[0]!.n > 0;
      } catch {
        return false;
      }
    }, 90_000);
    await redis.restart(800);
    const s = await scan;
    expect(s.status, lines.join('\n')).toBe('done');
    expect(lines.join('\n')).toMatch(/lost the scan's queue/);
    expectExactlyOnce(db);
  }, 180_000);

  it('workers joining late take chunks, status shows them and the queue, and a worker leaving does not stop the scan', async () => {
    const p = prefix();
    const mk = () => new WorkerService({ url: TEST_REDIS_URL, prefix: p, concurrency: 1, codeVersion: TEST_CODE_VERSION, physicsModule: SLOW_PHYSICS, pollMs: 200, heartbeatMs: 500, log: silent });
    const first = mk();
    await first.start();
    cleanups.push(() => first.close(true));
    const db = path.join(tmp.dir, 'late.db');
    // the ledger tag of the real CLI, so that status finds the queue from the ledger path
    const t = new RedisTransport({ url: TEST_REDIS_URL, prefix: p, ledgerTag: ledgerTag(db), codeVersion: TEST_CODE_VERSION, pollMs: 200, log: silent });
    const scan = runScan({ specPath: specFile, dbPath: db, physicsModule: FAKE_PHYSICS, quiet: true, log: silent, chunkSize: CHUNK, transport: t });
    await waitFor('a first chunk', () => {
      try {
        return query<{ n: number }>(db, 'SELECT COUNT(*) AS n FROM chunks')[0]!.n > 0;
      } catch {
        return false;
      }
    }, 90_000);
    const scanRow = query<{ id: number; spec_hash: string }>(db, 'SELECT id, spec_hash FROM scans')[0]!;
    const live = await redisLiveStatus(TEST_REDIS_URL, p, db, [scanRow]);
    expect(live.workers.length).toBe(1);
    expect(live.scans.length).toBe(1);
    expect(live.scans[0]!.chunks_queued + live.scans[0]!.chunks_running).toBeGreaterThan(0);
    const late = [mk(), mk()];
    await Promise.all(late.map((w) => w.start()));
    cleanups.push(() => Promise.all(late.map((w) => w.close(true))).then(() => undefined));
    expect((await redisLiveStatus(TEST_REDIS_URL, p, db, [scanRow])).workers.length).toBe(3);
    await first.close();
    const s = await scan;
    expect(s.status).toBe('done');
    expect(late[0]!.chunksEvaluated + late[1]!.chunksEvaluated).toBeGreaterThan(0);
    expectExactlyOnce(db);
  }, 180_000);
});
