/**
 * Many fault trials at random moments (the vitest suite runs one of each):
 *   node bin/run-ts.mjs tests/redis/soak.ts [--trials N]      (default 5 of each kind)
 * Kind "worker": two worker processes; one holding a chunk is SIGKILLed at a random moment and a
 * replacement started. Kind "scheduler": the scheduler process is SIGKILLed 1-3 times at random
 * moments and run again until done. Every trial must end with the embedded pool's points table bit
 * for bit and every chunk ingested once. Uses REDIS_URL / TEST_REDIS_URL / 127.0.0.1:6379, a uuid
 * prefix per trial, removed afterwards. Exit code 1 when any trial fails.
 */
import path from 'node:path';
import { Queue } from 'bullmq';
import { runScan } from '../../scheduler/run.js';
import { bullConnection, redisOptionsFromUrl } from '../../scheduler/redis/connection.js';
import { RedisTransport } from '../../scheduler/redis/transport.js';
import { WorkerService } from '../../scheduler/redis/worker-service.js';
import { FAKE_PHYSICS, pointRows, query, tempDir, writeSpec } from '../scan/helpers.js';
import { MECH_SPEC, SLOW_PHYSICS, TEST_CODE_VERSION, TEST_REDIS_URL, cleanupPrefix, exited, killAll, newPrefix, startScheduler, startWorker, waitFor } from './helpers.js';

const trialsArg = process.argv.indexOf('--trials');
const TRIALS = trialsArg > 0 ? Number(process.argv[trialsArg + 1]) : 5;
const CHUNK = 8;
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
const silent = (): void => {};
process.env.DSTEST_MS_PER_POINT = '20';

const tmp = tempDir();
const specFile = writeSpec(tmp.dir, 'mech.json', MECH_SPEC);
const refDb = path.join(tmp.dir, 'ref.db');
await runScan({ specPath: specFile, dbPath: refDb, physicsModule: FAKE_PHYSICS, quiet: true, log: silent, workers: 1, chunkSize: CHUNK });
const reference = JSON.stringify(pointRows(refDb));

function verdict(db: string): string | null {
  if (JSON.stringify(pointRows(db)) !== reference) return 'points differ from the uninterrupted run';
  const c = query<{ n: number; max: number; bad: number }>(db, `SELECT COUNT(*) AS n, MAX(attempts) AS max, SUM(status <> 'done') AS bad FROM chunks`)[0]!;
  if (c.n !== 15 || c.max !== 1 || c.bad !== 0) return `chunks ${JSON.stringify(c)}, expected 15 done once each`;
  return null;
}

const chunksStored = (db: string): number => {
  try {
    return query<{ n: number }>(db, 'SELECT COUNT(*) AS n FROM chunks')[0]!.n;
  } catch {
    return 0;
  }
};

async function workerTrial(k: number): Promise<string | null> {
  const p = newPrefix();
  const db = path.join(tmp.dir, `w${k}.db`);
  const workers = [startWorker(TEST_REDIS_URL, p, { msPerPoint: 40 }), startWorker(TEST_REDIS_URL, p, { msPerPoint: 40 })];
  try {
    const t = new RedisTransport({ url: TEST_REDIS_URL, prefix: p, ledgerTag: 'soak', codeVersion: TEST_CODE_VERSION, pollMs: 200, log: silent });
    const scan = runScan({ specPath: specFile, dbPath: db, physicsModule: FAKE_PHYSICS, quiet: true, log: silent, chunkSize: CHUNK, transport: t });
    const queue = await waitFor('the work queue', () => t.workQueue !== '' && new Queue(t.workQueue, { connection: bullConnection(redisOptionsFromUrl(TEST_REDIS_URL)), prefix: p }));
    const victimJob = await waitFor('a worker holding a chunk', async () => (await queue.getJobs(['active']))[0], 120_000);
    await sleep(Math.random() * 1500);
    const victim = workers.find((w) => victimJob.processedBy?.includes(`-${w.pid}-`)) ?? workers[0]!;
    victim.kill('SIGKILL');
    await exited(victim);
    workers.push(startWorker(TEST_REDIS_URL, p, { msPerPoint: 40 }));
    await queue.close();
    const s = await scan;
    return s.status !== 'done' ? `status ${s.status}` : verdict(db);
  } finally {
    await killAll(workers);
    await cleanupPrefix(TEST_REDIS_URL, p);
  }
}

async function schedulerTrial(k: number): Promise<string | null> {
  const p = newPrefix();
  const db = path.join(tmp.dir, `s${k}.db`);
  const w = new WorkerService({ url: TEST_REDIS_URL, prefix: p, concurrency: 2, codeVersion: TEST_CODE_VERSION, physicsModule: SLOW_PHYSICS, pollMs: 200, heartbeatMs: 500, log: silent });
  await w.start();
  try {
    const kills = 1 + Math.floor(Math.random() * 3);
    for (let i = 0; i <= kills; i++) {
      const s = startScheduler(TEST_REDIS_URL, p, specFile, db, CHUNK);
      if (i < kills) {
        const before = chunksStored(db);
        await waitFor('progress', () => chunksStored(db) > before || s.exitCode !== null, 120_000);
        await sleep(Math.random() * 800);
        s.kill('SIGKILL');
      }
      await exited(s);
      if (i === kills && !/"status":"done"/.test(s.output())) return `last run did not finish: ${s.output().slice(-500)}`;
    }
    return verdict(db);
  } finally {
    await w.close(true);
    await cleanupPrefix(TEST_REDIS_URL, p);
  }
}

let failures = 0;
for (let k = 0; k < TRIALS; k++) {
  for (const [kind, trial] of [['worker', workerTrial], ['scheduler', schedulerTrial]] as const) {
    const t0 = performance.now();
    const problem = await trial(k).catch((err: Error) => `threw: ${err.message}`);
    if (problem) failures++;
    process.stdout.write(`trial ${k + 1}/${TRIALS} ${kind} kill: ${problem ?? 'ok'} (${((performance.now() - t0) / 1000).toFixed(1)} s)\n`);
  }
}
tmp.cleanup();
process.stdout.write(`${failures} of ${2 * TRIALS} trials failed\n`);
process.exit(failures > 0 ? 1 : 0);
