/**
 * Crash-safety trials on real physics: the real CLI (`node bin/darksieve.mjs run`) is killed with
 * SIGKILL (or interrupted with SIGINT) after a chosen number of chunks, the scan is resumed, and the
 * ledger must equal an uninterrupted run row for row and bit for bit.
 *
 * The physics sources are fingerprinted around every trial: a trial during which they changed (other
 * people edit physics/ in this shared tree) compares results of two codes, so it is repeated against
 * a fresh reference instead of being counted.
 *
 * The test (cli.test.ts) runs a few trials; for more, run
 *   node bin/run-ts.mjs tests/scan/kill-trials.ts [TRIALS] [SEED]
 * which prints one line per trial and exits 1 on any mismatch.
 */
import Database from 'better-sqlite3';
import type { ChildProcess } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, readFileSync, readdirSync } from 'node:fs';
import path from 'node:path';
import { runScan, type RunSummary } from '../../scheduler/run.js';
import { REPO, pointRows, runCli, tempDir, writeSpec, type CliResult } from './helpers.js';

/** 2 x 40 x 40 = 3200 points of real physics, no detectors or targets (fast), chunks of 20. */
export const TRIAL_SPEC = {
  name: 'trial',
  model: { dm: 'dirac', g_chi: 0.8, g_q: 0.3 },
  axes: {
    mediator: { values: ['vector', 'scalar'] },
    m_chi: { from: 5, to: 3000, steps: 40, spacing: 'log' },
    m_med: { from: 10, to: 5000, steps: 40, spacing: 'log' },
  },
};
export const TRIAL_CHUNK = 20;
export const TRIAL_POINTS = 3200;
export const TRIAL_CHUNKS = 160;

const quietLog = (): void => {};

/** sha256 over every physics/ source, to notice edits made while a trial runs. */
export function physicsFingerprint(): string {
  const hash = createHash('sha256');
  const files = (readdirSync(path.join(REPO, 'physics'), { recursive: true }) as string[]).filter((f) => f.endsWith('.ts')).sort();
  for (const f of files) hash.update(f).update(readFileSync(path.join(REPO, 'physics', f)));
  return hash.digest('hex');
}

export interface Reference {
  readonly rows: string[][];
  readonly fingerprint: string;
}

/**
 * Runs `trial` against `reference`, refreshing the reference and repeating the trial (up to 3 times)
 * when the physics sources change around it.
 */
export async function stableTrial<T = TrialResult>(
  specFile: string, dir: string, reference: Reference, trial: () => Promise<T>,
): Promise<{ result: T; reference: Reference; repeats: number }> {
  for (let repeats = 0; ; repeats++) {
    if (physicsFingerprint() !== reference.fingerprint) reference = await referenceRows(specFile, dir);
    const result = await trial();
    if (physicsFingerprint() === reference.fingerprint || repeats >= 2) return { result, reference, repeats };
  }
}

/** Rows of an uninterrupted run (in-process, 1 worker, another chunk size than the trials). */
export async function referenceRows(specFile: string, dir: string): Promise<Reference> {
  for (;;) {
    const fingerprint = physicsFingerprint();
    const db = path.join(dir, `reference-${fingerprint.slice(0, 12)}.db`);
    await runScan({ specPath: specFile, dbPath: db, workers: 1, chunkSize: 450, quiet: true, log: quietLog, newScan: true });
    const rows = pointRows(db, 1);
    if (physicsFingerprint() === fingerprint) return { rows, fingerprint };
  }
}

function doneChunks(dbFile: string): number {
  if (!existsSync(dbFile)) return -1;
  try {
    const db = new Database(dbFile, { readonly: true, fileMustExist: true });
    try {
      return db.prepare(`SELECT COUNT(*) FROM chunks WHERE status = 'done'`).pluck().get() as number;
    } finally {
      db.close();
    }
  } catch {
    return -1; // schema not created yet
  }
}

export interface TrialResult {
  readonly cli: CliResult;
  /** done chunks seen when the signal was sent (null: the run finished first) */
  readonly killedAfterChunks: number | null;
  readonly resumed: RunSummary;
  readonly rows: string[][];
}

/**
 * Starts `darksieve run` on 2 workers, sends `signal` once at least `afterChunks` chunks are done
 * (0: as soon as the scan exists), then resumes in-process with 2 workers.
 */
export async function killTrial(
  specFile: string, dbFile: string, afterChunks: number, signal: 'SIGKILL' | 'SIGINT', beforeSignal?: (child: ChildProcess) => Promise<void>,
): Promise<TrialResult> {
  let killedAfterChunks: number | null = null;
  let signalling = false;
  const cli = await runCli(['run', specFile, '--db', dbFile, '--workers', '2', '--chunk', String(TRIAL_CHUNK)], {
    timeoutMs: 120_000,
    onStart: (child) => {
      const poll = setInterval(() => {
        if (child.exitCode !== null || child.signalCode !== null) return clearInterval(poll);
        if (signalling) return;
        const done = doneChunks(dbFile);
        if (done >= afterChunks) {
          signalling = true;
          clearInterval(poll);
          void (beforeSignal ?? (async () => {}))(child).finally(() => {
            killedAfterChunks = doneChunks(dbFile);
            child.kill(signal);
          });
        }
      }, 20);
      child.on('close', () => clearInterval(poll));
    },
  });
  const resumed = await runScan({ specPath: specFile, dbPath: dbFile, workers: 2, quiet: true, log: quietLog });
  return { cli, killedAfterChunks, resumed, rows: pointRows(dbFile) };
}

/** Deterministic choice of kill moments (xorshift32). */
export function killMoments(n: number, seed: number): number[] {
  let x = seed >>> 0 || 1;
  return Array.from({ length: n }, () => {
    x ^= x << 13;
    x >>>= 0;
    x ^= x >>> 17;
    x ^= x << 5;
    x >>>= 0;
    // kill before the last third so the run is still going when the signal arrives
    return x % Math.floor((2 * TRIAL_CHUNKS) / 3);
  });
}

async function main(): Promise<void> {
  const trials = Number(process.argv[2] ?? 10);
  const seed = Number(process.argv[3] ?? 12345);
  const tmp = tempDir();
  let failures = 0;
  try {
    const specFile = writeSpec(tmp.dir, 'trial.json', TRIAL_SPEC);
    let reference = await referenceRows(specFile, tmp.dir);
    for (const [i, k] of killMoments(trials, seed).entries()) {
      const signal = i % 4 === 3 ? 'SIGINT' : 'SIGKILL';
      const run = await stableTrial(specFile, tmp.dir, reference, () => killTrial(specFile, path.join(tmp.dir, `trial-${i}-${Date.now()}.db`), k, signal));
      reference = run.reference;
      const r = run.result;
      const same = JSON.stringify(r.rows) === JSON.stringify(reference.rows);
      if (!same) failures++;
      process.stdout.write(
        `trial ${i}: ${signal} after ${r.killedAfterChunks ?? 'completion'} chunks (target ${k}), exit ${r.cli.code ?? r.cli.signal}, ` +
          `resumed ${r.resumed.pointsThisRun} points: ${same ? 'identical' : 'MISMATCH'}` +
          `${run.repeats > 0 ? ` (repeated ${run.repeats}x: physics sources changed during the trial)` : ''}\n`,
      );
    }
  } finally {
    tmp.cleanup();
  }
  process.stdout.write(`${trials - failures}/${trials} trials identical to the uninterrupted run\n`);
  process.exitCode = failures > 0 ? 1 : 0;
}

// run as a script (node bin/run-ts.mjs tests/scan/kill-trials.ts); vitest imports it for the functions
if (!process.env.VITEST) await main();
