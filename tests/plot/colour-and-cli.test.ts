/**
 * Colour maps that survive greyscale printing and colour-vision deficiencies, and the `plot` and
 * `report` verbs through the real CLI (exit codes, nothing written on bad input).
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import * as Plot from '@observablehq/plot';
import { createContractLedger, insertPoints, insertVerdicts, type Row } from './contract-ledger.js';

/** Relative luminance of an sRGB colour (WCAG 2.1, definition of relative luminance; ITU-R BT.709 weights). */
function luminance(colour: string): number {
  const hex = /^#([0-9a-f]{2})([0-9a-f]{2})([0-9a-f]{2})$/i.exec(colour);
  const rgb = /^rgb\((\d+),\s*(\d+),\s*(\d+)\)$/.exec(colour);
  const channels = hex ? hex.slice(1).map((c) => parseInt(c, 16)) : rgb ? rgb.slice(1).map(Number) : null;
  if (!channels) throw new Error(`not an sRGB colour: ${colour}`);
  const lin = (c: number): number => {
    const v = c / 255;
    return v <= 0.04045 ? v / 12.92 : ((v + 0.055) / 1.055) ** 2.4;
  };
  return 0.2126 * lin(channels[0]!) + 0.7152 * lin(channels[1]!) + 0.0722 * lin(channels[2]!);
}

describe('colour maps', () => {
  // viridis and cividis are built so that lightness rises monotonically (cividis: Nunez, Anderton &
  // Renslow 2018, PLoS ONE 13, e0199239; viridis: from memory, the matplotlib 2.0 default map);
  // checked here on the colours Plot actually emits rather than taken on trust.
  for (const scheme of ['viridis', 'cividis'] as const) {
    it(`${scheme} rises monotonically in luminance, so it reads in greyscale`, () => {
      const scale = Plot.scale({ color: { type: 'linear', scheme, domain: [0, 1] } });
      const lum = Array.from({ length: 41 }, (_, i) => luminance(String(scale.apply(i / 40))));
      for (let i = 1; i < lum.length; i++) {
        expect(lum[i]!, `${scheme} at t=${i / 40}: luminance ${lum[i]} after ${lum[i - 1]}`).toBeGreaterThan(lum[i - 1]!);
      }
      expect(lum[40]! / lum[0]!).toBeGreaterThan(10);
    });
  }
});

describe('darksieve plot and report on the command line', () => {
  let dir: string;
  let db: string;
  const cli = (...args: string[]) =>
    spawnSync(process.execPath, [path.resolve('bin/darksieve.mjs'), ...args], { encoding: 'utf8', timeout: 60_000 });

  beforeAll(() => {
    dir = fs.mkdtempSync(path.join(os.tmpdir(), 'darksieve-plot-cli-'));
    db = path.join(dir, 'cli.db');
    const rows: Row[] = Array.from({ length: 40 }, (_, k) => ({ m_chi: 10 * 1.2 ** k, m_med: 500, omega_h2: 0.01 * 1.15 ** k, sigma_si_p_cm2: 1e-46 * 1.3 ** k }));
    const h = createContractLedger(db, { name: 'cli scan' });
    insertPoints(h, rows);
    insertVerdicts(h, 'default', ['relic', 'direct'], rows.length, (c, id) => (c === 'relic' ? id < 30 : id > 5));
    h.close();
  });
  afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

  // each CLI start costs a fraction of a second (more on a loaded machine): two starts only;
  // the other bad inputs are covered through writePlot / writeReport in plot.test.ts and report.test.ts
  it('exits 2 naming the field on bad input and writes nothing', () => {
    const out = path.join(dir, 'bad.svg');
    const r = cli('plot', db, '--x', 'm_chi', '--y', 'sigma', '--color', 'omega_h2', '--fix', 'm_med=abc', '--out', out);
    expect(r.status, r.stderr).toBe(2);
    expect(r.stderr).toContain('--y');
    expect(r.stderr).toContain('--fix');
    expect(r.stderr).toContain('sigma_si_p_cm2');
    expect(fs.readdirSync(dir).filter((f) => f.startsWith('bad'))).toEqual([]);
  });

  it('writes a PNG and says what it wrote', () => {
    const out = path.join(dir, 'ok.png');
    const r = cli('plot', db, '--x', 'm_chi', '--y', 'sigma_si_p_cm2', '--color', 'omega_h2', '--fix', 'm_med=480', '--out', out, '--json');
    expect(r.status, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout)).toMatchObject({ file: out, format: 'png', mode: 'scatter', drawnPoints: 40 });
    expect(fs.readFileSync(out).readUInt32BE(16)).toBe(1440);
  });
});
