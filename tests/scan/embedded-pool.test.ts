/**
 * The embedded pool's hand-out of chunks at the end of a scan: a chunk waiting behind a busy thread's
 * running one is taken back and given to an idle thread (scheduler/chunk-tickets.ts), never evaluated
 * twice nor lost. Mechanics with the stand-in physics of slow-physics.ts (not physics).
 */
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ChunkTickets, NO_TICKET, claimTicket } from '../../scheduler/chunk-tickets.js';
import { EmbeddedPool } from '../../scheduler/embedded-pool.js';
import { parseSpec, resolvedSpecJson } from '../../scheduler/spec.js';
import { numericObservableNames } from '../../physics/observables.js';
import { bits, tempDir, writeSpec } from './helpers.js';
import { SLOW_MS_PER_POINT } from './slow-physics.js';

const SLOW_PHYSICS = new URL('./slow-physics.ts', import.meta.url).href;
const FAKE_PHYSICS = new URL('./fake-physics.ts', import.meta.url).href;
const spec = {
  name: 'steal',
  model: { dm: 'dirac', mediator: 'vector' },
  axes: { m_chi: { from: 10, to: 1000, steps: 40, spacing: 'log' } },
  detectors: [{ name: 'xe_fake', target: 'Xe', windowKeV: [5, 40], efficiency: 0.5, exposureKgDay: 1000 }],
};
let tmp: ReturnType<typeof tempDir>;
let json: string;
beforeAll(() => {
  tmp = tempDir();
  json = resolvedSpecJson(parseSpec(JSON.parse(readFileSync(writeSpec(tmp.dir, 'steal.json', spec), 'utf8'))).spec!);
});
afterAll(() => tmp.cleanup());

describe('chunk tickets', () => {
  it('a chunk is either claimed by its thread or withdrawn by the pool, never both', () => {
    const t = new ChunkTickets(2);
    const states = new Int32Array(t.buffer);
    const a = t.issue();
    const b = t.issue();
    expect(t.issue()).toBe(NO_TICKET);
    expect(claimTicket(states, a)).toBe(true);
    expect(t.withdraw(a)).toBe(false);
    expect(t.withdraw(b)).toBe(true);
    expect(claimTicket(states, b)).toBe(false);
    // a cell is used again only after release; a chunk without a ticket runs and cannot be withdrawn
    t.release(b);
    expect(t.issue()).toBe(b);
    expect(claimTicket(states, NO_TICKET)).toBe(true);
    expect(t.withdraw(NO_TICKET)).toBe(false);
  });
});

describe('the end of a scan on the embedded pool', () => {
  it('an idle thread takes the chunk waiting behind a busy one; every chunk arrives once, with the same bits', async () => {
    const pool = new EmbeddedPool({ workers: 2, physicsModule: SLOW_PHYSICS });
    const order: number[] = [];
    const results = new Map<number, string[][]>();
    try {
      await pool.open({ scanKey: 'steal', resolvedSpecJson: json, observableNames: numericObservableNames(['xe_fake'], []) });
      // thread X gets chunk 0 (20 points) and then chunk 2 (2 points); thread Y chunk 1 (2 points).
      // Y is idle after 2 points: it takes chunk 2, which then arrives long before chunk 0
      pool.dispatch({ chunk: 0, firstId: 0, n: 20 });
      pool.dispatch({ chunk: 1, firstId: 20, n: 2 });
      pool.dispatch({ chunk: 2, firstId: 22, n: 2 });
      for (let k = 0; k < 3; k++) {
        const o = await pool.next();
        if (o.kind !== 'result') throw new Error(o.error);
        order.push(o.result.chunk);
        results.set(o.result.chunk, o.result.columns.map((c) => Array.from(c as ArrayLike<number | string | null>, (v) => (typeof v === 'number' ? bits(v) : String(v)))));
      }
      expect(order).toEqual([1, 2, 0]);
      // nothing more comes: the withdrawn chunk was skipped by the thread that held it, not evaluated
      const extra = await Promise.race([pool.next().then(() => 'more'), new Promise((r) => setTimeout(() => r('none'), 40 * SLOW_MS_PER_POINT))]);
      expect(extra).toBe('none');
    } finally {
      await pool.close();
    }
    // the same rows as the stand-in physics gives without the sleep
    const { ChunkEvaluator, loadPhysicsEngine } = await import('../../scheduler/chunk.js');
    const ev = await ChunkEvaluator.create(json, await loadPhysicsEngine(FAKE_PHYSICS));
    const r = ev.evaluate({ chunk: 2, firstId: 22, n: 2 });
    expect(results.get(2)).toEqual(r.columns.map((c) => Array.from(c as ArrayLike<number | string | null>, (v) => (typeof v === 'number' ? bits(v) : String(v)))));
  });
});
