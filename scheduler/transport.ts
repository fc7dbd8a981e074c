/**
 * The one interface between the scheduler and whatever evaluates chunks: the embedded worker-thread
 * pool (scheduler/embedded-pool.ts) or a Redis/BullMQ queue. Both must give the same results bit for
 * bit, because both run scheduler/chunk.ts on the same resolved spec.
 *
 * Protocol (the scheduler's side):
 *   await t.open(work)            ship the resolved spec; workers prepare the physics once
 *   t.dispatch(range)             any number of times, keeping about t.window chunks outstanding
 *   await t.next()                the next finished chunk, in any order: a columnar result, or a
 *                                 final failure after the transport's own retries
 *   await t.close()               stop; chunks not yet delivered are abandoned (they stay pending in
 *                                 the ledger and run again on resume); safe to call twice
 * The scheduler alone writes the ledger; a transport never touches it. A chunk may be delivered
 * twice (e.g. a stalled Redis job re-run): the ledger's INSERT OR IGNORE makes that harmless.
 *
 * `encodeChunkResult`/`decodeChunkResult` give a JSON-safe, bit-exact form of a result (Float64
 * columns as base64 of their IEEE bytes; NaN survives) for transports that cannot move typed arrays.
 */
import type { ChunkResult, Column } from './chunk.js';
import type { ChunkRange } from './plan.js';

export interface ScanWork {
  /** identifies the scan among all scans a transport serves (letters, digits, '-'; no ':') */
  readonly scanKey: string;
  /** the resolved spec (scheduler/spec.ts resolvedSpecJson) */
  readonly resolvedSpecJson: string;
  /** observables the scheduler expects (the spec's numeric observable names, or its own prepare()'s); workers must agree */
  readonly observableNames: readonly string[];
}

export type ChunkOutcome =
  | { readonly kind: 'result'; readonly result: ChunkResult }
  | { readonly kind: 'failed'; readonly range: ChunkRange; readonly attempts: number; readonly error: string };

export interface Transport {
  /** for messages, e.g. 'embedded pool, 2 worker threads' */
  readonly description: string;
  /** how many chunks the scheduler should keep dispatched but undelivered so no worker idles */
  readonly window: number;
  open(work: ScanWork): Promise<void>;
  dispatch(range: ChunkRange): void;
  next(): Promise<ChunkOutcome>;
  close(): Promise<void>;
}

/** Thrown by a transport whose workers cannot start on this scan (e.g. the physics refuses it). */
export class TransportStartError extends Error {
  override readonly name = 'TransportStartError';
}

export interface EncodedChunkResult {
  readonly chunk: number;
  readonly firstId: number;
  readonly n: number;
  readonly evalMs: number;
  /** per column: { f64: base64 } for numbers, { text: [...] } for text */
  readonly columns: readonly ({ readonly f64: string } | { readonly text: readonly (string | null)[] })[];
}

export function encodeChunkResult(r: ChunkResult): EncodedChunkResult {
  return {
    chunk: r.chunk, firstId: r.firstId, n: r.n, evalMs: r.evalMs,
    columns: r.columns.map((c) =>
      c instanceof Float64Array ? { f64: Buffer.from(c.buffer, c.byteOffset, c.byteLength).toString('base64') } : { text: c },
    ),
  };
}

export function decodeChunkResult(e: EncodedChunkResult): ChunkResult {
  const columns: Column[] = e.columns.map((c) => {
    if ('f64' in c) {
      const bytes = Buffer.from(c.f64, 'base64');
      const copy = new Uint8Array(bytes.byteLength);
      copy.set(bytes);
      return new Float64Array(copy.buffer);
    }
    return [...c.text];
  });
  return { chunk: e.chunk, firstId: e.firstId, n: e.n, evalMs: e.evalMs, columns };
}
