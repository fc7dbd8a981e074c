/**
 * The scan commands through the real CLI (`node bin/darksieve.mjs`) on real physics and real SQLite
 * files: SIGKILL/SIGINT at chosen moments then resume equals an uninterrupted run bit for bit (and the
 * uninterrupted reference ran on 1 worker with another chunk size, the trials on 2), `status --json`
 * while a run writes, bad input exits 2 naming the field and leaves the ledger unchanged, `check`.
 * CLI start-up dominates the time of this file, so each spawned run is made to count.
 */
import { readFileSync, readdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TRIAL_CHUNKS, TRIAL_POINTS, TRIAL_SPEC, killMoments, killTrial, referenceRows, stableTrial, type Reference } from './kill-trials.js';
import { pointRows, query, runCli, tempDir, writeSpec } from './helpers.js';
import { baseSpec } from './malformed-specs.js';

let tmp: ReturnType<typeof tempDir>;
let specFile: string;
let reference: Reference;

beforeAll(async () => {
  tmp = tempDir();
  specFile = writeSpec(tmp.dir, 'trial.json', TRIAL_SPEC);
  reference = await referenceRows(specFile, tmp.dir);
  expect(reference.rows.length).toBe(TRIAL_POINTS);
});
afterAll(() => tmp.cleanup());

describe('darksieve run through the CLI', () => {
  it('SIGKILL at two moments, then resume: rows equal the uninterrupted run bit for bit', async () => {
    for (const [i, k] of killMoments(2, 20261202).entries()) {
      const db = path.join(tmp.dir, `kill-${i}.db`);
      let attempt = 0;
      const run = await stableTrial(specFile, tmp.dir, reference, () => killTrial(specFile, `${db}.${attempt++}`, k, 'SIGKILL'));
      reference = run.reference;
      const r = run.result;
      const at = `trial ${i}, killed after ${r.killedAfterChunks} chunks (target ${k})`;
      expect(r.cli.signal, `${at}: ${r.cli.stderr}`).toBe('SIGKILL');
      expect(r.resumed.status, at).toBe('done');
      expect(r.resumed.pointsThisRun, at).toBeLessThanOrEqual(TRIAL_POINTS - 20 * Math.max(0, r.killedAfterChunks ?? 0));
      expect(r.rows, at).toEqual(reference.rows);
      const integrity = query<{ integrity_check: string }>(`${db}.${attempt - 1}`, 'PRAGMA integrity_check');
      expect(integrity[0]!.integrity_check, at).toBe('ok');
    }
  });

  it('status --json while the run writes; SIGINT then finishes the chunks in flight, says how to resume, and the resumed scan is identical', async () => {
    const db = path.join(tmp.dir, 'sigint.db');
    let status: { code: number | null; json: { scans: Record<string, unknown>[] }; stderr: string } | null = null;
    // the run is paused (SIGSTOP) mid-scan with the ledger open for writing while status reads it,
    // so the reading happens during the run however slow the status command starts
    let attempt = 0;
    const run = await stableTrial(specFile, tmp.dir, reference, () => killTrial(specFile, `${db}.${attempt++}`, 5, 'SIGINT', async (child) => {
      child.kill('SIGSTOP');
      try {
        const st = await runCli(['status', `${db}.${attempt - 1}`, '--json']);
        status = { code: st.code, json: st.code === 0 ? (JSON.parse(st.stdout) as { scans: Record<string, unknown>[] }) : { scans: [] }, stderr: st.stderr };
      } finally {
        child.kill('SIGCONT');
      }
    }));
    reference = run.reference;
    const r = run.result;
    const used = `${db}.${attempt - 1}`;
    expect(status).not.toBeNull();
    const seen = status!;
    expect(seen.code, seen.stderr).toBe(0);
    const scan = seen.json.scans[0]!;
    expect(scan).toMatchObject({ id: 1, name: 'trial', status: 'running', points_total: TRIAL_POINTS, chunks_total: TRIAL_CHUNKS });
    expect(scan.points_done as number).toBeGreaterThanOrEqual(5 * 20);
    expect(r.killedAfterChunks).not.toBeNull();
    expect(r.cli.code, r.cli.stderr).toBe(1);
    expect(r.cli.stdout).toMatch(/interrupted/);
    expect(r.cli.stdout).toContain(`resume with: darksieve run ${specFile} --db ${used} --workers 2`);
    expect(r.rows).toEqual(reference.rows);
  });

  it('a new scan without --chunk (calibrated on real points, which are then not evaluated again) equals the reference bit for bit', async () => {
    const db = path.join(tmp.dir, 'calibrated.db');
    let attempt = 0;
    const run = await stableTrial(specFile, tmp.dir, reference, async () => {
      const file = `${db}.${attempt++}`;
      const cli = await runCli(['run', specFile, '--db', file, '--workers', '2', '--quiet']);
      return { cli, rows: cli.code === 0 ? pointRows(file) : [] };
    });
    reference = run.reference;
    expect(run.result.cli.code, run.result.cli.stderr).toBe(0);
    // the spread rule (8 chunks per worker) or the time rule set the size, never the reference's 450
    expect(query<{ chunk_size: number }>(`${db}.${attempt - 1}`, 'SELECT chunk_size FROM scans')[0]!.chunk_size).toBeLessThanOrEqual(TRIAL_POINTS / 16);
    expect(run.result.rows).toEqual(reference.rows);
  });

  it('bad input exits 2 naming every field and leaves an existing ledger byte for byte', async () => {
    const db = path.join(tmp.dir, readdirSync(tmp.dir).find((f) => /^reference-.*\.db$/.test(f))!);
    const before = readFileSync(db);
    const bad = baseSpec();
    bad.name = 'trial';
    bad.axes.m_chi.from = -3;
    bad.detectors[0].name = 'Bad Name';
    bad.sampling = { kind: 'sobol' };
    const badFile = path.join(tmp.dir, 'bad.json');
    writeFileSync(badFile, JSON.stringify(bad));
    const r = await runCli(['run', badFile, '--db', db]);
    expect(r.code).toBe(2);
    for (const field of ['axes.m_chi.from', 'detectors[0].name', 'sampling.kind']) expect(r.stderr).toContain(field);
    expect(readFileSync(db).equals(before)).toBe(true);

    // a changed spec under the same name is refused in-process too (run.test.ts)
  });

  it('check prints the plan and a time estimate from real points, writing nothing', async () => {
    const r = await runCli(['check', specFile, '--workers', '2', '--chunk', '20', '--json'], { cwd: tmp.dir });
    expect(r.code, r.stderr).toBe(0);
    const plan = JSON.parse(r.stdout) as Record<string, unknown>;
    expect(plan).toMatchObject({ name: 'trial', points: TRIAL_POINTS, chunk_size: 20, chunks: TRIAL_CHUNKS, workers: 2 });
    expect((plan.calibration as { ms_per_point: number }).ms_per_point).toBeGreaterThan(0);
    expect(plan.estimated_s as number).toBeGreaterThan(0);
    expect(plan.axes).toEqual(['mediator: 2 values (vector, scalar)', 'm_chi: 5 .. 3000 (log, 40 steps)', 'm_med: 10 .. 5000 (log, 40 steps)']);
  });

  it('check prints the J-factor of each target region (cone, ring, offset cone) as the independent scipy fixtures give them', async () => {
    const galactic = JSON.parse(readFileSync(new URL('../fixtures/indirect/jfactor-galactic.json', import.meta.url), 'utf8')) as { cases: { label: string; coneDeg: number; jGeV2cm5: number }[] };
    const offset = JSON.parse(readFileSync(new URL('../fixtures/indirect/jfactor-offset.json', import.meta.url), 'utf8')) as { cases: { coneDeg: number; offsetDeg: number; jGeV2cm5: number }[] };
    const cone = (deg: number) => galactic.cases.find((c) => c.label.includes('notes baseline') && c.coneDeg === deg)!.jGeV2cm5;
    // the fixtures' halo: NFW r_s = 20 kpc, R0 = 8.5 kpc, rho0 = 0.3 GeV/cm^3, out to 200 kpc
    const regions = writeSpec(tmp.dir, 'regions.json', {
      ...TRIAL_SPEC, name: 'regions',
      halo: { galactic: { profile: { kind: 'nfw', rsKpc: 20 }, r0Kpc: 8.5, rhoLocalGeVcm3: 0.3 } },
      targets: [
        { name: 'cone', kind: 'galactic_centre', coneDeg: 1, energyGeV: [1, 100] },
        { name: 'ring', kind: 'galactic_centre', coneDeg: 1, innerDeg: 0.1, energyGeV: [1, 100] },
        { name: 'off', kind: 'galactic_centre', coneDeg: 1, offsetDeg: 3, energyGeV: [1, 100] },
      ],
    });
    const r = await runCli(['check', regions, '--chunk', '200', '--json'], { cwd: tmp.dir });
    expect(r.code, r.stderr).toBe(0);
    const j = (JSON.parse(r.stdout) as { j_factors_gev2_cm5: Record<string, number> }).j_factors_gev2_cm5;
    // 1e-6 as in tests/indirect/jfactor.test.ts
    const close = (got: number, want: number) => expect(Math.abs(got / want - 1), `${got} vs ${want}`).toBeLessThan(1e-6);
    close(j.cone!, cone(1));
    close(j.ring!, cone(1) - cone(0.1));
    close(j.off!, offset.cases.find((c) => c.coneDeg === 1 && c.offsetDeg === 3)!.jGeV2cm5);
  });
});
