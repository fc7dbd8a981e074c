/**
 * Counting statistics for direct-detection limits: upper limits on an expected signal from an
 * observed event count.
 *
 * What:
 *  - `poissonUpperLimit`: classical (Neyman) one-sided Poisson upper limit with a known background:
 *    s_up solves sum_{k<=n} Poisson(k; s_up + b) = 1 - CL. When b is so large that s_up + b < b the
 *    solution is negative (physically empty); it is clamped at 0 and `clampedAtZero` says so.
 *  - `feldmanCousinsInterval` / `feldmanCousinsUpperLimit`: the unified (likelihood-ratio ordered)
 *    Poisson interval with known background of Feldman & Cousins.
 *  - `maximumGapUpperLimit`: Yellin's maximum-gap upper limit for an unknown background, from the
 *    largest gap between observed events expressed as a fraction of the total expected signal.
 *
 * Method:
 *  - Poisson: the cumulative probability sum_{k<=n} e^-mu mu^k / k! is summed in log space (no
 *    overflow for large n) and solved for mu by bisection to full double precision.
 *  - Feldman-Cousins (Feldman & Cousins 1998, PRD 57, 3873, Sec. IV B): for each signal s on a grid
 *    s_i = i * ds (ds = FC_GRID_STEP, default 0.001, i.e. well below the two decimals of the
 *    published tables), the acceptance region in n is built in decreasing order of the likelihood
 *    ratio R(n) = P(n | s + b) / P(n | s_best + b), s_best = max(0, n - b), adding values of n until
 *    the summed probability reaches CL (ties: lower n first). R(n) is unimodal in n (it rises
 *    linearly in ln R up to n = b, then has its maximum at n = s + b), so the region is an interval
 *    grown from the maximum of R outwards, which equals the sorted construction. The confidence
 *    interval for the observed n is [min, max] of the grid points whose acceptance region contains n.
 *    This is the plain construction: Feldman & Cousins adjusted a few entries of their tables with
 *    background (n = 0 at b >= 2) where the plain belt is not monotonic; those entries differ here
 *    (e.g. n = 0, b = 3: 0.95 plain versus 1.08 published, per the shared notes direct.md §5.3).
 *  - Maximum gap (Yellin 2002, PRD 66, 032005, eq. 2): C0(x, mu) = sum_{k=0}^{m} (k x - mu)^k
 *    e^{-k x} / k! (1 + k / (mu - k x)), m = floor(mu / x), evaluated as (t^k - k t^{k-1}) e^{-kx}/k!
 *    with t = k x - mu (no 0/0 when mu/x is an integer). The limit is the mu at which
 *    C0(f_max mu, mu) = CL, found by bisection (C0 rises with mu at fixed fraction).
 *
 * Validity and accuracy: Poisson limits to ~1e-13 relative for n up to MAX_COUNT. FC limits are
 * grid values (resolution ds, default 0.001). C0 is an alternating sum: with m = mu/x up to ~40
 * (gap fractions down to ~0.05 at CL = 0.9) the cancellation costs fewer than ~6 digits; smaller
 * gap fractions are rejected with an error (MAX_GAP_TERMS).
 *
 * References: Feldman & Cousins, PRD 57, 3873 (1998), Table IV; Yellin, PRD 66, 032005 (2002),
 * physics/0203002; PDG Review "Statistics" (Poisson upper limits, relation to chi^2 quantiles).
 */
import { InvalidInputError } from '../issue.js';

// ---------------------------------------------------------------- numerical knobs
/** Largest observed count accepted (cost of the Feldman-Cousins scan grows ~ n^1.5). */
export const MAX_COUNT = 10_000;
/** Feldman-Cousins signal-grid step (events): below the 0.01 rounding of the published tables. */
export const FC_GRID_STEP = 0.001;
/** Largest number of terms m = floor(mu/x) + 1 of Yellin's C0 before the alternating sum loses too many digits. */
export const MAX_GAP_TERMS = 40;

// ---------------------------------------------------------------- input checks
function fail(path: string, message: string, seen: unknown, allowed: string): never {
  throw new InvalidInputError([{ code: 'out_of_range', path, message, seen: String(seen), allowed }]);
}

function checkCount(n: number): void {
  if (!Number.isInteger(n) || n < 0 || n > MAX_COUNT) {
    fail('n', `observed count n must be an integer with 0 <= n <= ${MAX_COUNT}`, n, `0 <= n <= ${MAX_COUNT}, integer`);
  }
}

function checkBackground(b: number): void {
  if (!Number.isFinite(b) || b < 0 || b > MAX_COUNT) {
    fail('b', `expected background b must be a finite number with 0 <= b <= ${MAX_COUNT}`, b, `0 <= b <= ${MAX_COUNT}`);
  }
}

function checkCl(cl: number): void {
  if (!Number.isFinite(cl) || cl <= 0 || cl >= 1) {
    fail('cl', 'confidence level cl must be a number with 0 < cl < 1', cl, '0 < cl < 1');
  }
}

// ---------------------------------------------------------------- Poisson
/** ln k! for k = 0..n, accumulated exactly as a sum of logarithms. */
function logFactorials(n: number): Float64Array {
  const out = new Float64Array(n + 1);
  for (let k = 2; k <= n; k++) out[k] = out[k - 1]! + Math.log(k);
  return out;
}

/** P(N <= n | mu) for a Poisson mean mu >= 0. */
export function poissonCdf(n: number, mu: number): number {
  checkCount(n);
  if (!Number.isFinite(mu) || mu < 0) fail('mu', 'Poisson mean must be finite and >= 0', mu, 'mu >= 0');
  if (mu === 0) return 1;
  const lnMu = Math.log(mu);
  let sum = 0;
  let lnFact = 0;
  for (let k = 0; k <= n; k++) {
    if (k > 1) lnFact += Math.log(k);
    sum += Math.exp(k * lnMu - mu - lnFact);
  }
  return Math.min(sum, 1);
}

export interface PoissonLimit {
  /** upper limit on the expected signal events (>= 0) */
  readonly signal: number;
  /** true when the unclamped limit s_up = mu_up - b was negative and has been set to 0 */
  readonly clampedAtZero: boolean;
  /** upper limit on the total expected events mu_up = s_up + b before clamping */
  readonly total: number;
}

/** Solves P(N <= n | mu) = 1 - cl for mu (decreasing in mu) by bisection. */
function poissonTotalUpperLimit(n: number, cl: number): number {
  const target = 1 - cl;
  let lo = 0;
  let hi = n + 10 + 10 * Math.sqrt(n + 1);
  while (poissonCdf(n, hi) > target) hi *= 2;
  for (let i = 0; i < 200; i++) {
    const mid = 0.5 * (lo + hi);
    if (mid <= lo || mid >= hi) break;
    if (poissonCdf(n, mid) > target) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/**
 * Classical Poisson upper limit on the signal with a known expected background b.
 * @param n observed events (integer >= 0)
 * @param b expected background events (>= 0)
 * @param cl confidence level, e.g. 0.9
 */
export function poissonUpperLimit(n: number, b = 0, cl = 0.9): PoissonLimit {
  checkCount(n);
  checkBackground(b);
  checkCl(cl);
  const total = poissonTotalUpperLimit(n, cl);
  const raw = total - b;
  return Object.freeze({ signal: Math.max(raw, 0), clampedAtZero: raw < 0, total });
}

// ---------------------------------------------------------------- Feldman-Cousins
export interface ConfidenceInterval {
  /** lower end of the interval on the expected signal events */
  readonly lower: number;
  /** upper end of the interval on the expected signal events */
  readonly upper: number;
}

/**
 * Acceptance interval [n1, n2] of the likelihood-ratio ordering for mean signal s and background b,
 * written into `out`. `lnFact` must cover n up to the returned range.
 */
function acceptanceRegion(s: number, b: number, cl: number, lnFact: Float64Array, out: Int32Array): void {
  const mu = s + b;
  const nMax = lnFact.length - 1;
  // ln R(n) = n ln(mu / mu_best) - mu + mu_best with mu_best = max(n, b); ln n! cancels in R.
  const lnR = (n: number): number => {
    const best = Math.max(n, b);
    if (n === 0) return best - mu;
    return n * Math.log(mu / best) - mu + best;
  };
  const prob = (n: number): number => (mu === 0 ? (n === 0 ? 1 : 0) : Math.exp(n * Math.log(mu) - mu - lnFact[n]!));
  // the maximum of R sits at n = floor(mu) or ceil(mu) (for n >= b), or at n = 0..floor(b) when s = 0
  let peak = 0;
  let peakLnR = lnR(0);
  const hiScan = Math.min(nMax, Math.ceil(mu) + 1);
  for (let n = 1; n <= hiScan; n++) {
    const r = lnR(n);
    if (r > peakLnR) {
      peak = n;
      peakLnR = r;
    }
  }
  let lo = peak;
  let hi = peak;
  let sum = prob(peak);
  while (sum < cl) {
    const canLeft = lo > 0;
    const canRight = hi < nMax;
    if (!canLeft && !canRight) break;
    // ties go to the lower n (stable ordering by n)
    if (canLeft && (!canRight || lnR(lo - 1) >= lnR(hi + 1))) {
      lo -= 1;
      sum += prob(lo);
    } else {
      hi += 1;
      sum += prob(hi);
    }
  }
  out[0] = lo;
  out[1] = hi;
}

/**
 * Feldman-Cousins confidence interval for the expected signal, known background b (plain
 * construction, see the module comment).
 * @param gridStep signal-grid step in events (default FC_GRID_STEP)
 */
export function feldmanCousinsInterval(n: number, b = 0, cl = 0.9, gridStep = FC_GRID_STEP): ConfidenceInterval {
  checkCount(n);
  checkBackground(b);
  checkCl(cl);
  if (!Number.isFinite(gridStep) || gridStep <= 0 || gridStep > 0.1) {
    fail('gridStep', 'Feldman-Cousins grid step must be a number with 0 < gridStep <= 0.1', gridStep, '0 < gridStep <= 0.1');
  }
  // beyond this signal the observed n lies far in the lower tail (P(N <= n) < 1e-4 (1 - cl)) and
  // cannot be in the acceptance region, which always contains the peak of R near s + b
  const sMax = Math.max(poissonTotalUpperLimit(n, 1 - 1e-4 * (1 - cl)) - b, 0) + 1;
  const muMax = sMax + b;
  const nMax = Math.ceil(muMax + 15 * Math.sqrt(muMax + 1) + 30);
  const lnFact = logFactorials(nMax);
  const region = new Int32Array(2);
  const steps = Math.ceil(sMax / gridStep);
  let lower = NaN;
  let upper = NaN;
  for (let i = 0; i <= steps; i++) {
    const s = i * gridStep;
    acceptanceRegion(s, b, cl, lnFact, region);
    if (region[0]! <= n && n <= region[1]!) {
      if (Number.isNaN(lower)) lower = s;
      upper = s;
    }
  }
  return Object.freeze({ lower, upper });
}

/** Upper end of the Feldman-Cousins interval (see `feldmanCousinsInterval`). */
export function feldmanCousinsUpperLimit(n: number, b = 0, cl = 0.9, gridStep = FC_GRID_STEP): number {
  return feldmanCousinsInterval(n, b, cl, gridStep).upper;
}

// ---------------------------------------------------------------- maximum gap
/**
 * Yellin's C0(x, mu): probability that the largest gap between events, in units of expected signal
 * events, is smaller than x when mu signal events are expected in total (Yellin 2002, eq. 2).
 */
export function maximumGapProbability(x: number, mu: number): number {
  if (!Number.isFinite(x) || x <= 0) fail('x', 'maximum gap x must be a finite number > 0', x, 'x > 0');
  if (!Number.isFinite(mu) || mu <= 0) fail('mu', 'expected signal mu must be a finite number > 0', mu, 'mu > 0');
  if (x > mu) return 1;
  const m = Math.floor(mu / x + 1e-12);
  if (m + 1 > MAX_GAP_TERMS) {
    fail('x', `maximum gap x/mu = ${x / mu} is too small for the alternating sum (needs mu/x < ${MAX_GAP_TERMS - 1})`, x / mu, `x/mu > ${1 / (MAX_GAP_TERMS - 1)}`);
  }
  let sum = 1; // k = 0 term
  let lnFact = 0;
  for (let k = 1; k <= m; k++) {
    lnFact += Math.log(k);
    const t = k * x - mu;
    const poly = t ** k - k * t ** (k - 1);
    sum += poly * Math.exp(-k * x - lnFact);
  }
  return sum;
}

/**
 * Gap fractions from the cumulative expected-signal fraction at each observed event: sorts the
 * values, adds the window edges 0 and 1, and returns the fractions of expected signal in each gap.
 * @param eventCdf for each event, the fraction of the expected signal below its energy, in [0, 1]
 */
export function gapFractions(eventCdf: readonly number[]): number[] {
  eventCdf.forEach((v, i) => {
    if (!Number.isFinite(v) || v < 0 || v > 1) {
      fail(`eventCdf[${i}]`, 'cumulative signal fraction of an event must lie in [0, 1]', v, '0 <= value <= 1');
    }
  });
  const edges = [0, ...[...eventCdf].sort((p, q) => p - q), 1];
  const out: number[] = [];
  for (let i = 1; i < edges.length; i++) out.push(edges[i]! - edges[i - 1]!);
  return out;
}

/**
 * Yellin's maximum-gap upper limit on the total expected signal events.
 * @param gaps expected-signal fractions of the gaps between events and window edges (each in
 *   [0, 1]); with no events this is [1]; see `gapFractions`
 * @param cl confidence level, e.g. 0.9
 * @returns total expected signal events at the limit (the cross section scales with it)
 */
export function maximumGapUpperLimit(gaps: readonly number[], cl = 0.9): number {
  checkCl(cl);
  if (gaps.length === 0) fail('gaps', 'at least one gap fraction is needed (no events: [1])', '[]', 'non-empty list');
  let largest = 0;
  let total = 0;
  gaps.forEach((g, i) => {
    if (!Number.isFinite(g) || g < 0 || g > 1) fail(`gaps[${i}]`, 'gap fraction must lie in [0, 1]', g, '0 <= gap <= 1');
    largest = Math.max(largest, g);
    total += g;
  });
  if (total > 1 + 1e-9) fail('gaps', 'gap fractions must sum to at most 1', total, 'sum <= 1');
  if (largest <= 0) fail('gaps', 'the largest gap fraction must be > 0', largest, 'max gap > 0');
  const f = (mu: number): number => maximumGapProbability(largest * mu, mu) - cl;
  let lo = 0;
  let hi = 1;
  while (f(hi) < 0) {
    lo = hi;
    hi *= 2;
    if (hi > 1e6) fail('gaps', 'no maximum-gap limit below 1e6 expected events', largest, 'larger gap fraction');
  }
  for (let i = 0; i < 200; i++) {
    const mid = 0.5 * (lo + hi);
    if (mid <= lo || mid >= hi) break;
    if (f(mid) < 0) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}
