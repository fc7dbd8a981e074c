/**
 * Thermal average <sigma v>(x) for many x from one sampling of sigma(s) per model point.
 *
 * What: the Gondolo-Gelmini integral (Gondolo & Gelmini 1991, Nucl. Phys. B360, 145; shared notes
 * relic.md eq. 2.3) written in delta = sqrt(s) - 2m (GeV) with r = x/m = 1/T:
 *
 *   <sigma v>(x) = r / (4 m^4 K~_2(x)^2) int_0^inf sigma(E^2) (E^2 - 4m^2) E^2 K~_1(E r) e^{-delta r} d delta,
 *
 * E = 2m + delta, K~ = e^z K(z). sigma enters only through sigma(E^2) (E^2 - 4m^2) E^2, which does not
 * depend on x; so one composite Gauss-Legendre rule in delta, fixed per model point, serves every x
 * of the <sigma v> table: sigma is sampled once at its nodes, and each x costs only the kernel
 * K~_1(E r) e^{-delta r} at the nodes with delta r below tMax (no sigma calls, no allocation).
 *
 * Method: the pieces of [0, delta_max] (delta_max = tMax m / xLow) are graded geometrically, ratio 2,
 * towards every point where the integrand is not smooth, as in hp quadrature (Babuska & Guo 1986;
 * Schwab 1998, p- and hp-FEM, §4 [memory]): the square-root edge at delta = 0 and at each channel
 * threshold (first piece FIRST_PIECE_T / xHigh in t = delta r wide, mapped by delta = a + (b-a) u^2
 * to remove the edge), and the complex singularities delta_p +- i gamma of each s-channel pole
 * (sqrt(s) = M sqrt(1 +- i Gamma/M), first pieces gamma wide on each side of delta_p). The union of
 * the breakpoints keeps every piece no longer than its distance to any singularity, so Gauss-Legendre
 * on it converges geometrically (Bernstein ellipse rho >= 3 + 2 sqrt 2 away from the first pieces,
 * ~4.6 beside a pole). The grading from delta = 0 also keeps each piece no longer than its own start,
 * which bounds the e^{-delta r} factor at every x: by the Gauss error term (Davis & Rabinowitz 1984,
 * §2.7 [memory]) an 8-point rule on [a, 2a] in t integrates e^{-t} to < 1e-9 of the total whatever
 * a is (5 points: measured ~1e-7, see Accuracy).
 * A pole just below threshold (Annihilation.subthresholdPoles) narrows the first piece to its
 * distance from threshold, so the ratio-2 grading from 0 also resolves it.
 *
 * Channel thresholds are graded on their upper side only (sigma is analytic below an opening
 * channel), from a first piece max(first, delta_k / tMax) wide (the thermal scale wherever the
 * threshold lies within tMax). Callers pass as xHigh the largest x at which they use the grid.
 *
 * Validity: x in [xLow, xHigh] (nodes are placed for that range); equal masses, Maxwell-Boltzmann,
 * kinetic equilibrium as in thermal-average.ts. Accuracy: against the adaptive direct path at tight
 * knobs over the 22 bench points and x in [3, 1e4], max 8.8e-8 at 5 nodes per piece (the default),
 * 2e-6 at 4, 1e-11 at 8; within 1e-6 of scipy quad of eq. 2.1 on the relic fixtures
 * (tests/relic/thermal-average.test.ts).
 */
import type { Annihilation } from '../annihilation-model.js';
import { ASYMPTOTIC_Z_MIN, besselK1Scaled, besselK2Scaled, LARGE_Z_MIN, sqrtZK1ScaledAsymptotic, sqrtZK1ScaledOfInverse } from '../numerics/bessel.js';
import { gaussLegendre } from '../numerics/quadrature.js';

/** width of the first piece at a square-root edge, in t = delta x at x = xHigh */
const FIRST_PIECE_T = 0.5;
/** ratio of successive piece lengths away from a singular point */
const GRADING = 2;

/**
 * sigma(s) sampled once per model point on a graded rule in delta = sqrt(s) - 2m. Plain arrays of
 * numbers, not typed arrays: a typed array above 64 bytes costs ~1 us to allocate (off-heap backing
 * store) and a grid had six; element reads are as fast.
 */
export interface EnergyGrid {
  readonly mChiGeV: number;
  /** node positions delta_i (GeV), ascending */
  readonly delta: readonly number[];
  /** w_i sigma(E_i^2) (E_i^2 - 4m^2) E_i^2 / sqrt(E_i) (GeV^4 x GeV^-2 x GeV x GeV^-1/2) */
  readonly weight: readonly number[];
  /** 1/E_i (GeV^-1) */
  readonly inverseE: readonly number[];
  /** left end of each piece (GeV), ascending */
  readonly pieceLeft: readonly number[];
  /** index of the first node of each piece; pieceStart[pieces] = number of nodes */
  readonly pieceStart: readonly number[];
}

/** Real part delta_p and imaginary part gamma of the pole singularity in delta (GeV). */
export function poleInDelta(mChiGeV: number, massGeV: number, widthGeV: number, out: Float64Array): void {
  const g = widthGeV / massGeV;
  // sqrt(1 + i g) = re + i im
  const re = Math.sqrt(0.5 * (Math.sqrt(1 + g * g) + 1));
  out[0] = massGeV * re - 2 * mChiGeV;
  out[1] = massGeV * (g / (2 * re));
}

/**
 * Samples sigma on the graded rule for x in [xLow, xHigh]: nodesPerPiece Gauss-Legendre nodes on
 * each piece of [0, tMax m / xLow].
 */
export function buildEnergyGrid(ann: Annihilation, xLow: number, xHigh: number, tMax: number, nodesPerPiece: number): EnergyGrid {
  const m = ann.mChiGeV;
  const deltaMax = (tMax * m) / xLow;
  const pole = new Float64Array(2);
  let first = (FIRST_PIECE_T * m) / xHigh;
  for (const p of ann.subthresholdPoles ?? []) {
    if (!(p.massGeV > 0) || !(p.widthGeV >= 0)) continue;
    poleInDelta(m, p.massGeV, p.widthGeV, pole);
    // the singularity lies at distance |delta_p + i gamma| from the threshold edge
    const distance = Math.hypot(pole[0]!, pole[1]!);
    if (distance > 0) first = Math.min(first, distance);
  }
  const cuts: number[] = [0, deltaMax];
  const edges: number[] = [0];
  graded(cuts, deltaMax, 0, first, false);
  for (const e of ann.thresholdsGeV) {
    const d = e - 2 * m;
    if (!(d > 0 && d < deltaMax)) continue;
    edges.push(d);
    cuts.push(d);
    // sigma is analytic below an opening channel (the channel is absent there), so only the side
    // above is graded; the threshold matters only while d r < tMax, where the thermal scale 1/r
    // exceeds d / tMax, so the first piece need not be narrower than that
    graded(cuts, deltaMax, d, Math.max(first, d / tMax), false);
  }
  for (const p of ann.poles) {
    if (!(p.massGeV > 2 * m) || !(p.widthGeV > 0)) continue;
    poleInDelta(m, p.massGeV, p.widthGeV, pole);
    const dp = pole[0]!;
    if (!(dp - pole[1]! < deltaMax)) continue;
    if (dp > 0 && dp < deltaMax) cuts.push(dp);
    graded(cuts, deltaMax, dp, pole[1]!, true);
  }
  const sorted = cuts.sort(ascending);
  const left: number[] = [];
  const right: number[] = [];
  for (let i = 0; i + 1 < sorted.length; i++) {
    if (sorted[i + 1]! > sorted[i]!) {
      left.push(sorted[i]!);
      right.push(sorted[i + 1]!);
    }
  }
  const rule = gaussLegendre(nodesPerPiece);
  const pieces = left.length;
  const delta: number[] = [];
  const weight: number[] = [];
  const inverseE: number[] = [];
  const pieceStart: number[] = [];
  const edgeSet = new Set(edges);
  let k = 0;
  for (let p = 0; p < pieces; p++) {
    pieceStart.push(k);
    const a = left[p]!;
    const len = right[p]! - a;
    const edge = edgeSet.has(a);
    for (let j = 0; j < nodesPerPiece; j++) {
      const u = 0.5 * (1 + rule.nodes[j]!);
      // square-root edge at a: delta = a + len u^2, d delta = 2 len u du, du = d xi / 2
      const d = edge ? a + len * u * u : a + len * u;
      const w = edge ? len * u * rule.weights[j]! : 0.5 * len * rule.weights[j]!;
      const e = 2 * m + d;
      const sigma = ann.sigmaTotalGeV2(e * e);
      delta.push(d);
      inverseE.push(1 / e);
      weight.push(sigma === 0 ? 0 : (w * sigma * d * (4 * m + d) * e * e) / Math.sqrt(e));
      k++;
    }
  }
  pieceStart.push(k);
  return Object.freeze({ mChiGeV: m, delta, weight, inverseE, pieceLeft: left, pieceStart });
}

/** numeric order for Array.prototype.sort (the cuts are finite) */
function ascending(a: number, b: number): number {
  return a - b;
}

/** Cuts at centre + step 2^k (and centre - step 2^k when `down`) inside (0, deltaMax). */
function graded(cuts: number[], deltaMax: number, centre: number, step: number, down: boolean): void {
  for (let d = step; d < deltaMax; d *= GRADING) {
    if (centre + d < deltaMax) cuts.push(centre + d);
    if (down && centre - d > 0) cuts.push(centre - d);
    if (!(centre + d < deltaMax) && !(centre - d > 0)) break;
  }
}

/**
 * <sigma v>(x) in GeV^-2 from the sampled grid; pieces starting beyond t = tMax are dropped.
 * K~_1(E r) = sqrt(u) P(u) with u = 1/(E r): the truncated Hankel series for x >= 20 (z >= 40), the
 * 15-term Chebyshev series for x >= 3 (physics/numerics/bessel.ts); the sqrt(1/E) factor is stored
 * in the weights.
 */
export function gridThermalAverage(grid: EnergyGrid, x: number, tMax: number): number {
  const m = grid.mChiGeV;
  const r = x / m;
  const invR = m / x;
  const cut = tMax * invR;
  const delta = grid.delta;
  const weight = grid.weight;
  const inverseE = grid.inverseE;
  const left = grid.pieceLeft;
  const start = grid.pieceStart;
  // every node has z = E r >= 2x: pick the cheapest form of sqrt(z) K~_1(z) valid there
  const form = 2 * x >= ASYMPTOTIC_Z_MIN ? 2 : 2 * x >= LARGE_Z_MIN ? 1 : 0;
  let sum = 0;
  for (let p = 0; p < left.length && left[p]! < cut; p++) {
    const end = start[p + 1]!;
    for (let i = start[p]!; i < end; i++) {
      const w = weight[i]!;
      if (w === 0) continue;
      const u = inverseE[i]! * invR;
      // sqrt(z) K~_1(z) at z = E r; the sqrt(1/E) is in w and sqrt(1/r) is applied below
      const k1 = form === 2 ? sqrtZK1ScaledAsymptotic(u) : form === 1 ? sqrtZK1ScaledOfInverse(u) : besselK1Scaled(1 / u) / Math.sqrt(u);
      sum += w * k1 * Math.exp(-delta[i]! * r);
    }
  }
  const k2 = besselK2Scaled(x);
  return (sum * r * Math.sqrt(invR)) / (4 * m * m * m * m * k2 * k2);
}
