/**
 * The live, Redis side of `darksieve status DB --redis URL`: the workers connected now (from their
 * heartbeats) and, per scan of the ledger, its chunks queued, running and failed-not-yet-recorded in
 * its BullMQ queue. Done and failed chunks and points/s come from the ledger (scheduler/status.ts).
 * A scan's queue is found from the same names the scheduler uses (keys.ts): scan id and spec hash,
 * plus the tag of this host and the ledger's absolute path, so run `status` on the scheduler's host.
 */
import path from 'node:path';
import { Queue } from 'bullmq';
import { bullConnection, openClient, probeRedis, redactRedisUrl, redisOptionsFromUrl } from './connection.js';
import { ledgerScanKey, ledgerTag, liveWorkers, workQueueName } from './keys.js';

export interface RedisScanLive {
  readonly scan_id: number;
  readonly queue: string;
  /** chunks waiting (including delayed retries) */
  readonly chunks_queued: number;
  /** chunks a worker holds now */
  readonly chunks_running: number;
  /** chunks that failed every attempt and that the scheduler has not recorded yet */
  readonly chunks_failed_unrecorded: number;
  readonly paused: boolean;
}

export interface RedisLiveStatus {
  /** the URL with its password hidden */
  readonly redis: string;
  readonly workers: readonly { id: string; host: string; pid: number; concurrency: number; chunks_done: number; queues: readonly string[] }[];
  readonly scans: readonly RedisScanLive[];
}

/** Queries Redis for the scans of a ledger (probing first, so an unreachable Redis fails fast). */
export async function redisLiveStatus(url: string, prefix: string, dbPath: string, scans: readonly { id: number; spec_hash: string }[]): Promise<RedisLiveStatus> {
  await probeRedis(url);
  const options = redisOptionsFromUrl(url);
  const client = openClient(options, () => {});
  try {
    const workers = (await liveWorkers(client, prefix)).map((w) => ({ id: w.id, host: w.host, pid: w.pid, concurrency: w.concurrency, chunks_done: w.chunksDone, queues: w.queues }));
    const tag = ledgerTag(path.resolve(dbPath));
    const live: RedisScanLive[] = [];
    for (const s of scans) {
      const name = workQueueName(ledgerScanKey(s.id, s.spec_hash), tag);
      const queue = new Queue(name, { connection: bullConnection(options), prefix });
      try {
        // a queue BullMQ has set up has its meta key (BullMQ's own key name, not a copy of its format)
        if ((await client.exists(queue.keys.meta!)) === 0) continue;
        const c = await queue.getJobCounts('wait', 'waiting', 'delayed', 'prioritized', 'active', 'failed');
        live.push({
          scan_id: s.id, queue: name, chunks_queued: (c.wait ?? c.waiting ?? 0) + (c.delayed ?? 0) + (c.prioritized ?? 0),
          chunks_running: c.active ?? 0, chunks_failed_unrecorded: c.failed ?? 0, paused: await queue.isPaused(),
        });
      } finally {
        await queue.close();
      }
    }
    return { redis: redactRedisUrl(url), workers, scans: live };
  } finally {
    client.disconnect();
  }
}

export function formatRedisStatus(st: RedisLiveStatus): string {
  const lines = [`${st.redis}: ${st.workers.length} worker${st.workers.length === 1 ? '' : 's'} connected`];
  for (const w of st.workers) lines.push(`  worker ${w.id}: ${w.concurrency} thread${w.concurrency === 1 ? '' : 's'}, ${w.chunks_done} chunks done`);
  for (const s of st.scans)
    lines.push(`  scan ${s.scan_id}: ${s.chunks_queued} chunks queued, ${s.chunks_running} running${s.chunks_failed_unrecorded > 0 ? `, ${s.chunks_failed_unrecorded} failed (not yet recorded)` : ''}${s.paused ? ' (paused: its run was interrupted; run it again to resume)' : ''}`);
  if (st.scans.length === 0) lines.push('  no queue for the scans of this ledger (none running through this Redis)');
  return `${lines.join('\n')}\n`;
}
