/**
 * Re-judging equals a fresh run: a scan run with constraints A and then re-judged from a file with
 * constraints B holds, in its set B, exactly the verdicts of a fresh run of the same scan whose spec
 * carries B. Uses the scan tests' deterministic stand-in physics (fast; not physics).
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runScan } from '../../scheduler/run.js';
import { FAKE_PHYSICS, pointRows, tempDir, writeSpec } from '../scan/helpers.js';
import { runCommand } from './cli-harness.js';

const base = {
  name: 'rejudge',
  model: { dm: 'dirac', mediator: 'vector' },
  axes: { m_chi: { from: 10, to: 1000, steps: 25, spacing: 'log' }, g_chi: { from: 0.2, to: 1.5, steps: 8 } },
  halo: { local: { rhoLocalGeVcm3: 0.35 } },
  detectors: [{ name: 'xe_fake', target: 'Xe', windowKeV: [5, 40], efficiency: 0.5, exposureKgDay: 1000 }],
};
const constraintsA = [{ kind: 'relic', name: 'relic', max: 1e-29 }];
const constraintsB = [
  { kind: 'relic', name: 'relic', bound: 'band', central: 5e-30, sigma: 1e-31, nSigma: 2 },
  { kind: 'limit_curve', name: 'curve', observable: 'sigma_si_p_cm2', file: 'curves/toy.csv', outOfRange: { below: 'fail', above: 'clamp' } },
  { kind: 'events_limit', name: 'xe', detector: 'xe_fake', observed: 0, method: 'feldman_cousins' },
  { kind: 'expression', name: 'cut', expr: 'sigma_si_n_cm2 < 3e-30 * (m_chi / 100) or g_chi > 1' },
];

let tmp: ReturnType<typeof tempDir>;
const silent = (): void => {};

beforeAll(() => {
  tmp = tempDir();
  // the curve sits next to both the spec and the constraints file (paths are relative to each)
  const curves = path.join(tmp.dir, 'curves');
  mkdirSync(curves);
  writeFileSync(path.join(curves, 'toy.csv'), '# invented toy curve\nm_chi [GeV], sigma [cm^2]\n20, 1e-29\n100, 2e-30\n1000, 5e-30\n');
});
afterAll(() => (process.env.KEEP_TMP ? undefined : tmp.cleanup()));

function verdictRows(db: string, set: string): unknown[][] {
  const conn = new Database(db, { readonly: true });
  try {
    return conn.prepare(`SELECT point_id, survives, relic, curve, xe, cut FROM verdicts WHERE constraint_set = ? ORDER BY point_id`).raw(true).all(set) as unknown[][];
  } finally {
    conn.close();
  }
}

describe('judge equals a fresh run with the new constraints', () => {
  it('set B judged from a file matches set "spec" of a run with B in its spec', async () => {
    const dbA = path.join(tmp.dir, 'a.db');
    const dbB = path.join(tmp.dir, 'b.db');
    const specA = writeSpec(tmp.dir, 'a.json', { ...base, constraints: constraintsA });
    const specB = writeSpec(tmp.dir, 'b.json', { ...base, constraints: constraintsB });
    const runA = await runScan({ specPath: specA, dbPath: dbA, physicsModule: FAKE_PHYSICS, quiet: true, log: silent, workers: 1, chunkSize: 40 });
    expect(runA.status).toBe('done');
    const file = path.join(tmp.dir, 'b-constraints.json');
    writeFileSync(file, JSON.stringify({ set: 'b', constraints: constraintsB }));
    const judged = await runCommand(['judge', dbA, '--constraints', file]);
    expect(judged.code, judged.stderr).toBe(0);
    const runB = await runScan({ specPath: specB, dbPath: dbB, physicsModule: FAKE_PHYSICS, quiet: true, log: silent, workers: 2, chunkSize: 33 });
    expect(runB.status).toBe('done');

    expect(pointRows(dbA)).toEqual(pointRows(dbB));
    const rejudged = verdictRows(dbA, 'b');
    const fresh = verdictRows(dbB, 'spec');
    expect(rejudged.length).toBe(25 * 8);
    expect(rejudged).toEqual(fresh);
    // the constraints split the points, so the comparison is not between two trivial tables
    for (let col = 1; col < 6; col++) {
      const ones = rejudged.filter((r) => r[col] === 1).length;
      expect(ones, `column ${col}`).toBeGreaterThan(0);
      if (col !== 4) expect(ones, `column ${col}`).toBeLessThan(rejudged.length);
    }
    // set A is still there, untouched by the re-judging
    const a = new Database(dbA, { readonly: true });
    try {
      const sets = a.prepare('SELECT name FROM constraint_sets ORDER BY name').pluck().all();
      expect(sets).toEqual(['b', 'spec']);
    } finally {
      a.close();
    }
  });
});
