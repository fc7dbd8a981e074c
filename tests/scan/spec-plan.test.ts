/**
 * Spec validation and the plan: every malformed spec names its field; point ids map to parameters
 * as documented (mixed radix, counter-based random, Latin hypercube); planning is constant memory.
 */
import { describe, expect, it } from 'vitest';
import { makePlan, parseSpec, resolvedSpecJson, specFromResolvedJson, specHash } from '../../scheduler/spec.js';
import { PARAMETER_COLUMNS, decodeResolvedSpec, permuteIndex, uniform01 } from '../../scheduler/plan.js';
import { MALFORMED, baseSpec, malformed } from './malformed-specs.js';


describe('spec validation', () => {
  it('accepts the base spec and resolves defaults', () => {
    const { spec, issues } = parseSpec(baseSpec());
    expect(issues).toEqual([]);
    expect(spec!.model.g_l).toBe(0);
    expect(spec!.model.width_med).toBeNull();
    expect(spec!.setup.targets[0]!.energyGeV[1]).toBe(Infinity);
  });

  it.each(MALFORMED.map((c) => [c.what, c] as const))('rejects %s, naming the field', (_what, c) => {
    const { spec, issues } = parseSpec(malformed(c));
    expect(spec, `accepted: ${c.what}`).toBeUndefined();
    const paths = issues.map((i) => i.path);
    expect(paths.some((p) => p.startsWith(c.path)), `expected an issue at ${c.path}, got ${JSON.stringify(issues)}`).toBe(true);
    for (const i of issues) expect(i.message.length).toBeGreaterThan(0);
  });

  it('has at least 30 malformed cases', () => expect(MALFORMED.length).toBeGreaterThanOrEqual(30));

  it('reports every problem at once', () => {
    const s = baseSpec();
    s.model.g_q = -1;
    s.axes.m_chi.to = 1e9;
    s.detectors[0].name = 'BAD';
    s.targets[0].coneDeg = 0;
    const { issues } = parseSpec(s);
    const paths = issues.map((i) => i.path);
    expect(paths).toEqual(expect.arrayContaining(['model.g_q', 'axes.m_chi.to', 'detectors[0].name', 'targets[0].coneDeg']));
    const range = issues.find((i) => i.path === 'axes.m_chi.to')!;
    expect(range.seen).toBe('1000000000');
    expect(range.allowed).toContain('m_chi <= 100000');
  });

  it('round-trips the resolved form exactly and hashes it stably', () => {
    const { spec } = parseSpec(baseSpec());
    const json = resolvedSpecJson(spec!);
    const again = specFromResolvedJson(json);
    expect(resolvedSpecJson(again)).toBe(json);
    expect(specHash(json)).toBe(specHash(resolvedSpecJson(parseSpec(baseSpec()).spec!)));
    // the validator-free decoder used by worker threads gives the same spec
    expect(resolvedSpecJson(decodeResolvedSpec(json))).toBe(json);
    const other = baseSpec();
    other.axes.m_chi.steps = 6;
    expect(specHash(resolvedSpecJson(parseSpec(other).spec!))).not.toBe(specHash(json));
  });

  it('ring and offset targets and a satellite dispersion reach the physics setup and round-trip; specs without them keep their form', () => {
    const base = resolvedSpecJson(parseSpec(baseSpec()).spec!);
    expect(base).not.toMatch(/innerDeg|offsetDeg|maskLatDeg|velocityDispersionKmS/);
    const sat = { name: 'sat', kind: 'satellite', coneDeg: 0.5, innerDeg: 0.1, distanceKpc: 80, velocityDispersionKmS: 9, profile: { kind: 'nfw', rsKpc: 0.4, rhoSGeVcm3: 2, rTruncKpc: 4 }, energyGeV: [1, 100] };
    const offCentre = { ...baseSpec().targets[0], name: 'off', coneDeg: 2, offsetDeg: 10 };
    const { spec, issues } = parseSpec({ ...baseSpec(), targets: [{ ...baseSpec().targets[0], innerDeg: 0.3, maskLatDeg: 0.2 }, sat, offCentre] });
    expect(issues).toEqual([]);
    expect(spec!.setup.targets[0]).toMatchObject({ coneDeg: 1, innerDeg: 0.3, maskLatDeg: 0.2 });
    expect(spec!.setup.targets[2]).toMatchObject({ coneDeg: 2, offsetDeg: 10 });
    expect(spec!.setup.targets[1]).toMatchObject({ innerDeg: 0.1, velocityDispersionKmS: 9 });
    const json = resolvedSpecJson(spec!);
    expect(resolvedSpecJson(specFromResolvedJson(json))).toBe(json);
    expect(decodeResolvedSpec(json).setup.targets[1]).toMatchObject({ innerDeg: 0.1, velocityDispersionKmS: 9 });
  });

  it('photon-yield tables: inline rows or CSV files beside the spec, carried inline in the resolved spec; bad ones name their field', async () => {
    const { mkdtempSync, writeFileSync, rmSync } = await import('node:fs');
    const { tmpdir } = await import('node:os');
    const path = await import('node:path');
    const { loadSpecFile } = await import('../../scheduler/spec.js');
    const { InvalidInputError } = await import('../../physics/issue.js');
    const dir = mkdtempSync(path.join(tmpdir(), 'darksieve-yields-'));
    try {
      // invented spectra for the test, not physics
      writeFileSync(path.join(dir, 'b.csv'), '# invented\nx [], dN/dx []\n0.01, 40\n0.1, 2\n1, 0\n');
      const inline = [[0.05, 3], [0.5, 0.2], [1, 0]];
      const file = path.join(dir, 'spec.json');
      writeFileSync(file, JSON.stringify({ ...baseSpec(), indirect: { yieldTables: { b: 'b.csv', tau: inline } } }));
      const spec = loadSpecFile(file);
      expect(spec.setup.yieldTables).toEqual({ b: [[0.01, 40], [0.1, 2], [1, 0]], tau: inline });
      const json = resolvedSpecJson(spec);
      expect(JSON.parse(json).indirect.yieldTables.b).toEqual([[0.01, 40], [0.1, 2], [1, 0]]);
      expect(resolvedSpecJson(specFromResolvedJson(json))).toBe(json);
      expect(decodeResolvedSpec(json).setup.yieldTables).toEqual(spec.setup.yieldTables);
      expect(specHash(json)).not.toBe(specHash(resolvedSpecJson(parseSpec(baseSpec()).spec!)));
      // a changed table file is another spec (its numbers are in the hash)
      writeFileSync(path.join(dir, 'b.csv'), 'x [], dN/dx []\n0.01, 41\n0.1, 2\n1, 0\n');
      expect(specHash(resolvedSpecJson(loadSpecFile(file)))).not.toBe(specHash(json));
      // every problem at once, each naming its field
      writeFileSync(path.join(dir, 'bad.csv'), 'x [], dN/dx [GeV]\n0.5, 1\n0.2, 1\n');
      writeFileSync(file, JSON.stringify({ ...baseSpec(), indirect: { yieldTables: { b: 'bad.csv', c: 'missing.csv', photon: inline, tau: [[0.5, 1], [1.5, 1]] } } }));
      const err = (() => { try { loadSpecFile(file); } catch (e) { return e; } return null; })();
      expect(err).toBeInstanceOf(InvalidInputError);
      const paths = (err as InstanceType<typeof InvalidInputError>).issues.map((i) => i.path);
      for (const p of ['indirect.yieldTables.b', 'indirect.yieldTables.c', 'indirect.yieldTables.photon', 'indirect.yieldTables.tau[1][0]']) expect(paths).toContain(p);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('the Sommerfeld option: off leaves the resolved form (and the hash of older specs) as it was; on round-trips and enters the knobs', async () => {
    const base = resolvedSpecJson(parseSpec(baseSpec()).spec!);
    expect(base).not.toContain('indirect');
    expect(resolvedSpecJson(parseSpec({ ...baseSpec(), indirect: { sommerfeld: 'off' } }).spec!)).toBe(base);
    const { spec } = parseSpec({ ...baseSpec(), indirect: { sommerfeld: 'hulthen' } });
    expect(spec!.setup.sommerfeld).toBe('hulthen');
    const json = resolvedSpecJson(spec!);
    expect(json).not.toBe(base);
    expect(resolvedSpecJson(specFromResolvedJson(json))).toBe(json);
    expect(decodeResolvedSpec(json).setup.sommerfeld).toBe('hulthen');
    const { prepare } = await import('../../physics/evaluate.js');
    const knobs = (setup: NonNullable<typeof spec>["setup"]) => prepare(setup).knobs.indirect as Record<string, unknown>;
    expect(knobs(spec!.setup).sommerfeld).toMatchObject({ approximation: 'hulthen' });
    expect(knobs(parseSpec(baseSpec()).spec!.setup).sommerfeld).toBeUndefined();
  });
});

describe('plan', () => {
  it('grid ids are mixed-radix numbers, last axis fastest, ends exact', () => {
    const plan = makePlan(parseSpec(baseSpec()).spec!, 3);
    expect(plan.total).toBe(10);
    expect(plan.chunkCount).toBe(4);
    expect(plan.chunkRange(3)).toEqual({ chunk: 3, firstId: 9, n: 1 });
    const p0 = plan.point(0);
    const p1 = plan.point(1);
    const p9 = plan.point(9);
    expect([p0.m_chi, p0.m_med, p1.m_chi, p1.m_med, p9.m_chi, p9.m_med]).toEqual([10, 100, 10, 1000, 1000, 1000]);
    // log spacing: 10 * 100^(2/4) = 100 (up to rounding in pow)
    expect(plan.point(4).m_chi).toBeCloseTo(100, 10);
    // equals axis: g_chi = m_med / 1000
    expect(p1.g_chi).toBe(1);
    expect(p0.g_chi).toBe(0.1);
    expect(p0.dm).toBe('dirac');
  });

  it('random points depend only on (seed, id)', () => {
    const s = baseSpec();
    delete s.axes.m_chi.steps;
    s.sampling = { kind: 'random', count: 1000, seed: 42 };
    const plan = makePlan(parseSpec(s).spec!, 100);
    const a = plan.point(777);
    const fresh = makePlan(parseSpec(s).spec!, 7);
    expect(fresh.point(777)).toEqual(a);
    expect(a.m_chi).toBeGreaterThanOrEqual(10);
    expect(a.m_chi).toBeLessThan(1000);
    s.sampling.seed = 43;
    expect(makePlan(parseSpec(s).spec!, 100).point(777)).not.toEqual(a);
  });

  it('uniform01 is in [0,1) and roughly uniform (mean 0.5 +- 5 sigma)', () => {
    let sum = 0;
    const n = 20000;
    for (let i = 0; i < n; i++) {
      const u = uniform01(9, i, 0);
      expect(u >= 0 && u < 1).toBe(true);
      sum += u;
    }
    // sigma of the mean of n uniforms is 1/sqrt(12 n) (common practice, no source)
    expect(Math.abs(sum / n - 0.5)).toBeLessThan(5 / Math.sqrt(12 * n));
  });

  it('Latin hypercube puts exactly one point in every stratum of every axis', () => {
    for (const n of [1, 7, 1000, 4097]) {
      for (const axis of [0, 1]) {
        const seen = new Uint8Array(n);
        for (let id = 0; id < n; id++) seen[permuteIndex(id, n, 5, axis)]!++;
        expect(seen.every((c) => c === 1), `n=${n} axis=${axis}`).toBe(true);
      }
    }
    const s = baseSpec();
    delete s.axes.m_chi.steps;
    s.axes.m_chi.spacing = 'lin';
    s.sampling = { kind: 'latin_hypercube', count: 50, seed: 3 };
    const plan = makePlan(parseSpec(s).spec!, 10);
    const strata = new Set<number>();
    for (let id = 0; id < 50; id++) strata.add(Math.floor(((plan.point(id).m_chi - 10) / 990) * 50));
    expect(strata.size).toBe(50);
  });

  it('an equals axis changes only its own column: grid, random and Latin-hypercube parameters keep their bits', () => {
    // common practice, no source: adding an equals axis on g_l, which nothing else reads, must leave
    // every other parameter of every point bit for bit as it was (sampled axes are numbered without it)
    const f64 = new Float64Array(1);
    const u64 = new BigUint64Array(f64.buffer);
    const bitsOf = (v: unknown): unknown => {
      if (typeof v !== 'number') return v;
      f64[0] = v;
      return u64[0];
    };
    for (const sampling of [undefined, { kind: 'random', count: 500, seed: 11 }, { kind: 'latin_hypercube', count: 500, seed: 12 }]) {
      const s = baseSpec();
      delete s.axes.g_chi;
      s.axes.m_chi = sampling ? { from: 10, to: 1000, spacing: 'log' } : { from: 10, to: 1000, steps: 50, spacing: 'log' };
      s.axes.g_q = sampling ? { from: 0.01, to: 1, spacing: 'lin' } : { from: 0.01, to: 1, steps: 5 };
      delete s.model.g_q;
      if (sampling) s.sampling = sampling;
      const direct = makePlan(parseSpec(s).spec!, 10);
      const general = makePlan(parseSpec({ ...s, axes: { ...s.axes, g_l: { equals: '0.5 * g_q' } } }).spec!, 10);
      expect(direct.total).toBe(500);
      const gl = PARAMETER_COLUMNS.indexOf('g_l');
      const a = new Array(PARAMETER_COLUMNS.length);
      const b = new Array(PARAMETER_COLUMNS.length);
      for (let id = 0; id < direct.total; id++) {
        expect(direct.paramsInto(id, a)).toBeNull();
        expect(general.paramsInto(id, b)).toBeNull();
        b[gl] = a[gl];
        expect(a.map(bitsOf), `${sampling?.kind ?? 'grid'} id ${id}`).toEqual(b.map(bitsOf));
      }
    }
  });

  it('an equals value out of range fails that point only', () => {
    const s = baseSpec();
    s.axes.g_chi.equals = 'm_med / 10'; // 100 > 4 pi for m_med = 1000
    const plan = makePlan(parseSpec(s).spec!, 10);
    expect(plan.point(0).g_chi).toBe(10);
    expect(() => plan.point(1)).toThrow(/g_chi = 100 from 'm_med \/ 10' is outside/);
  });

  it('plans a 1e8-point grid in constant memory', () => {
    const s = baseSpec();
    s.axes = { m_chi: { from: 1, to: 1e4, steps: 10000, spacing: 'log' }, m_med: { from: 1, to: 1e4, steps: 10000, spacing: 'log' } };
    const plan = makePlan(parseSpec(s).spec!, 1000);
    expect(plan.total).toBe(1e8);
    globalThis.gc?.();
    const before = process.memoryUsage().heapUsed;
    let chunks = 0;
    let points = 0;
    let last = -1;
    for (const c of plan.chunks()) {
      chunks++;
      points += c.n;
      expect(c.firstId).toBe(last + 1);
      last = c.firstId + c.n - 1;
      if (chunks % 10000 === 0) plan.point(c.firstId);
    }
    const grown = process.memoryUsage().heapUsed - before;
    expect(chunks).toBe(100000);
    expect(points).toBe(1e8);
    expect(plan.point(99_999_999)).toMatchObject({ m_chi: 1e4, m_med: 1e4 });
    // a materialised plan would need >= 8 bytes per point (800 MB); allow 32 MB of garbage
    expect(grown).toBeLessThan(32 * 1024 * 1024);
  });
});

describe('demo scenario', () => {
  it('is a valid spec whose constraints compile, and every file says it is invented', async () => {
    const { loadSpecFile } = await import('../../scheduler/spec.js');
    const { compileSpecConstraints } = await import('../../scheduler/run.js');
    const { DEMO_SPEC } = await import('../../scheduler/commands/demo.js');
    const { readFileSync, readdirSync } = await import('node:fs');
    const path = await import('node:path');
    const spec = loadSpecFile(DEMO_SPEC);
    const total = makePlan(spec, 1).total;
    // "a few tens of thousands of points"
    expect(total).toBeGreaterThanOrEqual(10_000);
    expect(total).toBeLessThanOrEqual(60_000);
    expect(compileSpecConstraints(spec, DEMO_SPEC)!.columns).toEqual(['relic', 'lumen_si', 'lumen_sd', 'vesper_events', 'corvid_sigv']);
    const dir = path.dirname(DEMO_SPEC);
    expect(readFileSync(path.join(dir, 'README.md'), 'utf8')).toMatch(/INVENTED/);
    for (const f of readdirSync(path.join(dir, 'curves'))) expect(readFileSync(path.join(dir, 'curves', f), 'utf8'), f).toMatch(/^# INVENTED/);
  });
});
