/**
 * The planes every scan report shows: sigma_SI,p, <sigma v> today, the coupling and the mediator
 * mass, each against m_chi, coloured by Omega h^2. The coupling shown is the first of g_chi, g_q,
 * g_l that varies in the scan (g_chi when none does). A plane whose columns the scan lacks, or
 * holds only NULL in, is listed as skipped with the reason.
 */
import type { LedgerView } from '../plot/ledger-view.js';
import { quoteId } from '../ledger.js';
import { labelText } from '../plot/notation.js';

export interface PlaneChoice {
  readonly heading: string;
  readonly x: string;
  readonly y: string;
  readonly color?: string;
}

const COUPLINGS = ['g_chi', 'g_q', 'g_l'] as const;

export function standardPlanes(view: LedgerView, scanId: number): { planes: PlaneChoice[]; skipped: string[] } {
  const numeric = new Set(view.numericColumns(scanId));
  const range = (c: string): { n: number; lo: number | null; hi: number | null } =>
    view.db.prepare(`SELECT COUNT(${quoteId(c)}) AS n, MIN(${quoteId(c)}) AS lo, MAX(${quoteId(c)}) AS hi FROM points WHERE scan_id = ?`).get(scanId) as { n: number; lo: number | null; hi: number | null };
  const coupling = COUPLINGS.find((g) => numeric.has(g) && (() => { const r = range(g); return r.lo !== r.hi; })()) ?? 'g_chi';
  const color = numeric.has('omega_h2') && range('omega_h2').n > 0 ? 'omega_h2' : undefined;
  const wanted: PlaneChoice[] = [
    { heading: 'Spin-independent DM-proton cross section', x: 'm_chi', y: 'sigma_si_p_cm2', color },
    { heading: 'Annihilation cross section today', x: 'm_chi', y: 'sigv0_cm3s', color },
    { heading: `Coupling ${labelText(coupling)}`, x: 'm_chi', y: coupling, color },
    { heading: 'Mediator mass', x: 'm_chi', y: 'm_med', color },
  ];
  const planes: PlaneChoice[] = [];
  const skipped: string[] = [];
  for (const p of wanted) {
    const missing = [p.x, p.y].filter((c) => !numeric.has(c) || range(c).n === 0);
    if (missing.length) skipped.push(`${p.heading}: no values of ${missing.join(', ')} in this scan`);
    else planes.push(p);
  }
  return { planes, skipped };
}
