/**
 * The BullMQ transport (scheduler side): one queue of chunk jobs per scan, results travelling back
 * through a second, durable queue that only this process drains (stack.md §1.9: the events stream
 * is trimmed and best-effort; result jobs persist until consumed).
 *
 * Delivery and durability:
 *  - every dispatched chunk becomes a job with id <scanKey>-c<chunk>; adding an id that still
 *    exists is a no-op (stack.md §1.6), so re-dispatch after a crash never duplicates queued work;
 *  - a result job is acknowledged (completed, hence removed) only when the scheduler asks for the
 *    next outcome or closes, i.e. after it has written the previous one to the ledger. A scheduler
 *    killed in between leaves the job active; its lock expires and the next run receives it again;
 *  - the window (chunks queued and not yet delivered) follows the workers connected: twice their
 *    slots plus a few, so every worker always finds a chunk waiting, a first SIGINT finishes
 *    quickly, and a killed run leaves little behind;
 *  - results for chunks this run has not dispatched (duplicates of stalled re-runs, or leftovers of
 *    a killed run beyond this run's window) are acknowledged and dropped: the ledger decides what is
 *    done, and a pending chunk simply runs again. Both runs dispatch pending chunks in id order, so
 *    the leftovers of a killed run are mostly the chunks the next run dispatches first;
 *  - a chunk whose job failed every attempt (or stalled too often) is reported once as failed and
 *    its job removed, so the next run starts it afresh.
 * Redis restarts: a poll every `pollMs` compares the server's run_id and checks the scan's
 * announcement key; after a restart that lost data it announces the scan again and re-adds every
 * undelivered chunk (ids dedupe whatever survived). While Redis is down, BullMQ waits for it.
 * Closing with chunks undelivered (interrupted run) pauses the queue, so workers stop taking work;
 * closing with nothing undelivered removes both queues and the announcement.
 */
import { Queue, Worker, type ConnectionOptions, type Job } from 'bullmq';
import type { Redis } from 'ioredis';
import { OutcomeQueue } from '../outcome-queue.js';
import type { ChunkRange } from '../plan.js';
import { decodeChunkResult, type ChunkOutcome, type EncodedChunkResult, type ScanWork, type Transport } from '../transport.js';
import { bullConnection, openClient, probeRedis, redactRedisUrl, redisOptionsFromUrl, redisPrefix, serverRunId } from './connection.js';
import {
  announceChannel, chunkJobId, ledgerTag, liveWorkers, resultQueueName, scanKeyOf, scanSetKey, workQueueName,
  type ChunkJobData, type ScanAnnouncement,
} from './keys.js';

export interface RedisTransportOptions {
  /** redis:// or rediss:// URL (may hold a password; it is never printed) */
  readonly url: string;
  /** key prefix of every queue and key; default 'darksieve' */
  readonly prefix: string;
  /** distinguishes ledgers on one Redis (keys.ts ledgerTag) */
  readonly ledgerTag: string;
  /** the scheduler's code version, announced to workers */
  readonly codeVersion: string;
  /** most chunks kept queued at once, whatever the workers; default 50000 */
  readonly window?: number;
  /** attempts per chunk before it is reported failed; default 3 */
  readonly attempts?: number;
  /** first retry delay, doubled each time, ms; default 1000 */
  readonly backoffMs?: number;
  /** period of the failed-job and restart check, ms; default 1000 */
  readonly pollMs?: number;
  /** lock of a result job held by this scheduler, ms; a killed scheduler's results return after about this; default 10000 */
  readonly resultLockMs?: number;
  /** how often the results worker looks for stalled result jobs, ms; default 5000 */
  readonly resultStalledIntervalMs?: number;
  /** seconds with no worker heartbeat before a hint is printed; default 10 */
  readonly noWorkerHintS?: number;
  readonly log?: (line: string) => void;
}

interface ResultJobData {
  readonly chunk: number;
  readonly result: EncodedChunkResult;
}

/** Events-stream length kept per queue: darksieve reads no events, so keep it tiny (stack.md §1.7). */
const EVENTS_MAX_LEN = 50;
const ADD_BATCH = 1000;

export class RedisTransport implements Transport {
  readonly description: string;
  private readonly opts: Required<Omit<RedisTransportOptions, 'log'>>;
  private readonly log: (line: string) => void;
  private readonly connection: ConnectionOptions;
  private work: ScanWork | null = null;
  private queueName = '';
  private queue: Queue | null = null;
  private results: Worker | null = null;
  private client: Redis | null = null;
  /** dispatched and not yet delivered, by chunk */
  private readonly outstanding = new Map<number, ChunkRange>();
  private toAdd: ChunkRange[] = [];
  private adding: Promise<void> | null = null;
  /** finished chunks; an outcome's acknowledgement is recorded when the scheduler receives it */
  private readonly outcomes = new OutcomeQueue<{ outcome: ChunkOutcome; ack: () => void }, ChunkOutcome>(({ outcome, ack }) => {
    this.unacked.push(ack);
    return outcome;
  });
  /** acknowledgements of outcomes handed to the scheduler, run at its next call */
  private unacked: (() => void)[] = [];
  private pollTimer: NodeJS.Timeout | null = null;
  private polling = false;
  private runId = '';
  private lastWorkerSeen = Date.now();
  private liveSlots = 0;
  private hinted = false;
  private closed = false;
  private lastError = '';

  constructor(options: RedisTransportOptions) {
    this.opts = {
      window: 50_000, attempts: 3, backoffMs: 1000, pollMs: 1000, resultLockMs: 10_000, resultStalledIntervalMs: 5000, noWorkerHintS: 10,
      ...options,
    };
    this.log = options.log ?? ((line) => process.stderr.write(`${line}\n`));
    this.connection = bullConnection(redisOptionsFromUrl(options.url));
    this.description = `Redis ${redactRedisUrl(options.url)} (prefix ${options.prefix})`;
  }

  /** Chunks to keep queued: twice the live workers' slots plus 4, at least 8 (read by the scheduler before each dispatch). */
  get window(): number {
    return Math.min(this.opts.window, Math.max(8, 2 * this.liveSlots + 4));
  }

  /** The work queue's name (after open). */
  get workQueue(): string {
    return this.queueName;
  }

  async open(work: ScanWork): Promise<void> {
    if (this.work) throw new Error('the Redis transport is already open');
    this.work = work;
    try {
      await this.start();
    } catch (err) {
      // leave whatever a previous run left in Redis as it is; just let go of the connections
      this.closed = true;
      if (this.pollTimer) clearInterval(this.pollTimer);
      await this.results?.close(true).catch(() => undefined);
      await this.queue?.close().catch(() => undefined);
      this.client?.disconnect();
      throw err;
    }
  }

  private async start(): Promise<void> {
    const work = this.work!;
    const { prefix } = this.opts;
    this.queueName = workQueueName(work.scanKey, this.opts.ledgerTag);
    this.client = openClient(redisOptionsFromUrl(this.opts.url), (err) => this.noteError(err));
    this.queue = new Queue(this.queueName, { connection: this.connection, prefix, streams: { events: { maxLen: EVENTS_MAX_LEN } } });
    this.queue.on('error', (err) => this.noteError(err));
    this.runId = await serverRunId(this.client);
    // a previous run may have paused the queue (interrupted) or left chunks that failed while no
    // scheduler listened: resume, and let those chunks start afresh when dispatched
    await this.queue.resume();
    await this.queue.clean(0, 0, 'failed');
    await this.announce();
    await this.watchWorkers(this.client);
    const resultsQueue = resultQueueName(this.queueName);
    // results stay unacknowledged until written, so results jobs must never fail for stalling
    this.results = new Worker<ResultJobData>(resultsQueue, (job) => this.receive(job), {
      connection: this.connection, prefix, concurrency: 16, lockDuration: this.opts.resultLockMs,
      stalledInterval: this.opts.resultStalledIntervalMs, maxStalledCount: 1_000_000, removeOnComplete: { count: 0 },
    });
    this.results.on('error', (err) => this.noteError(err));
    this.pollTimer = setInterval(() => void this.poll(), this.opts.pollMs);
  }

  dispatch(range: ChunkRange): void {
    if (this.closed || !this.work) throw new Error('the Redis transport is not open');
    this.outstanding.set(range.chunk, range);
    this.toAdd.push(range);
    this.adding ??= new Promise<void>((resolve) => setImmediate(resolve)).then(() => this.flush());
  }

  next(): Promise<ChunkOutcome> {
    this.ackDelivered();
    return this.outcomes.take();
  }

  async close(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    if (this.pollTimer) clearInterval(this.pollTimer);
    this.ackDelivered();
    const unfinished = this.outstanding.size > 0 || this.outcomes.size > 0;
    try {
      await this.adding;
      // results handed over but not consumed stay active; they come back on the next run
      await this.results?.close(this.outcomes.size > 0);
      if (this.queue && this.client) {
        if (unfinished) {
          await this.queue.pause();
          await this.unannounce();
        } else {
          await this.unannounce();
          await this.queue.obliterate({ force: true });
          const resultsQueue = new Queue(resultQueueName(this.queueName), { connection: this.connection, prefix: this.opts.prefix });
          await resultsQueue.obliterate({ force: true });
          await resultsQueue.close();
        }
      }
    } finally {
      await this.queue?.close();
      this.client?.disconnect();
    }
  }

  /** Publishes the scan so workers can prepare it (again after a restart that lost data). */
  private async announce(): Promise<void> {
    const work = this.work!;
    const a: ScanAnnouncement = {
      queue: this.queueName, scanKey: work.scanKey, ledgerTag: this.opts.ledgerTag, resolvedSpecJson: work.resolvedSpecJson,
      observableNames: work.observableNames, codeVersion: this.opts.codeVersion, announcedAt: new Date().toISOString(),
    };
    await this.client!.multi()
      .set(scanKeyOf(this.opts.prefix, this.queueName), JSON.stringify(a))
      .sadd(scanSetKey(this.opts.prefix), this.queueName)
      .publish(announceChannel(this.opts.prefix), this.queueName)
      .exec();
  }

  private async unannounce(): Promise<void> {
    await this.client!.multi().srem(scanSetKey(this.opts.prefix), this.queueName).del(scanKeyOf(this.opts.prefix, this.queueName)).exec();
  }

  /** Adds queued dispatches in batches; jobs whose id still exists are left as they are. */
  private async flush(): Promise<void> {
    const scanKey = this.work!.scanKey;
    while (this.toAdd.length > 0 && !this.closed) {
      const batch = this.toAdd.splice(0, ADD_BATCH);
      try {
        await this.queue!.addBulk(
          batch.map((r) => ({
            name: 'chunk',
            data: { chunk: r.chunk, firstId: r.firstId, n: r.n } satisfies ChunkJobData,
            opts: {
              jobId: chunkJobId(scanKey, r.chunk), attempts: this.opts.attempts, backoff: { type: 'exponential', delay: this.opts.backoffMs },
              removeOnComplete: true, removeOnFail: false,
            },
          })),
        );
      } catch (err) {
        // put the batch back and try again shortly (a duplicate add is a no-op)
        this.noteError(err as Error);
        this.toAdd.unshift(...batch);
        await new Promise((resolve) => setTimeout(resolve, 1000));
      }
    }
    this.adding = null;
  }

  /** The results worker's processor: resolves when the scheduler has consumed this outcome. */
  private receive(job: Job<ResultJobData>): Promise<void> {
    const chunk = job.data.chunk;
    const range = this.outstanding.get(chunk);
    if (!range || this.closed) return Promise.resolve();
    this.outstanding.delete(chunk);
    return new Promise<void>((ack) => {
      let outcome: ChunkOutcome;
      try {
        const result = decodeChunkResult(job.data.result);
        if (result.firstId !== range.firstId || result.n !== range.n) throw new Error(`covers ids ${result.firstId}+${result.n}, expected ${range.firstId}+${range.n}`);
        outcome = { kind: 'result', result };
      } catch (err) {
        outcome = { kind: 'failed', range, attempts: 1, error: `malformed result from a worker: ${(err as Error).message}` };
      }
      this.deliver(outcome, ack);
    });
  }

  private deliver(outcome: ChunkOutcome, ack: () => void): void {
    this.outcomes.put({ outcome, ack });
  }

  private ackDelivered(): void {
    const acks = this.unacked;
    this.unacked = [];
    acks.forEach((a) => a());
  }

  /** Failed chunks, Redis restarts, and a hint when no worker is connected. Never overlaps itself. */
  private async poll(): Promise<void> {
    if (this.polling || this.closed) return;
    this.polling = true;
    try {
      const client = this.client!;
      const runId = await serverRunId(client);
      const announced = await client.exists(scanKeyOf(this.opts.prefix, this.queueName));
      if (this.closed) return;
      if (runId !== this.runId || announced === 0) {
        this.runId = runId;
        await this.recover(announced === 0);
      }
      const failed = await this.queue!.getJobs(['failed'], 0, 199);
      for (const job of failed) {
        const data = job.data as ChunkJobData;
        const range = this.outstanding.get(data.chunk);
        if (!range || this.closed) continue;
        this.outstanding.delete(data.chunk);
        await job.remove();
        this.deliver({ kind: 'failed', range, attempts: job.attemptsMade, error: job.failedReason || 'failed with no reason given' }, () => {});
      }
      await this.watchWorkers(client);
    } catch (err) {
      this.noteError(err as Error);
    } finally {
      this.polling = false;
    }
  }

  /** After a restart: re-announce; if data was lost, re-add every undelivered chunk (ids dedupe). */
  private async recover(lost: boolean): Promise<void> {
    await this.announce();
    if (!lost) {
      this.log('Redis restarted with its data; the scan continues');
      return;
    }
    this.log(`Redis lost the scan's queue (restart without persistence?); queueing the ${this.outstanding.size} undelivered chunks again`);
    await this.queue!.resume();
    this.toAdd = [...this.outstanding.values()];
    if (!this.adding) {
      this.adding = this.flush();
    }
    await this.adding;
  }

  /** Sizes the window from the workers' heartbeats; prints a hint once when none has come for a while. */
  private async watchWorkers(client: Redis): Promise<void> {
    const workers = await liveWorkers(client, this.opts.prefix);
    this.liveSlots = workers.reduce((sum, w) => sum + (w.slots ?? w.concurrency), 0);
    if (workers.length > 0) this.lastWorkerSeen = Date.now();
    else if (this.hinted || this.outstanding.size === 0) return;
    else if (Date.now() - this.lastWorkerSeen > this.opts.noWorkerHintS * 1000) {
      this.hinted = true;
      this.log(`no darksieve worker has reported to ${redactRedisUrl(this.opts.url)} for ${this.opts.noWorkerHintS} s; start one with: darksieve worker --redis <URL>`);
    }
  }

  private noteError(err: Error): void {
    const message = err.message.replace(/\s+/g, ' ');
    if (message === this.lastError || this.closed) return;
    this.lastError = message;
    this.log(`Redis ${redactRedisUrl(this.opts.url)}: ${message} (waiting for it; the scan resumes when it answers)`);
  }
}

/**
 * The transport `darksieve run --redis URL` uses: probes the server first (fails fast, nothing
 * written), then keys the scan's queue by this host and ledger path so resuming finds it again.
 */
export async function createRedisTransport(o: { url: string; dbPath: string; codeVersion: string; log?: (line: string) => void }): Promise<RedisTransport> {
  await probeRedis(o.url);
  return new RedisTransport({ url: o.url, prefix: redisPrefix(), ledgerTag: ledgerTag(o.dbPath), codeVersion: o.codeVersion, log: o.log });
}
