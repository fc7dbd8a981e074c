/**
 * Speed of judging and querying a large ledger (targets: judge 1e6 points < 10 s, survivors query
 * < 1 s). The ledger is built with SQL inserts in the contract shape (tests/constraints/
 * ledger-fixture.ts); its values are invented.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import Database from 'better-sqlite3';
import { compileConstraints } from '../../scheduler/constraints/compile.js';
import { judgeScan } from '../../scheduler/constraints/judge.js';
import { contextFromLedger, findScan, scanColumns } from '../../scheduler/constraints/scan-context.js';
import { constraintsSchema } from '../../scheduler/constraints/schema.js';
import { survivorRows, writeRows } from '../../scheduler/survivors.js';
import { writeFixtureLedger } from '../constraints/ledger-fixture.js';

/** Wall and CPU seconds since a mark: CPU time shows the cost when other processes load the cores. */
interface Mark { readonly wall: number; readonly cpu: NodeJS.CpuUsage }
const mark = (): Mark => ({ wall: performance.now(), cpu: process.cpuUsage() });
function seconds(m: Mark): string {
  const cpu = process.cpuUsage(m.cpu);
  return `${((performance.now() - m.wall) / 1000).toFixed(2)} s wall, ${((cpu.user + cpu.system) / 1e6).toFixed(2)} s CPU`;
}

export async function benchConstraints(points = 1_000_000): Promise<{ lines: string[] }> {
  const lines: string[] = [];
  const dir = mkdtempSync(path.join(tmpdir(), 'darksieve-bench-constraints-'));
  try {
    const file = path.join(dir, 'ledger.db');
    let t0 = mark();
    const scanId = writeFixtureLedger(file, points);
    lines.push(`build ledger: ${points} points in ${seconds(t0)} (SQL inserts, contract shape)`);
    writeFileSync(path.join(dir, 'curve.csv'), 'm_chi [GeV], sigma [cm^2]\n10, 1e-45\n30, 1e-47\n100, 3e-47\n1000, 3e-46\n');
    const db = new Database(file);
    try {
      const scan = findScan(db);
      const list = constraintsSchema.parse([
        { kind: 'relic', rescale: true },
        { kind: 'limit_curve', observable: 'sigma_si_p_cm2', file: 'curve.csv', outOfRange: { below: 'pass', above: 'proportional' } },
        { kind: 'events_limit', detector: 'toyxe', observed: 3, background: 1 },
        { kind: 'flux_limit', target: 'gc', maxCm2s: 3e-11 },
        { kind: 'expression', expr: 'sigma_si_p_cm2 < 1e-46 * (m_chi / 100)' },
      ]);
      const { compiled } = compileConstraints(list, contextFromLedger(db, scan, dir));
      t0 = mark();
      const s = judgeScan(db, scanId, 'bench', compiled!);
      lines.push(`judge: ${s.points} points, 5 constraints, ${s.survivors} survive, ${seconds(t0)} (target < 10 s)`);

      const sink = (): void => {};
      const query = (label: string, where: string | undefined, limit: number | undefined): void => {
        t0 = mark();
        const { all: columns, numeric } = scanColumns(db, scan);
        const rows = survivorRows(db, { scanId, set: 'bench', columns, numeric, ...(where ? { where } : {}), ...(limit ? { limit } : {}) });
        const n = writeRows(columns, rows, 'csv', sink);
        lines.push(`survivors ${label}: ${n} rows in ${seconds(t0)}${limit || where ? ' (target < 1 s)' : ' (full export, no target)'}`);
      };
      query('first 50 (table default)', undefined, 50);
      query('--where "m_chi > 1500" --limit 50 (match near the end)', 'm_chi > 1500', 50);
      query('--where "m_chi > 1e9" (no match: full scan)', 'm_chi > 1e9', undefined);
      query('all survivors as CSV', undefined, undefined);
    } finally {
      db.close();
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  return { lines };
}
