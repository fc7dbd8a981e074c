/**
 * A small ledger whose observables come from the real physics (physics/evaluate.ts) and whose
 * verdicts come from the real judge (scheduler/constraints), written in the ledger contract shape.
 * Used by the report test so that the page shows results, not made-up numbers. The limit curve is
 * invented for the test and labelled so.
 */
import fs from 'node:fs';
import path from 'node:path';
import Database from 'better-sqlite3';
import { prepare, evaluate } from '../../physics/evaluate.js';
import { EMPTY_SETUP } from '../../physics/setup.js';
import { parsePoint } from '../../physics/model.js';
import { CONSTANTS_EDITION } from '../../physics/constants.js';
import { constraintsSchema } from '../../scheduler/constraints/schema.js';
import { compileConstraints } from '../../scheduler/constraints/compile.js';
import { judgeScan, type JudgeSummary } from '../../scheduler/constraints/judge.js';
import { createContractLedger, insertPoints, type Row } from './contract-ledger.js';

export const M_CHI_GEV = Array.from({ length: 10 }, (_, i) => 10 ** (1 + (2.3 * i) / 9));
export const M_MED_GEV = Array.from({ length: 8 }, (_, j) => 10 ** (1.7 + (2.6 * j) / 7));

/** Builds the ledger (Dirac fermion, vector mediator, g_chi = 1, g_q = 0.25) and judges it. */
export function buildPhysicsLedger(dir: string): { file: string; summary: JudgeSummary; rows: Row[] } {
  const file = path.join(dir, 'physics.db');
  const csv = path.join(dir, 'invented-si-limit.csv');
  fs.writeFileSync(csv, '# INVENTED limit curve for tests (no experiment)\nm_chi [GeV], sigma_si_p [cm^2]\n10, 1e-40\n10000, 1e-40\n');
  const spec = {
    name: 'vector mediator grid (test)',
    model: { dm: 'dirac', mediator: 'vector', g_chi: 1, g_q: 0.25 },
    constraints: [
      { kind: 'relic', name: 'relic' },
      { kind: 'limit_curve', name: 'invented_si', observable: 'sigma_si_p_cm2', versus: 'm_chi', file: csv, outOfRange: 'pass' },
    ],
  };
  const prepared = prepare(EMPTY_SETUP);
  const rows: Row[] = [];
  for (const mMed of M_MED_GEV) {
    for (const mChi of M_CHI_GEV) {
      const { point } = parsePoint({ dm: 'dirac', mediator: 'vector', m_chi: mChi, m_med: mMed, g_chi: 1, g_q: 0.25 });
      if (!point) throw new Error(`test grid point rejected: m_chi=${mChi} m_med=${mMed}`);
      const obs = evaluate(point, prepared);
      const values: Record<string, number | null> = {};
      for (const [k, v] of Object.entries(obs.values)) values[k] = Number.isFinite(v) ? v : null;
      rows.push({ ...values, m_chi: mChi, m_med: mMed, g_chi: 1, g_q: 0.25, g_l: 0, width_med: null, flags: obs.flags });
    }
  }
  const db = createContractLedger(file, { name: spec.name, spec, constraints: [] });
  db.prepare('UPDATE scans SET constants_edition = ?, code_version = ? WHERE id = 1').run(CONSTANTS_EDITION, 'test-physics');
  insertPoints(db, rows);
  db.close();
  const judged = new Database(file);
  try {
    const constraints = constraintsSchema.parse(spec.constraints);
    const ctx = {
      parameters: ['m_chi', 'm_med', 'g_chi', 'g_q', 'g_l'],
      observables: Object.keys(rows[0] ?? {}).filter((k) => !['m_chi', 'm_med', 'g_chi', 'g_q', 'g_l', 'width_med', 'flags'].includes(k)),
      rhoLocalGeVcm3: 0.3, baseDir: dir,
    };
    const { compiled, issues } = compileConstraints(constraints, ctx);
    if (!compiled) throw new Error(`test constraints do not compile: ${JSON.stringify(issues)}`);
    return { file, summary: judgeScan(judged, 1, 'test', compiled), rows };
  } finally {
    judged.close();
  }
}
