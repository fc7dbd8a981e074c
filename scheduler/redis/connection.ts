/**
 * Redis connections for the BullMQ transport: URL parsing (redis:// and rediss:// with optional user,
 * password and database number), a redacted form for every message, and a fail-fast probe.
 *
 * Why a probe: once BullMQ holds a connection it waits for Redis to come back, whatever the ioredis
 * options (stack.md §1.11: `queue.add` still pending after 20 s against a closed port), which is
 * what a running scan wants but not what a command that was just typed wants. So every command
 * that uses Redis first connects once with no retries and a short timeout (12 ms against a closed
 * port, measured in stack.md §1.11) and stops with a clear message.
 *
 * Passwords: the only place a password lives is the options object handed to ioredis. Messages,
 * descriptions, the ledger and the Redis registry see `redactRedisUrl(url)` only.
 */
import type { ConnectionOptions } from 'bullmq';
import { isIP } from 'node:net';
import { Redis, type RedisOptions } from 'ioredis';
import { InvalidInputError } from '../../physics/issue.js';

/** Key prefix of everything darksieve writes to Redis (BullMQ's `prefix`); DARKSIEVE_REDIS_PREFIX overrides it. */
export const DEFAULT_REDIS_PREFIX = 'darksieve';

/** How long the probe may take before the command gives up, ms (the issue asks for an answer under 2 s). */
export const PROBE_TIMEOUT_MS = 1500;

/** BullMQ needs Redis >= 5 (streams); 6.2 is what BullMQ documents as its minimum. */
const MIN_REDIS_MAJOR = 5;

/** A Redis server that cannot be used: a runtime failure (CLI exit 1), not bad input. */
export class RedisUnreachableError extends Error {
  override readonly name = 'RedisUnreachableError';
}

/** The URL with its password replaced by `***` (and nothing else changed), for messages. */
export function redactRedisUrl(url: string): string {
  try {
    const u = new URL(url);
    if (u.password) u.password = '***';
    return u.toString().replace(/\/$/, '');
  } catch {
    return '<unparsable Redis URL>';
  }
}

/** The prefix from DARKSIEVE_REDIS_PREFIX or the default; checked so it cannot break key names. */
export function redisPrefix(env: NodeJS.ProcessEnv = process.env): string {
  const p = env.DARKSIEVE_REDIS_PREFIX ?? DEFAULT_REDIS_PREFIX;
  if (!/^[A-Za-z0-9_.-]{1,64}$/.test(p))
    throw new InvalidInputError([{ code: 'bad_prefix', path: 'DARKSIEVE_REDIS_PREFIX', message: 'the Redis key prefix may hold letters, digits, _ . - (1 to 64 characters)', seen: p, allowed: '[A-Za-z0-9_.-]{1,64}' }]);
  return p;
}

/**
 * ioredis options from a redis:// or rediss:// URL (bad input names `--redis` and what is allowed).
 * BullMQ creates its own connections from these options, so it owns and closes them.
 */
export function redisOptionsFromUrl(url: string, field = '--redis'): RedisOptions {
  let u: URL;
  try {
    u = new URL(url);
  } catch {
    throw new InvalidInputError([{ code: 'bad_url', path: field, message: 'not a URL', seen: redactRedisUrl(url), allowed: 'redis://[user:password@]host[:port][/db] or rediss://... for TLS' }]);
  }
  if (u.protocol !== 'redis:' && u.protocol !== 'rediss:')
    throw new InvalidInputError([{ code: 'bad_url', path: field, message: `unsupported scheme ${u.protocol}`, seen: redactRedisUrl(url), allowed: 'redis:// or rediss:// (TLS)' }]);
  if (!u.hostname)
    throw new InvalidInputError([{ code: 'bad_url', path: field, message: 'the URL names no host', seen: redactRedisUrl(url), allowed: 'redis://host[:port]' }]);
  const port = u.port ? Number(u.port) : 6379;
  const dbText = u.pathname.replace(/^\//, '');
  const db = dbText === '' ? 0 : Number(dbText);
  if (!Number.isInteger(db) || db < 0 || db > 1_000_000)
    throw new InvalidInputError([{ code: 'bad_url', path: field, message: `database "${dbText}" is not a number`, seen: redactRedisUrl(url), allowed: 'redis://host:port/<db number>' }]);
  const host = u.hostname.replace(/^\[(.*)\]$/, '$1');
  return {
    host,
    port,
    db,
    ...(u.username ? { username: decodeURIComponent(u.username) } : {}),
    ...(u.password ? { password: decodeURIComponent(u.password) } : {}),
    // TLS verifies the server against Node's CAs (NODE_EXTRA_CA_CERTS adds a private one); SNI only for names
    ...(u.protocol === 'rediss:' ? { tls: isIP(host) ? {} : { servername: host } } : {}),
  };
}

/** Options for a long-lived connection: BullMQ needs maxRetriesPerRequest null; reconnect forever, backing off to 2 s. */
function durableOptions(base: RedisOptions): RedisOptions {
  return { ...base, maxRetriesPerRequest: null, retryStrategy: (times: number) => Math.min(100 * times, 2000) };
}

/** The same options typed for BullMQ (its RedisOptions is an index-signature type, ioredis's an interface). */
export function bullConnection(base: RedisOptions): ConnectionOptions {
  return durableOptions(base) as ConnectionOptions;
}

/** A plain client for darksieve's own keys (registry, heartbeats); errors are reported, not thrown at exit. */
export function openClient(base: RedisOptions, onError: (err: Error) => void): Redis {
  const client = new Redis(durableOptions(base));
  client.on('error', onError);
  return client;
}

function withTimeout<T>(p: Promise<T>, ms: number, what: string): Promise<T> {
  let timer: NodeJS.Timeout | undefined;
  const timeout = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new Error(`${what} timed out after ${ms} ms`)), ms);
  });
  return Promise.race([p, timeout]).finally(() => clearTimeout(timer));
}

/**
 * Connects once (no retries, no offline queue), pings, and checks the server version. Rejects with
 * RedisUnreachableError naming the redacted URL and the cause within about `timeoutMs`.
 */
export async function probeRedis(url: string, timeoutMs = PROBE_TIMEOUT_MS): Promise<{ version: string; runId: string }> {
  const options = redisOptionsFromUrl(url);
  const client = new Redis({
    ...options, lazyConnect: true, retryStrategy: () => null, connectTimeout: Math.max(200, timeoutMs - 300),
    maxRetriesPerRequest: 0, enableOfflineQueue: false,
  });
  let lastError: Error | null = null;
  client.on('error', (err: Error) => {
    lastError = err;
  });
  try {
    const info = await withTimeout(
      (async () => {
        await client.connect();
        await client.ping();
        return client.info('server');
      })(),
      timeoutMs,
      'connecting',
    );
    const version = /redis_version:([^\r\n]+)/.exec(info)?.[1] ?? '?';
    const runId = /run_id:([^\r\n]+)/.exec(info)?.[1] ?? '';
    if (Number(version.split('.')[0]) < MIN_REDIS_MAJOR)
      throw new RedisUnreachableError(`Redis at ${redactRedisUrl(url)} is version ${version}; darksieve needs ${MIN_REDIS_MAJOR} or newer`);
    return { version, runId };
  } catch (err) {
    if (err instanceof RedisUnreachableError) throw err;
    const cause = (lastError as Error | null)?.message ?? (err as Error).message;
    throw new RedisUnreachableError(
      `cannot reach Redis at ${redactRedisUrl(url)}: ${cause.replace(/\s+/g, ' ')}. Start Redis (e.g. \`docker compose up -d redis\`), check the URL and password, or leave out --redis and REDIS_URL to scan on this machine's embedded pool`,
      { cause: err },
    );
  } finally {
    client.disconnect();
  }
}

/** The server's run_id (changes whenever Redis restarts), for restart detection. */
export async function serverRunId(client: Redis): Promise<string> {
  const info = await client.info('server');
  return /run_id:([^\r\n]+)/.exec(info)?.[1] ?? '';
}
