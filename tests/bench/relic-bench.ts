/**
 * Relic-stage speed and numerical accuracy (physics/relic/relic.ts).
 *
 * Points: a mixed set of toy cross sections (constant s-wave, p-wave, s+p, Breit-Wigner poles just
 * above and below 2m (0.5% below: listed in subthresholdPoles), narrow pole, a channel opening above threshold, masses 1 GeV-10 TeV), plus
 * real simplified-model points from physics/annihilation.ts (scalar, pseudoscalar, vector, axial;
 * on and off resonance, top threshold) and eight points of the point-bench grid (gridPoints). Speed: relicAbundance calls per CPU second (process.cpuUsage), each
 * call including its own thermal-average table. Accuracy: max relative deviation of Omega h^2 from
 * the same code at much tighter knobs.
 */
import type { Annihilation } from '../../physics/annihilation-model.js';
import { buildAnnihilation } from '../../physics/annihilation.js';
import { GEV2_TO_CM3S } from '../../physics/constants.js';
import type { DmKind, ModelPoint } from '../../physics/model.js';
import { relicAbundance, type RelicKnobs } from '../../physics/relic/relic.js';
import { mediatorWidth } from '../../physics/widths.js';
import { betaOf, pwave, resonance, toyAnnihilation } from '../relic/toy-annihilation.js';

/** tight knobs: the reference for the accuracy figure */
const TIGHT: Partial<RelicKnobs> = {
  laguerreNodes: 48, tMax: 100, quadRelTol: 1e-11, gridNodes: 16, tableNodesPerDecade: 60, tableRelTol: 1e-9, tableXMin: 2, stepX: 0.01, equilibriumCut: 1e-7, tailPanelWidth: 0.02,
};

interface BenchPoint {
  readonly name: string;
  readonly ann: Annihilation;
  readonly dm: DmKind;
}

function toyPoints(): BenchPoint[] {
  const out: BenchPoint[] = [];
  const sw = (m: number, svCm3s: number): Annihilation => {
    const c = svCm3s / GEV2_TO_CM3S;
    return toyAnnihilation({ mChiGeV: m, sigma: (s) => { const b = betaOf(m, s); return (c * (1 + b * b)) / (2 * b); } });
  };
  for (const m of [1, 10, 100, 1000, 1e4]) out.push({ name: `s-wave m=${m}`, ann: sw(m, 2.2e-26), dm: 'majorana' });
  for (const m of [10, 100, 3000]) out.push({ name: `p-wave m=${m}`, ann: pwave(m, 2e-8), dm: 'majorana' });
  out.push({ name: 's+p m=300', ann: toyAnnihilation({ mChiGeV: 300, sigma: (s) => { const b = betaOf(300, s); return (1e-9 + 8e-9 * b * b) / (2 * b); } }), dm: 'dirac' });
  out.push({ name: 'pole M=2.1m G=1', ann: resonance(100, 6.77044e-8, 210, 1), dm: 'majorana' });
  out.push({ name: 'pole M=2.01m G/M=1e-4', ann: resonance(500, 3e-7, 1005, 0.1005), dm: 'majorana' });
  out.push({ name: 'pole M=2.5m G/M=0.1', ann: resonance(50, 5e-8, 125, 12.5), dm: 'dirac' });
  out.push({ name: 'pole below threshold M=1.9m', ann: resonance(100, 3e-7, 190, 2), dm: 'majorana' });
  out.push({ name: 'pole 0.5% below threshold M=1.99m', ann: resonance(100, 1e-8, 199, 0.5), dm: 'majorana' });
  const mf = 105;
  out.push({
    name: 'threshold at 1.05m',
    ann: toyAnnihilation({ mChiGeV: 100, thresholdsGeV: [2 * mf], sigma: (s) => { const b = betaOf(100, s); const bf = Math.sqrt(Math.max(0, 1 - (4 * mf * mf) / s)); return (2e-10 + 3e-8 * bf) / (2 * b); } }),
    dm: 'majorana',
  });
  return out;
}

function realPoints(): BenchPoint[] {
  const base: Omit<ModelPoint, 'mediator' | 'm_chi' | 'm_med'> = { dm: 'dirac', g_chi: 1, g_q: 0.25, g_l: 0, width_med: null };
  const specs: [ModelPoint['mediator'], number, number, DmKind][] = [
    ['vector', 100, 1000, 'dirac'], ['vector', 480, 1000, 'dirac'], ['axial', 300, 1500, 'majorana'],
    ['axial', 200, 100, 'dirac'], ['scalar', 150, 500, 'dirac'], ['pseudoscalar', 200, 395, 'majorana'],
    ['scalar', 60, 1000, 'majorana'], ['vector', 1000, 2100, 'dirac'],
  ];
  return specs.map(([mediator, mChi, mMed, dm]) => {
    const point: ModelPoint = { ...base, mediator, m_chi: mChi, m_med: mMed, dm, g_q: mediator === 'scalar' || mediator === 'pseudoscalar' ? 1 : 0.25 };
    const width = mediatorWidth(point).totalGeV;
    return { name: `${mediator} ${dm} m=${mChi} M=${mMed}`, ann: buildAnnihilation(point, width), dm };
  });
}

/**
 * Points of the point-bench grid (tests/bench/point-bench.ts: g_chi = 1, g_q = 0.25, m_chi = 10 10^(i/4),
 * m_med = 20 10^(j/4)) from the kinds that carry its relic time: relativistic freeze-out with a heavy
 * mediator, mediators within 0.05% of 2 m_chi (above, at and below), open mediator-pair channels and
 * the top threshold just above 2 m_chi.
 */
function gridPoints(): BenchPoint[] {
  const mChi = (i: number): number => 10 * 10 ** (i / 4);
  const mMed = (j: number): number => 20 * 10 ** (j / 4);
  const specs: [ModelPoint['mediator'], number, number, DmKind][] = [
    ['scalar', 1, 10, 'dirac'], // m 17.8, M 6325: x_f ~ 2.6
    ['vector', 5, 5, 'dirac'], // m 177.8, M 355.7 = 2.0005 m
    ['pseudoscalar', 6, 6, 'majorana'], // m 316.2, M 632.5 = 2.0003 m
    ['axial', 8, 8, 'majorana'], // m 1000, M 2000 = 2 m
    ['vector', 7, 4, 'dirac'], // m 562.3, M 200: vector pair channel
    ['scalar', 4, 2, 'majorana'], // m 100, M 63.2: scalar pair channel
    ['axial', 3, 1, 'dirac'], // m 56.2, M 35.6: axial pair channel (longitudinal modes)
    ['scalar', 4, 7, 'dirac'], // m 100, M 1125: top threshold at t = 1.45 x
  ];
  return specs.map(([mediator, i, j, dm]) => {
    const point: ModelPoint = { dm, mediator, m_chi: mChi(i), m_med: mMed(j), g_chi: 1, g_q: 0.25, g_l: 0, width_med: null };
    const width = mediatorWidth(point).totalGeV;
    return { name: `grid ${mediator} ${dm} m=${point.m_chi.toPrecision(4)} M=${point.m_med.toPrecision(4)}`, ann: buildAnnihilation(point, width), dm };
  });
}

export async function benchRelic(): Promise<{ pointsPerSecond: number; maxRelError: number; lines: string[] }> {
  const points = [...toyPoints(), ...realPoints(), ...gridPoints()];
  const lines: string[] = [];
  let maxRelError = 0;
  for (const p of points) {
    const fast = relicAbundance(p.ann, p.dm);
    const tight = relicAbundance(p.ann, p.dm, TIGHT);
    const err = Math.abs(fast.omegaH2 / tight.omegaH2 - 1);
    maxRelError = Math.max(maxRelError, err);
    lines.push(`  ${p.name.padEnd(40)} Omega h^2 ${fast.omegaH2.toPrecision(6)}  x_f ${fast.xF.toFixed(2)}  rel.err vs tight ${err.toExponential(1)}${fast.flags.length ? `  [${fast.flags.join(',')}]` : ''}`);
  }
  // warm-up, then timing over repeated passes of the whole mixed set
  for (let i = 0; i < 3; i++) for (const p of points) relicAbundance(p.ann, p.dm);
  // CPU time of this process (user + system): on a loaded machine wall time mostly measures the
  // other processes
  const cpuSeconds = (): number => {
    const u = process.cpuUsage();
    return (u.user + u.system) / 1e6;
  };
  // whole passes over the set until at least minSeconds of CPU time: short windows are dominated by
  // the collection of the tight runs' garbage and by late compilation
  const cpuPerPoint = (subset: BenchPoint[], minSeconds: number): { seconds: number; wall: number } => {
    const t = cpuSeconds();
    const w = performance.now();
    let n = 0;
    while (cpuSeconds() - t < minSeconds) {
      for (const p of subset) relicAbundance(p.ann, p.dm);
      n += subset.length;
    }
    return { seconds: (cpuSeconds() - t) / n, wall: (performance.now() - w) / 1000 / n };
  };
  const all = cpuPerPoint(points, 3);
  const pointsPerSecond = 1 / all.seconds;
  const perKind = (subset: BenchPoint[]): number => cpuPerPoint(subset, 0.5).seconds * 1e6;
  const toys = toyPoints();
  lines.unshift(
    `relic: ${points.length} mixed points, ${pointsPerSecond.toFixed(0)} points/s per core (CPU time; wall ${(1 / all.wall).toFixed(0)}), max |Omega/Omega_tight - 1| = ${maxRelError.toExponential(2)}`,
    `  per point (CPU): s-wave ${perKind(toys.slice(0, 5)).toFixed(0)} us, p-wave ${perKind(toys.slice(5, 8)).toFixed(0)} us, poles/threshold ${perKind(toys.slice(9)).toFixed(0)} us, real models ${perKind(realPoints()).toFixed(0)} us, grid models ${perKind(gridPoints()).toFixed(0)} us`,
  );
  return { pointsPerSecond, maxRelError, lines };
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const r = await benchRelic();
  process.stdout.write(`${r.lines.join('\n')}\n`);
}
