/**
 * Signals through the real CLI (`node bin/darksieve.mjs run`, real SQLite files), with the stand-in
 * physics of slow-physics.ts (DARKSIEVE_PHYSICS_MODULE), whose points sleep a fixed time, so chunks are
 * in flight for a known minimum time whatever the machine load:
 *  - SIGTERM behaves as a first SIGINT: the chunks in flight are finished and stored, the run says how
 *    to resume and exits 1, and the resumed scan equals an uninterrupted run bit for bit;
 *  - a second SIGINT abandons the chunks in flight: they are not stored, the run exits 1 at once,
 *    the ledger is consistent, and the resumed scan is again identical.
 * The resumes run in-process on fake-physics.ts (same values and knobs, no sleeps) to stay short.
 */
import type { ChildProcess } from 'node:child_process';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runScan } from '../../scheduler/run.js';
import { FAKE_PHYSICS, pointRows, query, runCli, tempDir, writeSpec } from './helpers.js';
import { SLOW_MS_PER_POINT } from './slow-physics.js';

const SLOW_PHYSICS = new URL('./slow-physics.ts', import.meta.url).href;
/** 60 x 2 x 5 = 600 points of stand-in physics */
const SPEC = {
  name: 'signals',
  model: { dm: 'majorana' },
  axes: {
    m_chi: { from: 10, to: 1000, steps: 60, spacing: 'log' },
    mediator: { values: ['vector', 'scalar'] },
    g_q: { from: 0.1, to: 1.0, steps: 5 },
  },
  detectors: [{ name: 'xe_fake', target: 'Xe', windowKeV: [5, 40], efficiency: 0.5, exposureKgDay: 1000 }],
};
const TOTAL = 600;
const WORKERS = 2;
/** chunks the scheduler keeps in flight on the embedded pool: 2 posted to each thread, 1 more each waiting */
const WINDOW = 3 * WORKERS;
const silent = (): void => {};

let tmp: ReturnType<typeof tempDir>;
let specFile: string;
let reference: string[][];

beforeAll(async () => {
  tmp = tempDir();
  specFile = writeSpec(tmp.dir, 'signals.json', SPEC);
  const db = path.join(tmp.dir, 'reference.db');
  await runScan({ specPath: specFile, dbPath: db, physicsModule: FAKE_PHYSICS, workers: 1, chunkSize: 600, quiet: true, log: silent });
  reference = pointRows(db);
  expect(reference.length).toBe(TOTAL);
});
afterAll(() => tmp.cleanup());

function doneChunks(db: string): number {
  try {
    return query<{ n: number }>(db, `SELECT COUNT(*) AS n FROM chunks WHERE status = 'done'`)[0]!.n;
  } catch {
    return -1; // no ledger or no schema yet
  }
}

/** The ledger is consistent: integrity ok, every done chunk has all its points, no point outside one. */
function expectConsistent(db: string, at: string): void {
  expect(query<{ integrity_check: string }>(db, 'PRAGMA integrity_check')[0]!.integrity_check, at).toBe('ok');
  const [c] = query<{ chunks: number; points: number; failed: number }>(
    db, `SELECT COUNT(*) AS chunks, COALESCE(SUM(n), 0) AS points, SUM(status = 'failed') AS failed FROM chunks WHERE status = 'done' OR status = 'failed'`,
  );
  expect(c!.failed ?? 0, at).toBe(0);
  const [p] = query<{ n: number }>(db, 'SELECT COUNT(*) AS n FROM points');
  expect(p!.n, `${at}: stored points vs points of done chunks`).toBe(c!.points);
  const [outside] = query<{ n: number }>(
    db, `SELECT COUNT(*) AS n FROM points p WHERE NOT EXISTS (SELECT 1 FROM chunks c WHERE c.scan_id = p.scan_id AND c.status = 'done' AND p.point_id >= c.first_id AND p.point_id < c.first_id + c.n)`,
  );
  expect(outside!.n, `${at}: points outside any done chunk`).toBe(0);
  expect(query<{ status: string }>(db, 'SELECT status FROM scans')[0]!.status, at).toBe('interrupted');
}

interface Signalled {
  readonly code: number | null;
  readonly stdout: string;
  readonly stderr: string;
  /** done chunks read just before the first signal */
  readonly doneAtSignal: number;
  /** ms from the last signal to the child's exit */
  readonly exitMs: number;
}

/** Runs the CLI on the slow physics and sends `signals` (spaced by gapMs) once `afterChunks` chunks are done. */
async function signalledRun(db: string, chunk: number, afterChunks: number, signals: readonly NodeJS.Signals[], gapMs = 100): Promise<Signalled> {
  let doneAtSignal = -1;
  let lastSignalAt = 0;
  let child: ChildProcess | null = null;
  const r = await runCli(['run', specFile, '--db', db, '--workers', String(WORKERS), '--chunk', String(chunk)], {
    env: { DARKSIEVE_PHYSICS_MODULE: SLOW_PHYSICS },
    onStart: (c) => {
      child = c;
      const poll = setInterval(() => {
        if (c.exitCode !== null || c.signalCode !== null) return clearInterval(poll);
        if (doneChunks(db) < afterChunks) return;
        clearInterval(poll);
        doneAtSignal = doneChunks(db);
        signals.forEach((sig, i) =>
          setTimeout(() => {
            lastSignalAt = performance.now();
            child?.kill(sig);
          }, i * gapMs),
        );
      }, 20);
      c.on('close', () => clearInterval(poll));
    },
  });
  return { code: r.code, stdout: r.stdout, stderr: r.stderr, doneAtSignal, exitMs: performance.now() - lastSignalAt };
}

describe('signals to darksieve run', () => {
  it('SIGTERM finishes the chunks in flight, says how to resume, exits 1; the resumed scan is identical', async () => {
    const db = path.join(tmp.dir, 'sigterm.db');
    // chunks of 10 points: at least 200 ms each; 60 chunks, so the window is full when the signal comes
    const r = await signalledRun(db, 10, 2, ['SIGTERM']);
    const at = `SIGTERM after ${r.doneAtSignal} chunks\nstderr: ${r.stderr}`;
    expect(r.code, at).toBe(1);
    expect(r.stderr, at).toContain('SIGTERM: finishing the chunks in flight');
    expect(r.stdout, at).toMatch(/interrupted/);
    expect(r.stdout, at).toContain(`resume with: darksieve run ${specFile} --db ${db} --workers 2`);
    const done = doneChunks(db);
    // every chunk in flight at the signal was finished and stored, nothing new was started
    expect(done - r.doneAtSignal, at).toBeGreaterThanOrEqual(WINDOW);
    expect(done, at).toBeLessThan(TOTAL / 10);
    expectConsistent(db, at);
    const resumed = await runScan({ specPath: specFile, dbPath: db, physicsModule: FAKE_PHYSICS, workers: WORKERS, quiet: true, log: silent });
    expect(resumed.status).toBe('done');
    expect(resumed.pointsThisRun).toBe(TOTAL - 10 * done);
    expect(pointRows(db)).toEqual(reference);
  });

  it('a second SIGINT abandons the chunks in flight at once, exits 1, leaves a consistent ledger; resume is identical', async () => {
    const db = path.join(tmp.dir, 'sigint-twice.db');
    // chunks of 50 points sleep at least 1 s each: finishing the 3 chunks each thread holds would take >= 2 s more
    const chunkMs = 50 * SLOW_MS_PER_POINT;
    const r = await signalledRun(db, 50, 1, ['SIGINT', 'SIGINT']);
    const at = `SIGINT twice after ${r.doneAtSignal} chunks, exit ${r.exitMs.toFixed(0)} ms after the second\nstderr: ${r.stderr}`;
    expect(r.code, at).toBe(1);
    expect(r.stdout, at).toMatch(/interrupted/);
    expect(r.stdout, at).toContain('resume with:');
    const done = doneChunks(db);
    // at most the two chunks running at the first signal could finish in the 100 ms before the second;
    // the chunks waiting behind them (>= 1 s each) were abandoned
    expect(done - r.doneAtSignal, at).toBeLessThanOrEqual(WORKERS);
    expect(r.exitMs, at).toBeLessThan(2 * chunkMs);
    expectConsistent(db, at);
    const resumed = await runScan({ specPath: specFile, dbPath: db, physicsModule: FAKE_PHYSICS, workers: WORKERS, quiet: true, log: silent });
    expect(resumed.status).toBe('done');
    expect(resumed.pointsThisRun).toBe(TOTAL - 50 * done);
    expect(pointRows(db)).toEqual(reference);
  });
});
