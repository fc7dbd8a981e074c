/**
 * Names darksieve uses in Redis, in one place so the scheduler, the workers and `status` agree.
 *
 *   queue   scan-<scanKey>-<ledgerTag>           one BullMQ queue of chunk jobs per scan
 *   queue   scan-<scanKey>-<ledgerTag>-results   finished chunks travelling back (durable: jobs
 *                                                persist until the scheduler has written them)
 *   job id  <scanKey>-c<chunk, 6+ digits>        e.g. s42-1a2b3c4d5e6f-c000123: never an integer, no ':'
 *   key     <prefix>:darksieve:scans             set of queue names being served
 *   key     <prefix>:darksieve:scan:<queue>      JSON ScanAnnouncement of one scan
 *   key     <prefix>:darksieve:worker:<id>       JSON WorkerHeartbeat, expires unless refreshed
 *   key     <prefix>:darksieve:workers           sorted set: worker id -> expiry time (ms), so live
 *                                                workers are found without scanning the key space
 *   channel <prefix>:darksieve:announce          pub/sub: a scheduler publishes its queue name when it
 *                                                announces a scan, so workers take it up at once (the
 *                                                workers' poll still finds it if the message is lost)
 *
 * The ledger tag distinguishes two ledgers that hold the same scan id and spec (two users, or the
 * same spec run into two files) on one Redis: it hashes the scheduler's host name and the ledger's
 * absolute path, so the same command on the same machine finds its queue again when it resumes.
 */
import { createHash } from 'node:crypto';
import { hostname } from 'node:os';
import type { Redis } from 'ioredis';

export function ledgerTag(absoluteDbPath: string, host: string = hostname()): string {
  return createHash('sha256').update(`${host}\n${absoluteDbPath}`).digest('hex').slice(0, 8);
}

/** The key naming a ledger's scan in Redis: scan id and the start of its spec hash. */
export function ledgerScanKey(scanId: number, specHash: string): string {
  return `s${scanId}-${specHash.slice(0, 12)}`;
}

export function workQueueName(scanKey: string, tag: string): string {
  if (!/^[A-Za-z0-9-]+$/.test(scanKey)) throw new Error(`scan key ${scanKey} must hold only letters, digits and '-'`);
  return `scan-${scanKey}-${tag}`;
}

export function resultQueueName(workQueue: string): string {
  return `${workQueue}-results`;
}

export function chunkJobId(scanKey: string, chunk: number): string {
  return `${scanKey}-c${String(chunk).padStart(6, '0')}`;
}

export const scanSetKey = (prefix: string): string => `${prefix}:darksieve:scans`;
export const scanKeyOf = (prefix: string, queue: string): string => `${prefix}:darksieve:scan:${queue}`;
export const workerKeyOf = (prefix: string, id: string): string => `${prefix}:darksieve:worker:${id}`;
export const workerSetKey = (prefix: string): string => `${prefix}:darksieve:workers`;
export const announceChannel = (prefix: string): string => `${prefix}:darksieve:announce`;

/** What a scheduler publishes about its scan so that workers can prepare it. */
export interface ScanAnnouncement {
  readonly queue: string;
  readonly scanKey: string;
  readonly ledgerTag: string;
  readonly resolvedSpecJson: string;
  readonly observableNames: readonly string[];
  /** the scheduler's code version; a worker with another one warns (results must match bit for bit) */
  readonly codeVersion: string;
  readonly announcedAt: string;
}

/** What a worker process publishes every few seconds (status shows it). */
export interface WorkerHeartbeat {
  readonly id: string;
  readonly host: string;
  readonly pid: number;
  readonly concurrency: number;
  /** chunks it takes at once per scan (threads plus prefetch) */
  readonly slots: number;
  readonly queues: readonly string[];
  readonly chunksDone: number;
  readonly startedAt: string;
  readonly codeVersion: string;
}

/** Data of one chunk job. */
export interface ChunkJobData {
  readonly chunk: number;
  readonly firstId: number;
  readonly n: number;
}

/** Heartbeats of the workers alive now (expired entries are dropped from the set on the way). */
export async function liveWorkers(client: Redis, prefix: string): Promise<WorkerHeartbeat[]> {
  const now = Date.now();
  await client.zremrangebyscore(workerSetKey(prefix), '-inf', now);
  const ids = await client.zrange(workerSetKey(prefix), 0, -1);
  if (ids.length === 0) return [];
  const values = await client.mget(ids.map((id) => workerKeyOf(prefix, id)));
  return values.filter((v): v is string => v !== null).map((v) => JSON.parse(v) as WorkerHeartbeat);
}
