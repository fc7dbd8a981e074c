/**
 * The CLI over Redis: an unreachable Redis answered fast with exit 1 and a clear message (password
 * hidden, nothing written); and end to end on a private password-protected redis-server, real
 * physics, `darksieve worker` + `darksieve run --redis` giving the rows of the embedded run bit for
 * bit, `status --redis` listing the worker, and the password nowhere in output or ledger.
 */
import { spawn } from 'node:child_process';
import { randomUUID } from 'node:crypto';
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { probeRedis, RedisUnreachableError } from '../../scheduler/redis/connection.js';
import { CLI, REPO, pointRows, runCli, tempDir, writeSpec } from '../scan/helpers.js';
import { PrivateRedis, exited, freePort, haveRedisServer, killAll, redisAvailable, waitFor } from './helpers.js';

const available = await redisAvailable();
const NO_REDIS_ENV = { REDIS_URL: '' };

let tmp: ReturnType<typeof tempDir>;
beforeAll(() => {
  tmp = tempDir();
});
afterAll(() => tmp.cleanup());

describe('an unreachable Redis', () => {
  it('is refused by the probe in under 2 s, naming the redacted URL', async () => {
    const t0 = performance.now();
    const err = await probeRedis('redis://:hunter2secret@127.0.0.1:1').catch((e: unknown) => e);
    const ms = performance.now() - t0;
    expect(err).toBeInstanceOf(RedisUnreachableError);
    expect(ms, `probe took ${ms.toFixed(0)} ms`).toBeLessThan(2000);
    expect((err as Error).message).toContain('cannot reach Redis at redis://:***@127.0.0.1:1');
    expect((err as Error).message).not.toContain('hunter2secret');
  });

  it('makes `run --redis` and `worker` exit 1 with the message, writing no ledger', async () => {
    const spec = writeSpec(tmp.dir, 'tiny.json', { name: 'tiny', axes: { m_chi: { values: [50, 100] } } });
    const db = path.join(tmp.dir, 'unreachable.db');
    for (const args of [['run', spec, '--db', db, '--redis', 'redis://:hunter2secret@127.0.0.1:1'], ['worker', '--redis', 'redis://:hunter2secret@127.0.0.1:1']]) {
      // the time is checked on the probe itself (above): the CLI's start-up on a loaded machine is not the probe's
      const r = await runCli(args, { timeoutMs: 60_000, env: NO_REDIS_ENV });
      expect(r.code, r.stderr).toBe(1);
      expect(r.stderr).toMatch(/cannot reach Redis at redis:\/\/:\*\*\*@127\.0\.0\.1:1: .*ECONNREFUSED/);
      expect(r.stderr + r.stdout).not.toContain('hunter2secret');
    }
    expect(existsSync(db)).toBe(false);
  });

  it('an unparsable URL is bad input (exit 2) naming --redis', async () => {
    const r = await runCli(['worker', '--redis', 'http://127.0.0.1:6379'], { env: NO_REDIS_ENV });
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--redis: unsupported scheme http:/);
  });
});

describe.skipIf(!available || !haveRedisServer())('darksieve worker + run --redis, end to end with a password', () => {
  const password = `pw-${randomUUID()}`;
  let redis: PrivateRedis;
  beforeAll(async () => {
    redis = new PrivateRedis(await freePort(), ['--requirepass', password]);
    await redis.start();
  });
  afterAll(async () => {
    await redis.stop();
  });

  it('gives the embedded rows bit for bit; status lists the worker; the password is never printed or stored', async () => {
    const url = `redis://:${password}@127.0.0.1:${redis.port}`;
    const spec = writeSpec(tmp.dir, 'real.json', {
      name: 'real', model: { dm: 'dirac', mediator: 'vector', g_chi: 1, g_q: 0.25 },
      axes: { m_chi: { from: 20, to: 800, steps: 3, spacing: 'log' }, m_med: { values: [100, 1500] } },
    });
    const embedded = path.join(tmp.dir, 'real-embedded.db');
    const e = await runCli(['run', spec, '--db', embedded, '--workers', '1', '--chunk', '2', '--quiet'], { env: NO_REDIS_ENV, timeoutMs: 120_000 });
    expect(e.code, e.stderr).toBe(0);

    const worker = spawn(process.execPath, [CLI, 'worker', '--redis', url, '--concurrency', '2'], { cwd: REPO, env: { ...process.env, REDIS_URL: '' }, stdio: ['ignore', 'pipe', 'pipe'] });
    let workerOut = '';
    worker.stdout.on('data', (d: Buffer) => (workerOut += d.toString()));
    worker.stderr.on('data', (d: Buffer) => (workerOut += d.toString()));
    try {
      const db = path.join(tmp.dir, 'real-redis.db');
      const r = await runCli(['run', spec, '--db', db, '--chunk', '2', '--quiet', '--redis', url], { env: NO_REDIS_ENV, timeoutMs: 150_000 });
      expect(r.code, r.stderr + workerOut).toBe(0);
      expect(pointRows(db)).toEqual(pointRows(embedded));

      const st = await runCli(['status', db, '--json', '--redis', url], { env: NO_REDIS_ENV });
      expect(st.code, st.stderr).toBe(0);
      const status = JSON.parse(st.stdout) as { scans: { status: string; chunks_done: number }[]; redis: { redis: string; workers: { chunks_done: number }[]; scans: unknown[] } };
      expect(status.scans[0]).toMatchObject({ status: 'done', chunks_done: 3 });
      expect(status.redis.redis).toBe(`redis://:***@127.0.0.1:${redis.port}`);
      expect(status.redis.workers.length).toBe(1);
      // the finished scan's queues were removed
      expect(status.redis.scans).toEqual([]);
      await waitFor('the worker heartbeat to count 3 chunks', async () => {
        const again = await runCli(['status', db, '--json', '--redis', url], { env: NO_REDIS_ENV });
        return (JSON.parse(again.stdout) as typeof status).redis.workers[0]?.chunks_done === 3;
      }, 30_000);

      const printed = e.stdout + e.stderr + r.stdout + r.stderr + st.stdout + st.stderr + workerOut;
      expect(printed).not.toContain(password);
      expect(r.stderr).toContain(`redis://:***@127.0.0.1:${redis.port}`);
      for (const f of readdirSync(tmp.dir).filter((n) => n.startsWith('real-redis.db')))
        expect(readFileSync(path.join(tmp.dir, f)).includes(password), f).toBe(false);

      worker.kill('SIGTERM');
      await exited(worker);
      expect(worker.exitCode, workerOut).toBe(0);
    } finally {
      await killAll([worker]);
    }
  }, 240_000);
});
