/**
 * The BullMQ worker service (what `darksieve worker` runs): finds the scans announced on a Redis,
 * prepares each one once, takes its chunk jobs and sends the results back through the scan's
 * results queue.
 *
 * CPU work never runs on this process's event loop. Each served scan owns `concurrency` worker
 * threads (EmbeddedPools of one thread: the same thread entry and chunk evaluator as the embedded
 * transport), and the BullMQ processor only hands the chunk to a thread and awaits it. The event
 * loop therefore stays free to renew job locks however long a chunk takes, so a busy worker never
 * loses its lock and no chunk runs twice unnoticed (stack.md §1.3 shows what happens otherwise).
 * This gives what BullMQ's sandboxed processors give, without a second TypeScript loader per child
 * process and with the physics prepared once per thread rather than once per job.
 *
 * Faults:
 *  - this process killed mid-chunk: its jobs' locks expire and another worker's stalled check
 *    re-queues them (after about lockDuration + stalledInterval); `maxStalledCount` such stalls
 *    fail the chunk;
 *  - a thread dying or a chunk throwing: the job fails this attempt; BullMQ retries it with
 *    backoff (the scheduler chose the attempts), then the scheduler records it failed;
 *  - Redis restarted: a change of the server's run_id restarts every served scan (bullmq#648,
 *    #2964: workers may otherwise never resume); a scan whose announcement disappears is dropped
 *    and taken up again when its scheduler announces it again.
 * Workers join and leave at any time: each publishes a heartbeat that expires unless refreshed.
 */
import { randomBytes } from 'node:crypto';
import { hostname } from 'node:os';
import { Queue, Worker, type ConnectionOptions, type Job } from 'bullmq';
import type { Redis } from 'ioredis';
import { EmbeddedPool } from '../embedded-pool.js';
import type { ChunkRange } from '../plan.js';
import { encodeChunkResult, type ChunkOutcome } from '../transport.js';
import { bullConnection, openClient, redactRedisUrl, redisOptionsFromUrl, serverRunId } from './connection.js';
import {
  announceChannel, liveWorkers, resultQueueName, scanKeyOf, scanSetKey, workerKeyOf, workerSetKey,
  type ChunkJobData, type ScanAnnouncement, type WorkerHeartbeat,
} from './keys.js';

export interface WorkerServiceOptions {
  readonly url: string;
  /** key prefix; must match the scheduler's */
  readonly prefix: string;
  /** chunks evaluated at once (worker threads per served scan) */
  readonly concurrency: number;
  /** this worker's code version (compared with the scheduler's announcement) */
  readonly codeVersion: string;
  /** lock of a chunk job, ms; default 15000 (threads keep the loop free, so this only bounds recovery time) */
  readonly lockDurationMs?: number;
  /** how often stalled jobs are looked for, ms; default 10000 */
  readonly stalledIntervalMs?: number;
  /**
   * chunks taken beyond the threads, waiting in this worker so a thread never idles through the Redis
   * round trips between chunks; default one per thread (the pool posts a waiting chunk to each thread,
   * as in the embedded transport: with fewer, a thread that finishes without one waits a round trip).
   * Their locks are renewed like the running ones; near the end of a scan none are taken (adjustPrefetch).
   */
  readonly prefetch?: number;
  /** stalls (killed workers) a chunk survives before it fails; default 3 */
  readonly maxStalledCount?: number;
  /** period of scan discovery and the restart check, ms; default 1000 */
  readonly pollMs?: number;
  /** heartbeat period, ms (the heartbeat expires after 3 periods); default 2000 */
  readonly heartbeatMs?: number;
  /** physics module for tests of the mechanics; default physics/evaluate.ts */
  readonly physicsModule?: string;
  /**
   * serve scans announced by a scheduler running other code (with a warning); default false: such a
   * scan is refused, because its results are bit-identical to the scheduler's own only with the same code
   */
  readonly allowOtherCode?: boolean;
  readonly log?: (line: string) => void;
}

type ServiceSettings = Required<Omit<WorkerServiceOptions, 'log' | 'physicsModule'>> & { physicsModule?: string };

/** What a ScanServer needs from its WorkerService. */
interface ServerContext {
  readonly workerId: string;
  readonly o: ServiceSettings;
  readonly connection: ConnectionOptions;
  /** the service's own client, for the queue-length check */
  readonly client: Redis;
  /** threads of all live workers (from their heartbeats), at least this worker's */
  readonly clusterThreads: () => number;
  readonly onChunkDone: () => void;
  readonly onError: (err: Error) => void;
}

/** One evaluation thread (a pool of one) and the chunks given to it and not yet answered. */
interface Lane {
  readonly pool: EmbeddedPool;
  inFlight: number;
}

/**
 * One pool of one thread per slot, rather than one pool of `concurrency` threads: the server itself
 * gives each chunk to the thread with the fewest in hand. A shared pool posts a chunk to the first
 * thread with room for it, which may be busy while another has none, so near the end of a scan
 * one thread idles while the last chunk waits behind another's (measured with the Redis bench,
 * 1 worker of 2 threads: ~300 ms of a 1.5 s scan).
 */
async function openLanes(a: ScanAnnouncement, o: ServiceSettings): Promise<Lane[]> {
  const pools = Array.from({ length: o.concurrency }, () => new EmbeddedPool({ workers: 1, maxAttempts: 1, physicsModule: o.physicsModule }));
  const opened = await Promise.allSettled(pools.map((p) => p.open({ scanKey: a.scanKey, resolvedSpecJson: a.resolvedSpecJson, observableNames: a.observableNames })));
  const failed = opened.find((r): r is PromiseRejectedResult => r.status === 'rejected');
  if (failed) {
    await Promise.all(pools.map((p) => p.close()));
    throw failed.reason;
  }
  return pools.map((pool) => ({ pool, inFlight: 0 }));
}

/** One scan being served: its prepared threads, its BullMQ worker and its results producer. */
class ScanServer {
  private readonly waiters = new Map<number, ((o: ChunkOutcome) => void)[]>();
  private bull: Worker<ChunkJobData> | null = null;
  private results: Queue | null = null;
  private stopped = false;
  /** the work queue's list of waiting jobs (BullMQ's key layout, queue-keys.js) */
  private readonly waitKey: string;

  constructor(
    readonly queue: string,
    private readonly lanes: readonly Lane[],
    private readonly ctx: ServerContext,
  ) {
    this.waitKey = `${ctx.o.prefix}:${queue}:wait`;
  }

  static async start(a: ScanAnnouncement, ctx: ServerContext): Promise<ScanServer> {
    const { o, connection, onError, workerId } = ctx;
    const server = new ScanServer(a.queue, await openLanes(a, o), ctx);
    server.results = new Queue(resultQueueName(a.queue), { connection, prefix: o.prefix, streams: { events: { maxLen: 50 } } });
    server.results.on('error', onError);
    for (const lane of server.lanes) void server.pump(lane);
    server.bull = new Worker<ChunkJobData>(a.queue, (job) => server.process(job), {
      // the name becomes each job's processedBy, so a chunk can be traced to the worker holding it
      name: workerId, connection, prefix: o.prefix, concurrency: o.concurrency + o.prefetch, lockDuration: o.lockDurationMs,
      stalledInterval: o.stalledIntervalMs, maxStalledCount: o.maxStalledCount,
    });
    server.bull.on('error', onError);
    return server;
  }

  /** Routes a thread's outcomes to the jobs waiting for them. */
  private async pump(lane: Lane): Promise<void> {
    while (!this.stopped) {
      const outcome = await lane.pool.next();
      lane.inFlight--;
      const chunk = outcome.kind === 'result' ? outcome.result.chunk : outcome.range.chunk;
      const list = this.waiters.get(chunk);
      const resolve = list?.shift();
      if (list && list.length === 0) this.waiters.delete(chunk);
      resolve?.(outcome);
    }
  }

  private evaluate(range: ChunkRange): Promise<ChunkOutcome> {
    return new Promise((resolve) => {
      const list = this.waiters.get(range.chunk) ?? [];
      list.push(resolve);
      this.waiters.set(range.chunk, list);
      const lane = this.lanes.reduce((best, l) => (l.inFlight < best.inFlight ? l : best));
      lane.inFlight++;
      lane.pool.dispatch(range);
    });
  }

  private async process(job: Job<ChunkJobData>): Promise<{ n: number; evalMs: number }> {
    const { chunk, firstId, n } = job.data;
    const outcome = await this.evaluate({ chunk, firstId, n });
    if (outcome.kind === 'failed') throw new Error(outcome.error);
    const sent = this.results!.add('result', { chunk, result: encodeChunkResult(outcome.result) }, { removeOnComplete: true, removeOnFail: false });
    await Promise.all([sent, this.adjustPrefetch()]);
    this.ctx.onChunkDone();
    return { n, evalMs: outcome.result.evalMs };
  }

  /**
   * Prefetch only while the queue still holds a chunk for every thread serving it. Near the end of a
   * scan a chunk taken as prefetch waits behind this worker's running chunk while a thread elsewhere
   * (or another of this worker's) frees first and finds the queue empty: the scan then ends up to a
   * chunk later than it must. Without prefetch a freed thread waits one Redis round trip for its
   * next chunk, which is what the tail costs instead. Runs before BullMQ fetches this job's
   * successor (its concurrency decides whether it does); a failed check leaves the setting as it is.
   */
  private async adjustPrefetch(): Promise<void> {
    const { concurrency, prefetch } = this.ctx.o;
    if (prefetch === 0) return;
    try {
      const waiting = await this.ctx.client.llen(this.waitKey);
      const want = concurrency + (waiting >= this.ctx.clusterThreads() ? prefetch : 0);
      if (this.bull && this.bull.concurrency !== want) this.bull.concurrency = want;
    } catch {
      // Redis unreachable: BullMQ reports it through the worker's error event
    }
  }

  /** Graceful: finishes the chunks in hand (their results are sent); `force` abandons them. */
  async stop(force = false): Promise<void> {
    if (this.stopped) return;
    await this.bull?.close(force);
    this.stopped = true;
    for (const [chunk, list] of this.waiters) {
      for (const w of list) w({ kind: 'failed', range: { chunk, firstId: 0, n: 0 }, attempts: 1, error: 'worker stopped' });
    }
    this.waiters.clear();
    await this.results?.close();
    await Promise.all(this.lanes.map((l) => l.pool.close()));
  }
}

export class WorkerService {
  readonly id: string;
  private readonly o: Required<Omit<WorkerServiceOptions, 'log' | 'physicsModule'>> & { physicsModule?: string };
  private readonly log: (line: string) => void;
  private readonly connection: ConnectionOptions;
  private client: Redis | null = null;
  private readonly servers = new Map<string, ScanServer>();
  private readonly starting = new Set<string>();
  private readonly refused = new Map<string, string>();
  private pollTimer: NodeJS.Timeout | null = null;
  private heartbeatTimer: NodeJS.Timeout | null = null;
  private polling = false;
  private runId = '';
  private chunksDone = 0;
  /** threads of the live workers at the last poll */
  private clusterThreads = 0;
  /** receives the schedulers' announcements, so a new scan is taken up at once rather than at the next poll */
  private subscriber: Redis | null = null;
  /** an announcement arrived during a poll: poll again when it ends */
  private repoll = false;
  private readonly startedAt = new Date().toISOString();
  private closed = false;
  private lastError = '';

  constructor(options: WorkerServiceOptions) {
    if (!Number.isInteger(options.concurrency) || options.concurrency < 1) throw new RangeError(`concurrency must be a positive integer, got ${options.concurrency}`);
    this.o = { lockDurationMs: 15_000, stalledIntervalMs: 10_000, prefetch: options.concurrency, maxStalledCount: 3, pollMs: 1000, heartbeatMs: 2000, allowOtherCode: false, ...options };
    this.log = options.log ?? ((line) => process.stderr.write(`${line}\n`));
    this.connection = bullConnection(redisOptionsFromUrl(options.url));
    this.id = `${hostname()}-${process.pid}-${randomBytes(3).toString('hex')}`;
  }

  /** Chunks this worker has evaluated and sent back. */
  get chunksEvaluated(): number {
    return this.chunksDone;
  }

  /** Queues being served now. */
  get serving(): string[] {
    return [...this.servers.keys()];
  }

  async start(): Promise<void> {
    this.client = openClient(redisOptionsFromUrl(this.o.url), (err) => this.noteError(err));
    this.runId = await serverRunId(this.client);
    this.subscriber = openClient(redisOptionsFromUrl(this.o.url), (err) => this.noteError(err));
    this.subscriber.on('message', () => void this.poll());
    await this.subscriber.subscribe(announceChannel(this.o.prefix));
    await this.heartbeat();
    this.log(`worker ${this.id}: ${this.o.concurrency} thread${this.o.concurrency === 1 ? '' : 's'} per scan, waiting for scans on ${redactRedisUrl(this.o.url)}`);
    this.heartbeatTimer = setInterval(() => void this.heartbeat().catch((err: Error) => this.noteError(err)), this.o.heartbeatMs);
    await this.poll();
    this.pollTimer = setInterval(() => void this.poll(), this.o.pollMs);
  }

  /** Stops taking chunks, finishes those in hand (unless `force`), and leaves. Safe to call twice. */
  async close(force = false): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    if (this.pollTimer) clearInterval(this.pollTimer);
    if (this.heartbeatTimer) clearInterval(this.heartbeatTimer);
    this.subscriber?.disconnect();
    await Promise.all([...this.servers.values()].map((s) => s.stop(force)));
    this.servers.clear();
    if (this.client) {
      await this.client.multi().del(workerKeyOf(this.o.prefix, this.id)).zrem(workerSetKey(this.o.prefix), this.id).exec().catch(() => undefined);
      this.client.disconnect();
    }
  }

  private async heartbeat(): Promise<void> {
    if (this.closed) return;
    const hb: WorkerHeartbeat = {
      id: this.id, host: hostname(), pid: process.pid, concurrency: this.o.concurrency, slots: this.o.concurrency + this.o.prefetch, queues: this.serving,
      chunksDone: this.chunksDone, startedAt: this.startedAt, codeVersion: this.o.codeVersion,
    };
    const ttl = 3 * this.o.heartbeatMs;
    await this.client!.multi()
      .set(workerKeyOf(this.o.prefix, this.id), JSON.stringify(hb), 'PX', ttl)
      .zadd(workerSetKey(this.o.prefix), Date.now() + ttl, this.id)
      .exec();
  }

  /** Discovery: start serving announced scans, stop serving withdrawn ones, restart all after a Redis restart. */
  private async poll(): Promise<void> {
    if (this.closed) return;
    if (this.polling) {
      this.repoll = true;
      return;
    }
    this.polling = true;
    try {
      const client = this.client!;
      const runId = await serverRunId(client);
      this.clusterThreads = (await liveWorkers(client, this.o.prefix)).reduce((sum, w) => sum + w.concurrency, 0);
      if (runId !== this.runId) {
        this.runId = runId;
        this.log('Redis restarted; reconnecting every served scan');
        const all = [...this.servers.values()];
        this.servers.clear();
        await Promise.all(all.map((s) => s.stop(true)));
      }
      const announced = new Set(await client.smembers(scanSetKey(this.o.prefix)));
      for (const [queue, server] of this.servers) {
        if (announced.has(queue)) continue;
        this.servers.delete(queue);
        this.log(`scan ${queue} withdrawn; finishing its chunks in hand`);
        void server.stop().catch((err: Error) => this.noteError(err));
      }
      for (const queue of announced) {
        if (this.servers.has(queue) || this.starting.has(queue) || this.refused.has(queue) || this.closed) continue;
        const json = await client.get(scanKeyOf(this.o.prefix, queue));
        if (json === null) continue;
        this.starting.add(queue);
        void this.serve(JSON.parse(json) as ScanAnnouncement).finally(() => this.starting.delete(queue));
      }
    } catch (err) {
      this.noteError(err as Error);
    } finally {
      this.polling = false;
    }
    if (this.repoll) {
      this.repoll = false;
      await this.poll();
    }
  }

  private async serve(a: ScanAnnouncement): Promise<void> {
    if (a.codeVersion !== this.o.codeVersion) {
      if (!this.o.allowOtherCode) {
        const message = `it was started by code ${a.codeVersion} and this worker runs ${this.o.codeVersion}; results are bit-identical only with the same code (run this worker from the same commit, or with --allow-other-code to serve it anyway)`;
        this.refused.set(a.queue, message);
        this.log(`not serving scan ${a.queue}: ${message}`);
        return;
      }
      this.log(`warning: scan ${a.queue} was started by code ${a.codeVersion}, this worker runs ${this.o.codeVersion}; serving it as asked (--allow-other-code), although results are bit-identical only with the same code`);
    }
    try {
      const server = await ScanServer.start(a, {
        workerId: this.id, o: this.o, connection: this.connection, client: this.client!, clusterThreads: () => Math.max(this.clusterThreads, this.o.concurrency),
        onChunkDone: () => this.chunksDone++, onError: (err) => this.noteError(err),
      });
      if (this.closed) {
        await server.stop(true);
        return;
      }
      this.servers.set(a.queue, server);
      this.log(`serving scan ${a.queue}`);
    } catch (err) {
      const message = (err as Error).message;
      this.refused.set(a.queue, message);
      this.log(`not serving scan ${a.queue}: ${message}`);
    }
  }

  private noteError(err: Error): void {
    const message = err.message.replace(/\s+/g, ' ');
    if (message === this.lastError || this.closed) return;
    this.lastError = message;
    this.log(`Redis ${redactRedisUrl(this.o.url)}: ${message} (retrying)`);
  }
}
