/**
 * Scans through BullMQ on the real Redis: the same rows bit for bit as the embedded pool, clean-up
 * of the scan's queues, a chunk that fails every attempt recorded as failed while the scan goes on,
 * a resume that retries it, and a worker taking up a new scan from its announcement message.
 * Stand-in physics (tests/scan/fake-physics.ts) keeps this fast.
 */
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runScan, type RunOptions } from '../../scheduler/run.js';
import { RedisTransport } from '../../scheduler/redis/transport.js';
import { redactRedisUrl } from '../../scheduler/redis/connection.js';
import { WorkerService } from '../../scheduler/redis/worker-service.js';
import { FAKE_PHYSICS, pointRows, query, tempDir, writeSpec } from '../scan/helpers.js';
import { CRASHY_PHYSICS, MECH_SPEC, MECH_TOTAL, TEST_CODE_VERSION, TEST_REDIS_URL, announcedScans, cleanupPrefix, keysUnder, newPrefix, redisAvailable, waitFor } from './helpers.js';

const available = await redisAvailable();

const TOTAL = MECH_TOTAL;
const silent = (): void => {};

describe.skipIf(!available)('scans through Redis (BullMQ)', () => {
  let tmp: ReturnType<typeof tempDir>;
  let specFile: string;
  let reference: string[][];
  const prefixes: string[] = [];

  beforeAll(async () => {
    tmp = tempDir();
    specFile = writeSpec(tmp.dir, 'mech.json', MECH_SPEC);
    const db = path.join(tmp.dir, 'embedded.db');
    await runScan({ specPath: specFile, dbPath: db, physicsModule: FAKE_PHYSICS, quiet: true, log: silent, workers: 1, chunkSize: 16 });
    reference = pointRows(db);
    expect(reference.length).toBe(TOTAL);
  });
  afterAll(async () => {
    for (const p of prefixes) await cleanupPrefix(TEST_REDIS_URL, p);
    tmp.cleanup();
  });

  const prefix = (): string => {
    const p = newPrefix();
    prefixes.push(p);
    return p;
  };
  const transport = (p: string, extra: Partial<ConstructorParameters<typeof RedisTransport>[0]> = {}) =>
    new RedisTransport({ url: TEST_REDIS_URL, prefix: p, ledgerTag: 'test', codeVersion: TEST_CODE_VERSION, pollMs: 200, log: silent, ...extra });
  const run = (db: string, t: RedisTransport, extra: Partial<RunOptions> = {}) =>
    runScan({ specPath: specFile, dbPath: db, physicsModule: FAKE_PHYSICS, quiet: true, log: silent, chunkSize: 16, transport: t, ...extra });

  it('gives the embedded pool rows bit for bit and leaves no queue behind', async () => {
    const p = prefix();
    const worker = new WorkerService({ url: TEST_REDIS_URL, prefix: p, concurrency: 2, codeVersion: TEST_CODE_VERSION, physicsModule: FAKE_PHYSICS, pollMs: 200, log: silent });
    await worker.start();
    try {
      const db = path.join(tmp.dir, 'redis.db');
      const s = await run(db, transport(p));
      expect(s.status).toBe('done');
      expect(s.pointsThisRun).toBe(TOTAL);
      expect(pointRows(db)).toEqual(reference);
      const chunks = query<{ n: number; attempts: number }>(db, `SELECT COUNT(*) AS n, MAX(attempts) AS attempts FROM chunks WHERE status = 'done'`)[0]!;
      expect(chunks).toEqual({ n: 8, attempts: 1 });
      expect(await announcedScans(TEST_REDIS_URL, p)).toEqual([]);
    } finally {
      await worker.close();
    }
    expect(await keysUnder(TEST_REDIS_URL, p)).toEqual([]);
  });

  it('records a chunk that fails every attempt, goes on, and retries it on resume', async () => {
    const p = prefix();
    // crashy physics kills its thread at one point: exactly one chunk fails, twice
    const worker = new WorkerService({ url: TEST_REDIS_URL, prefix: p, concurrency: 2, codeVersion: TEST_CODE_VERSION, physicsModule: CRASHY_PHYSICS, pollMs: 200, log: silent });
    await worker.start();
    const db = path.join(tmp.dir, 'crashy.db');
    try {
      const s = await run(db, transport(p, { attempts: 2, backoffMs: 50 }), { redisUrl: TEST_REDIS_URL });
      expect(s.status).toBe('incomplete');
      // the printed way to resume keeps the scan on this Redis
      expect(s.resumeCommand).toContain(` --redis ${redactRedisUrl(TEST_REDIS_URL)}`);
      expect(s.chunksFailed).toBe(1);
      const failed = query<{ attempts: number; error: string }>(db, `SELECT attempts, error FROM chunks WHERE status = 'failed'`);
      expect(failed.length).toBe(s.chunksFailed);
      for (const f of failed) {
        expect(f.attempts).toBe(2);
        expect(f.error).toMatch(/exited with code 7/);
      }
      expect(s.pointsDone).toBe(TOTAL - 16);
    } finally {
      await worker.close();
    }
    // resume with well-behaved workers: the failed chunks run again and the ledger ends complete
    const good = new WorkerService({ url: TEST_REDIS_URL, prefix: p, concurrency: 2, codeVersion: TEST_CODE_VERSION, physicsModule: FAKE_PHYSICS, pollMs: 200, log: silent });
    await good.start();
    try {
      const s = await run(db, transport(p));
      expect(s.status).toBe('done');
      expect(s.resumed).toBe(true);
      expect(pointRows(db)).toEqual(reference);
    } finally {
      await good.close();
    }
  });

  it('a worker on other code refuses the scan unless told otherwise; the scan then runs on one that serves it', async () => {
    const p = prefix();
    const linesOther: string[] = [];
    const linesAllowed: string[] = [];
    const other = new WorkerService({ url: TEST_REDIS_URL, prefix: p, concurrency: 1, codeVersion: 'other', physicsModule: FAKE_PHYSICS, pollMs: 200, log: (l) => linesOther.push(l) });
    await other.start();
    const db = path.join(tmp.dir, 'other-code.db');
    const t = transport(p);
    let allowed: WorkerService | null = null;
    try {
      const scan = run(db, t);
      await waitFor('the other-code worker to refuse the scan', () => linesOther.some((l) => l.startsWith('not serving scan')), 5000);
      expect(linesOther.join('\n')).toContain(`started by code ${TEST_CODE_VERSION} and this worker runs other; results are bit-identical only with the same code`);
      expect(other.serving).toEqual([]);
      allowed = new WorkerService({ url: TEST_REDIS_URL, prefix: p, concurrency: 1, codeVersion: 'other', allowOtherCode: true, physicsModule: FAKE_PHYSICS, pollMs: 200, log: (l) => linesAllowed.push(l) });
      await allowed.start();
      const s = await scan;
      expect(s.status).toBe('done');
      expect(linesAllowed.join('\n')).toContain(`was started by code ${TEST_CODE_VERSION}, this worker runs other; serving it as asked`);
      // every chunk was evaluated by the worker that was allowed to serve it
      expect(other.serving).toEqual([]);
      expect(pointRows(db)).toEqual(reference);
    } finally {
      await other.close();
      await allowed?.close();
    }
  });

  it('a worker takes up a newly announced scan at once, without waiting for its discovery poll', async () => {
    const p = prefix();
    // the poll runs once at start (no scan yet) and then not for 10 minutes: only the announcement
    // message can bring this scan to the worker
    const worker = new WorkerService({ url: TEST_REDIS_URL, prefix: p, concurrency: 1, codeVersion: TEST_CODE_VERSION, physicsModule: FAKE_PHYSICS, pollMs: 600_000, log: silent });
    await worker.start();
    const db = path.join(tmp.dir, 'announced.db');
    const t = transport(p);
    try {
      const scan = run(db, t);
      const served = await waitFor('the worker to serve the announced scan', () => worker.serving.length > 0, 3000).catch(async (err: Error) => {
        await t.close();
        throw err;
      });
      expect(served).toBe(true);
      const s = await scan;
      expect(s.status).toBe('done');
      expect(pointRows(db)).toEqual(reference);
    } finally {
      await worker.close();
    }
  });
});
