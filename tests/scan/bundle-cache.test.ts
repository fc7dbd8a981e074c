/**
 * The start-up bundle cache (bin/bundle-cache.mjs): a bundle behaves as its sources, is reused while
 * they are unchanged, is rebuilt when one changes, and gives way to tsx when it cannot be made.
 * Fixture modules live in a temporary folder; their bundles go to the repository's cache folder
 * under a name derived from that folder, and are removed afterwards.
 */
import { mkdtempSync, rmSync, utimesSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { bundledEntry } from '../../bin/bundle-cache.mjs';

const dir = mkdtempSync(path.join(tmpdir(), 'darksieve-bundle-'));
const entry = path.join(dir, 'entry.ts');
const part = path.join(dir, 'part.ts');
const CACHE = fileURLToPath(new URL('../../node_modules/.cache/darksieve/', import.meta.url));
const cacheName = path.relative(fileURLToPath(new URL('../..', import.meta.url)), entry).replace(/\.[^.]+$/, '').replace(/[^A-Za-z0-9]+/g, '_');

afterAll(() => {
  rmSync(dir, { recursive: true, force: true });
  rmSync(path.join(CACHE, cacheName), { recursive: true, force: true });
  rmSync(path.join(CACHE, `${cacheName}.json`), { force: true });
});

function writeSources(value: number): void {
  writeFileSync(part, `export const value: number = ${value};\nexport const partUrl: string = import.meta.url;\n`);
  // a package outside the bundle, a lazily imported module, and this file's own URL
  writeFileSync(
    entry,
    `import { Command } from 'commander';\nexport const hasCommander = typeof Command === 'function';\n` +
      `export const entryUrl = import.meta.url;\nexport const load = () => import('./part.js');\n`,
  );
}

interface Fixture {
  hasCommander: boolean;
  entryUrl: string;
  load(): Promise<{ value: number; partUrl: string }>;
}

describe('bundle cache', () => {
  it('bundles TypeScript that behaves as its sources: import.meta.url, packages, lazy imports', async () => {
    writeSources(1);
    const url = await bundledEntry(pathToFileURL(entry));
    expect(url).not.toBeNull();
    expect(url!.startsWith(pathToFileURL(CACHE).href)).toBe(true);
    const mod = (await import(url!)) as Fixture;
    expect(mod.hasCommander).toBe(true);
    expect(mod.entryUrl).toBe(pathToFileURL(entry).href);
    const lazy = await mod.load();
    expect(lazy.value).toBe(1);
    expect(lazy.partUrl).toBe(pathToFileURL(part).href);
  });

  it('reuses the bundle while the inputs are unchanged and rebuilds when one changes', async () => {
    writeSources(2);
    const first = await bundledEntry(pathToFileURL(entry));
    expect(await bundledEntry(pathToFileURL(entry))).toBe(first);
    // same size, another mtime: still a change
    writeSources(3);
    utimesSync(part, new Date(), new Date(Date.now() + 5000));
    const second = await bundledEntry(pathToFileURL(entry));
    expect(second).not.toBe(first);
    const mod = (await import(second!)) as Fixture;
    expect((await mod.load()).value).toBe(3);
  });

  it('gives way to tsx (null) on a syntax error and when DARKSIEVE_NO_BUNDLE is set', async () => {
    writeFileSync(part, 'export const value = ;\n');
    utimesSync(part, new Date(), new Date(Date.now() + 10_000));
    expect(await bundledEntry(pathToFileURL(entry))).toBeNull();
    writeSources(4);
    utimesSync(part, new Date(), new Date(Date.now() + 15_000));
    process.env.DARKSIEVE_NO_BUNDLE = '1';
    try {
      expect(await bundledEntry(pathToFileURL(entry))).toBeNull();
    } finally {
      delete process.env.DARKSIEVE_NO_BUNDLE;
    }
    expect(await bundledEntry(pathToFileURL(entry))).not.toBeNull();
  });

  it('callers asking together while a build is due all get the same complete bundle', async () => {
    writeSources(5);
    utimesSync(part, new Date(), new Date(Date.now() + 20_000));
    const urls = await Promise.all([1, 2, 3].map(() => bundledEntry(pathToFileURL(entry))));
    expect(new Set(urls).size).toBe(1);
    expect(urls[0]).not.toBeNull();
  });
});

describe('node bin/bundle-cache.mjs', () => {
  it('builds the CLI and worker-thread bundles at once and names them; those are the ones later starts use', async () => {
    const { spawnSync } = await import('node:child_process');
    const script = fileURLToPath(new URL('../../bin/bundle-cache.mjs', import.meta.url));
    const r = spawnSync(process.execPath, [script], { encoding: 'utf8', timeout: 120_000 });
    expect(r.status, r.stderr).toBe(0);
    const built = new Map(r.stdout.trim().split('\n').map((line) => line.split(': ') as [string, string]));
    expect([...built.keys()]).toEqual(['scheduler/cli.ts', 'workers/thread.ts']);
    for (const [entry, file] of built) {
      expect(await bundledEntry(new URL(`../../${entry}`, import.meta.url))).toBe(pathToFileURL(file).href);
    }
    // without bundles it says so and fails, so an install step notices
    const off = spawnSync(process.execPath, [script], { encoding: 'utf8', timeout: 120_000, env: { ...process.env, DARKSIEVE_NO_BUNDLE: '1' } });
    expect(off.status).toBe(1);
    expect(off.stdout).toMatch(/scheduler\/cli\.ts: no bundle/);
  });
});

describe('the bundled worker thread', () => {
  it('computes the real physics bit for bit as the sources do through tsx and in this process', async () => {
    const { runScan } = await import('../../scheduler/run.js');
    const { ChunkEvaluator, loadPhysicsEngine } = await import('../../scheduler/chunk.js');
    const { parseSpec, resolvedSpecJson } = await import('../../scheduler/spec.js');
    const { bits, pointRows, writeSpec } = await import('./helpers.js');
    const spec = {
      name: 'bundle_equal',
      model: { dm: 'majorana', g_chi: 1, g_q: 0.3, g_l: 0.1 },
      axes: { mediator: { values: ['scalar', 'axial'] }, m_chi: { from: 8, to: 3000, steps: 6, spacing: 'log' }, m_med: { from: 20, to: 5000, steps: 4, spacing: 'log' } },
      detectors: [{ name: 'xe_t', target: 'Xe', windowKeV: [5, 40], efficiency: 0.5, exposureKgDay: 1000 }],
      targets: [{ name: 'gc_t', kind: 'galactic_centre', coneDeg: 1, energyGeV: [1, 100] }],
    };
    const specFile = writeSpec(dir, 'bundle-equal.json', spec);
    const silent = (): void => {};
    const ledger = async (db: string) => {
      await runScan({ specPath: specFile, dbPath: path.join(dir, db), workers: 1, chunkSize: 12, quiet: true, log: silent });
      return pointRows(path.join(dir, db));
    };
    // the pool starts its threads from this bundle (null would mean tsx, and the comparison would be empty)
    expect(await bundledEntry(new URL('../../workers/thread.ts', import.meta.url))).not.toBeNull();
    const bundled = await ledger('bundled.db');
    process.env.DARKSIEVE_NO_BUNDLE = '1';
    let viaTsx: string[][];
    try {
      viaTsx = await ledger('tsx.db');
    } finally {
      delete process.env.DARKSIEVE_NO_BUNDLE;
    }
    expect(bundled.length).toBe(48);
    expect(bundled).toEqual(viaTsx);
    // and the same numbers evaluated here, in vitest's own transform of the sources
    const evaluator = await ChunkEvaluator.create(resolvedSpecJson(parseSpec(spec).spec!), await loadPhysicsEngine());
    const here = evaluator.evaluate({ chunk: 0, firstId: 0, n: 48 });
    const omegaColumn = evaluator.layout.names.indexOf('omega_h2');
    const omega = here.columns[omegaColumn] as Float64Array;
    expect(omega.filter(Number.isFinite).length).toBeGreaterThan(40);
    // ledger rows start with scan_id and point_id
    expect(bundled.map((r) => r[2 + omegaColumn])).toEqual(Array.from(omega, (x) => (Number.isNaN(x) ? 'NULL' : bits(x))));
  });
});
