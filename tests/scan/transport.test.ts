/**
 * The JSON form of chunk results (for transports that cannot move typed arrays, e.g. Redis) keeps
 * every number bit for bit, NaN (NULL), -0, subnormals and infinities included.
 */
import { describe, expect, it } from 'vitest';
import type { ChunkResult } from '../../scheduler/chunk.js';
import { decodeChunkResult, encodeChunkResult } from '../../scheduler/transport.js';
import { bits } from './helpers.js';

describe('chunk result encoding', () => {
  it('round-trips through JSON bit for bit', () => {
    const values = [NaN, -0, 0, 5e-324, -2.2250738585072014e-308, 1.7976931348623157e308, Infinity, -Infinity, 1 / 3, 1e-47];
    const result: ChunkResult = {
      chunk: 7, firstId: 70, n: values.length, evalMs: 12.5,
      columns: [Float64Array.from(values), values.map((_, i) => (i % 3 === 0 ? null : `f${i},x`))],
    };
    const back = decodeChunkResult(JSON.parse(JSON.stringify(encodeChunkResult(result))));
    expect({ chunk: back.chunk, firstId: back.firstId, n: back.n, evalMs: back.evalMs }).toEqual({ chunk: 7, firstId: 70, n: values.length, evalMs: 12.5 });
    expect(back.columns[0]).toBeInstanceOf(Float64Array);
    expect([...(back.columns[0] as Float64Array)].map(bits)).toEqual(values.map(bits));
    expect(back.columns[1]).toEqual(result.columns[1]);
  });

  it('decodes a column whose bytes start at an odd offset of a shared buffer', () => {
    const shared = new Float64Array([1, 2, 3, 4]).subarray(1, 3);
    const back = decodeChunkResult(JSON.parse(JSON.stringify(encodeChunkResult({ chunk: 0, firstId: 0, n: 2, evalMs: 0, columns: [shared] }))));
    expect([...(back.columns[0] as Float64Array)]).toEqual([2, 3]);
  });
});
