/**
 * `darksieve point` end to end through the real launcher: JSON keys follow the design contract,
 * the readable table carries units, and bad input exits 2 naming the parameter and its range.
 */
import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { FIXED_OBSERVABLES } from '../../physics/observables.js';
import { PARAMETER_NAMES } from '../../physics/model.js';

const root = path.resolve(import.meta.dirname, '../..');
const cli = (...args: string[]) =>
  spawnSync(process.execPath, [path.join(root, 'bin/darksieve.mjs'), 'point', ...args], { encoding: 'utf8', timeout: 60_000 });

describe('darksieve point', () => {
  it('prints one JSON object keyed by the contract names', () => {
    const r = cli('--json', 'm_chi=100', 'm_med=1000', 'g_chi=1', 'g_q=0.25', 'mediator=vector', 'dm=dirac');
    expect(r.status, r.stderr).toBe(0);
    const obj = JSON.parse(r.stdout) as Record<string, unknown>;
    for (const name of [...PARAMETER_NAMES, ...FIXED_OBSERVABLES.map((o) => o.name), 'flags']) {
      expect(obj, `missing key ${name}`).toHaveProperty(name);
    }
    // LHC DM working-group vector benchmark width, Gamma/M = 5.63 % (shared notes indirect.md A3,
    // consistent with Boveia et al. 2016, arXiv:1603.04156, from memory)
    expect(obj.width_med_gev as number).toBeCloseTo(56.3, 0);
    expect(obj.omega_h2 as number).toBeGreaterThan(0);
    // x_f for weak-scale points lies in 18-30 (Kolb & Turner 1990, ch. 5, from memory; relic.md §6.1)
    expect(obj.x_f as number).toBeGreaterThan(18);
    expect(obj.x_f as number).toBeLessThan(30);
  });

  it('--sommerfeld multiplies the s-wave sigma v today by the halo-averaged factor, and flags it', async () => {
    const { maxwellSommerfeld } = await import('../../physics/indirect/sommerfeld.js');
    const { relativeVelocityScale } = await import('../../physics/indirect/velocity-average.js');
    const { DEFAULT_HALO } = await import('../../physics/setup.js');
    const args = ['--json', 'm_chi=1000', 'm_med=1', 'g_chi=0.3545', 'mediator=vector', 'dm=dirac'];
    const [on, off] = [cli('--sommerfeld', ...args), cli(...args)].map((r) => {
      expect(r.status, r.stderr).toBe(0);
      return JSON.parse(r.stdout) as { sigv0_cm3s: number; flags: string };
    });
    // s-wave pair annihilation: the ratio is <S> (tests/indirect/sommerfeld.test.ts checks <S> against mpmath)
    const s = maxwellSommerfeld(relativeVelocityScale(DEFAULT_HALO.galactic.sigmaVKmS), 0.3545 ** 2 / (4 * Math.PI), 1000, 1).mean;
    expect(on!.sigv0_cm3s / off!.sigv0_cm3s).toBeCloseTo(s, 3);
    expect(on!.flags).toContain('sommerfeld_hulthen');
    expect(off!.flags).not.toContain('sommerfeld');
  });

  it('--spec with photon-yield tables: the flux follows the tables and is no longer flagged approximate', async () => {
    const { mkdtempSync, writeFileSync, rmSync } = await import('node:fs');
    const { tmpdir } = await import('node:os');
    const dir = mkdtempSync(path.join(tmpdir(), 'darksieve-point-yields-'));
    try {
      // invented spectra for the test, not physics: the second has twice the photons of the first everywhere
      const spec = (scale: number) => ({
        name: 'yields', targets: [{ name: 'gc', kind: 'galactic_centre', coneDeg: 1, energyGeV: [1, null] }],
        indirect: { yieldTables: Object.fromEntries(['u', 'd', 's', 'c', 'b', 't'].map((q) => [q, [[0.001, 300 * scale], [0.1, 3 * scale], [1, 0.01 * scale]]])) },
      });
      const run = (scale: number) => {
        const file = path.join(dir, `spec-${scale}.json`);
        writeFileSync(file, JSON.stringify(spec(scale)));
        const r = cli('--json', '--spec', file, 'm_chi=100', 'm_med=1000', 'mediator=vector', 'dm=dirac');
        expect(r.status, r.stderr).toBe(0);
        return JSON.parse(r.stdout) as { flux_gc_cm2s: number; flags: string };
      };
      const [one, two] = [run(1), run(2)];
      expect(one.flux_gc_cm2s).toBeGreaterThan(0);
      expect(two.flux_gc_cm2s / one.flux_gc_cm2s).toBeCloseTo(2, 12);
      expect(one.flags).not.toContain('approximate_yields');
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('prints a readable table with units without --json', () => {
    const r = cli('mediator=axial', 'dm=majorana');
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/^m_chi\s+100\s+GeV$/m);
    expect(r.stdout).toMatch(/^sigv0_cm3s\s+\S+\s+cm\^3\/s$/m);
    expect(r.stdout).toMatch(/^flags\s+/m);
  });

  const bad: [string[], string, RegExp][] = [
    [['m_chi=NaN'], 'm_chi', /0\.01 <= m_chi <= 100000 GeV/],
    [['m_chi=-5'], 'm_chi', /0\.01 <= m_chi/],
    [['m_med=0'], 'm_med', /0\.001 <= m_med/],
    [['mediator=tensor'], 'mediator', /one of scalar, pseudoscalar, vector, axial/],
    [['g_chi=0'], 'g_chi', /0 < g_chi/],
    [['colour=3'], 'colour', /unknown parameter/],
    [['m_chi'], 'm_chi', /expected name=value/],
  ];
  it.each(bad)('rejects %j with exit 2 naming the parameter', (args, name, allowed) => {
    const r = cli('--json', ...args);
    expect(r.status).toBe(2);
    expect(r.stdout).toBe('');
    expect(r.stderr).toContain(name);
    expect(r.stderr).toMatch(allowed);
  });
});
