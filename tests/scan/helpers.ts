/** Shared helpers of the scan tests: temp folders, spec files, reading ledgers bit for bit. */
import Database from 'better-sqlite3';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { spawn, type ChildProcess } from 'node:child_process';

export const REPO = path.resolve(import.meta.dirname, '../..');
export const CLI = path.join(REPO, 'bin/darksieve.mjs');
export const FAKE_PHYSICS = new URL('./fake-physics.ts', import.meta.url).href;

export function tempDir(): { dir: string; cleanup: () => void } {
  const dir = mkdtempSync(path.join(tmpdir(), 'darksieve-scan-'));
  return { dir, cleanup: () => rmSync(dir, { recursive: true, force: true }) };
}

export function writeSpec(dir: string, name: string, spec: unknown): string {
  const file = path.join(dir, name);
  writeFileSync(file, JSON.stringify(spec, null, 2));
  return file;
}

const f64 = new Float64Array(1);
const u64 = new BigUint64Array(f64.buffer);
/** A number's IEEE-754 bits as hex, so comparisons are bit for bit (0 and -0, NaN payloads differ). */
export function bits(x: number): string {
  f64[0] = x;
  return u64[0]!.toString(16);
}

/** Every point row of a scan, numbers as bit strings, ordered by point id. */
export function pointRows(dbFile: string, scanId = 1): string[][] {
  const db = new Database(dbFile, { readonly: true });
  try {
    const rows = db.prepare('SELECT * FROM points WHERE scan_id = ? ORDER BY point_id').raw(true).all(scanId) as unknown[][];
    return rows.map((r) => r.map((v) => (typeof v === 'number' ? bits(v) : v === null ? 'NULL' : String(v))));
  } finally {
    db.close();
  }
}

export function query<T>(dbFile: string, sql: string, ...params: unknown[]): T[] {
  const db = new Database(dbFile, { readonly: true });
  try {
    return db.prepare(sql).all(...params) as T[];
  } finally {
    db.close();
  }
}

export interface CliResult {
  readonly code: number | null;
  readonly signal: NodeJS.Signals | null;
  readonly stdout: string;
  readonly stderr: string;
}

/** Spawns the real CLI; `onStart` gets the child (to signal it); rejects after timeoutMs. */
export function runCli(args: readonly string[], opts: { cwd?: string; timeoutMs?: number; env?: Record<string, string>; onStart?: (c: ChildProcess) => void } = {}): Promise<CliResult> {
  return new Promise((resolve, reject) => {
    // REDIS_URL (CI exports it) would send `run` to Redis; these tests want the embedded pool unless they say otherwise
    const child = spawn(process.execPath, [CLI, ...args], { cwd: opts.cwd ?? REPO, env: { ...process.env, REDIS_URL: '', ...opts.env }, stdio: ['ignore', 'pipe', 'pipe'] });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (d: Buffer) => (stdout += d.toString()));
    child.stderr.on('data', (d: Buffer) => (stderr += d.toString()));
    const timer = setTimeout(() => {
      child.kill('SIGKILL');
      reject(new Error(`darksieve ${args.join(' ')} timed out after ${opts.timeoutMs ?? 60000} ms\nstdout: ${stdout}\nstderr: ${stderr}`));
    }, opts.timeoutMs ?? 60000);
    child.on('error', reject);
    child.on('close', (code, signal) => {
      clearTimeout(timer);
      resolve({ code, signal, stdout, stderr });
    });
    opts.onStart?.(child);
  });
}
