/**
 * Exponentially scaled modified Bessel functions of the second kind,
 * K~_nu(z) = e^z K_nu(z), for nu = 0, 1, 2 and real z > 0.
 *
 * Why scaled: thermal averages and equilibrium yields need ratios such as K_1(sqrt(s)/T) / K_2(m/T)^2
 * at m/T up to ~1e4, where K_nu itself underflows (K_0(1000) ~ 1e-436). No npm package provides a
 * scaled K (shared stack notes §6), so this module is written here.
 *
 * Method, by argument range (each branch switch is covered by the scipy `kve` fixtures):
 *  - z <= SERIES_MAX (2): ascending series, Abramowitz & Stegun (1964) 9.6.13 (K_0) and 9.6.11 with
 *    n = 1 (K_1), multiplied by e^z. At most ~12 terms; one digit is lost to cancellation at z = 2.
 *  - z > SERIES_MAX: Chebyshev expansion of sqrt(z) K~_nu(z) in w = 4/z - 1 in (-1, 1) (the same
 *    change of variable as the Cephes library's k0e/k1e, Moshier 1989), CHEB_TERMS terms, Clenshaw
 *    sum. The coefficients are computed once at module load, by a discrete cosine transform of
 *    accurate samples at the Chebyshev roots:
 *      - for 2 < z < 17: trapezoid rule on K~_nu(z) = int_0^inf exp(-z (cosh t - 1)) cosh(nu t) dt
 *        (A&S 9.6.24 scaled). The integrand is entire and bounded by e^z in the strip |Im t| < pi/2,
 *        so the trapezoid error is ~ exp(z - pi^2/h) (Trefethen & Weideman 2014, SIAM Review 56,
 *        385, Theorem 5.1); the step h = min(0.25, pi^2/(z + 37)) keeps it below 1e-16;
 *      - for z >= 17: Hankel asymptotic series (A&S 9.7.2) summed to its smallest term, which is
 *        ~ e^{-2z} relative (below 2e-15 at z = 17).
 *    The coefficients fall by ~10x per 1.5 terms (1e-15 after ~21 terms).
 *  - K~_2 by the upward recurrence K_2 = K_0 + (2/z) K_1 (A&S 9.6.26), stable for K.
 * Validity: finite z > 0 (tested on [1e-4, 1e5]); z <= 0 or NaN returns NaN, z = +Infinity returns 0.
 * Accuracy: max relative error vs scipy.special.kve ~ 1e-14 over [1e-4, 1e5] (tests/relic/bessel.test.ts).
 */

const EULER_GAMMA = 0.5772156649015329; // Euler-Mascheroni constant, A&S 6.1.3
const HALF_PI = Math.PI / 2;

/** below or at this argument the ascending series is used */
const SERIES_MAX = 2;
/** at or above this argument the asymptotic series samples the Chebyshev fit */
const ASYMPTOTIC_MIN = 17;
/** number of Chebyshev coefficients for z > SERIES_MAX */
const CHEB_TERMS = 26;

/** Scaled pair (K~_0, K~_1) written into out[0], out[1]; the shared work of all three exports. */
function scaledK01(z: number, out: Float64Array): void {
  if (!(z > 0)) {
    out[0] = NaN;
    out[1] = NaN;
    return;
  }
  if (z === Infinity) {
    out[0] = 0;
    out[1] = 0;
    return;
  }
  if (z <= SERIES_MAX) {
    seriesK01(z, out);
    const ez = Math.exp(z);
    out[0] = out[0]! * ez;
    out[1] = out[1]! * ez;
  } else {
    const w = 4 / z - 1;
    const r = 1 / Math.sqrt(z);
    out[0] = clenshaw(CHEB_K0, w) * r;
    out[1] = clenshaw(CHEB_K1, w) * r;
  }
}

/** sum_k c_k T_k(w) with the first coefficient halved (the DCT convention below). */
function clenshaw(c: Float64Array, w: number): number {
  const w2 = 2 * w;
  let b1 = 0;
  let b2 = 0;
  for (let k = c.length - 1; k >= 1; k--) {
    const b0 = w2 * b1 - b2 + c[k]!;
    b2 = b1;
    b1 = b0;
  }
  return w * b1 - b2 + 0.5 * c[0]!;
}

/** Chebyshev coefficients of sqrt(z) K~_nu(z), w = 4/z - 1, from samples at the Chebyshev roots. */
function chebyshevCoefficients(nu: 0 | 1 | 2): Float64Array {
  const n = CHEB_TERMS;
  const samples = new Float64Array(n);
  const pair = new Float64Array(2);
  for (let j = 0; j < n; j++) {
    const w = Math.cos((Math.PI * (j + 0.5)) / n);
    const z = 4 / (w + 1);
    let value: number;
    if (z < ASYMPTOTIC_MIN) {
      trapezoidK01(z, pair);
      value = nu === 0 ? pair[0]! : nu === 1 ? pair[1]! : pair[0]! + (2 / z) * pair[1]!;
    } else {
      value = asymptoticScaledK(nu, z);
    }
    samples[j] = Math.sqrt(z) * value;
  }
  return cosineTransform(samples);
}

/** Unscaled K_0, K_1 from the ascending series (A&S 9.6.13, 9.6.11); z in (0, 2]. */
function seriesK01(z: number, out: Float64Array): void {
  const q = 0.25 * z * z;
  const logHalf = Math.log(0.5 * z);
  // K_0 = -(ln(z/2) + gamma) I_0 + sum_{k>=1} H_k q^k / (k!)^2
  // K_1 = 1/z + ln(z/2) I_1 - (z/4) sum_{k>=0} (psi(k+1) + psi(k+2)) q^k / (k! (k+1)!)
  let term0 = 1; // q^k / (k!)^2
  let term1 = 1; // q^k / (k! (k+1)!)
  let harmonic = 0; // H_k
  let i0 = 1;
  let sum0 = 0;
  let i1 = 1;
  let sum1 = -2 * EULER_GAMMA + 1; // k = 0: psi(1) + psi(2) = -2 gamma + 1
  for (let k = 1; k < 40; k++) {
    term0 *= q / (k * k);
    term1 *= q / (k * (k + 1));
    harmonic += 1 / k;
    i0 += term0;
    sum0 += harmonic * term0;
    i1 += term1;
    // psi(k+1) + psi(k+2) = -2 gamma + 2 H_k + 1/(k+1)
    sum1 += (-2 * EULER_GAMMA + 2 * harmonic + 1 / (k + 1)) * term1;
    if (term0 < 1e-17 * i0) break;
  }
  out[0] = -(logHalf + EULER_GAMMA) * i0 + sum0;
  out[1] = 1 / z + logHalf * (0.5 * z) * i1 - 0.25 * z * sum1;
}

/** Scaled K~_0, K~_1 by the trapezoid rule on the cosh integral; z in (2, 17). */
function trapezoidK01(z: number, out: Float64Array): void {
  const h = Math.min(0.25, (Math.PI * Math.PI) / (z + 37));
  const eh = Math.exp(h);
  let ek = 1; // e^{k h}
  let s0 = 0.5;
  let s1 = 0.5;
  for (let k = 1; k < 400; k++) {
    ek *= eh;
    const coshT = 0.5 * (ek + 1 / ek);
    const exponent = z * (coshT - 1);
    const w = Math.exp(-exponent);
    s0 += w;
    s1 += w * coshT;
    if (exponent > 40) break;
  }
  out[0] = h * s0;
  out[1] = h * s1;
}

/** Hankel asymptotic series for K~_nu(z), summed until the terms stop decreasing (A&S 9.7.2). */
function asymptoticScaledK(nu: number, z: number): number {
  const mu = 4 * nu * nu;
  const inv8z = 1 / (8 * z);
  let term = 1;
  let sum = 1;
  for (let k = 1; k < 60; k++) {
    const next = (term * (mu - (2 * k - 1) * (2 * k - 1)) * inv8z) / k;
    if (Math.abs(next) >= Math.abs(term) || next === 0) break;
    term = next;
    sum += term;
    if (Math.abs(term) < 1e-17 * Math.abs(sum)) break;
  }
  return Math.sqrt(HALF_PI / z) * sum;
}

// ---------------------------------------------------------------- z >= LARGE_Z_MIN, as a function of u = 1/z
// The Gondolo-Gelmini kernel evaluates K~_1(z) at z = sqrt(s)/T >= 2x, thousands of times per model
// point, and the Boltzmann solver K~_2(x) at x >= 6 a few hundred times. On z >= 6 the functions
// sqrt(z) K~_nu(z), nu = 1, 2, are smooth in u = 1/z in [0, 1/6] and their Chebyshev series there
// fall to 3e-15 (nu = 1) and 5e-15 (nu = 2) of the leading term after 13 terms; with 15 terms the
// truncation error is below 3e-15 on [6, 1e5] for both (measured with mpmath, 30 digits; the series
// over the full z > 2 range needs 26). The coefficients are computed once at module load by a
// discrete cosine transform of besselK1Scaled / besselK2Scaled at the Chebyshev roots (their 1e-14
// accuracy carries over).

/** smallest z of the large-argument form */
export const LARGE_Z_MIN = 6;
/** Chebyshev terms of sqrt(z) K~_1(z) on u = 1/z in [0, 1/LARGE_Z_MIN] */
const LARGE_TERMS = 15;

function largeArgumentCoefficients(nu: 1 | 2): Float64Array {
  const n = LARGE_TERMS;
  const samples = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    const v = Math.cos((Math.PI * (j + 0.5)) / n);
    const z = (2 * LARGE_Z_MIN) / (v + 1);
    samples[j] = Math.sqrt(z) * (nu === 1 ? besselK1Scaled(z) : besselK2Scaled(z));
  }
  return cosineTransform(samples);
}

/**
 * sqrt(z) e^z K_1(z) as a function of u = 1/z, for 0 <= u <= 1/LARGE_Z_MIN (z >= 6); relative error
 * ~1e-14 (tests/relic/bessel.test.ts). Callers that already hold 1/z and sqrt(1/z) avoid a division
 * and a square root per call: K~_1(z) = sqrtZK1ScaledOfInverse(u) * sqrt(u).
 */
export function sqrtZK1ScaledOfInverse(u: number): number {
  return clenshaw(CHEB_K1_LARGE, 2 * LARGE_Z_MIN * u - 1);
}

/**
 * e^z K_2(z) for z >= LARGE_Z_MIN (6) from the 15-term Chebyshev series of sqrt(z) K~_2(z) in u = 1/z;
 * relative error ~1e-14 (tests/relic/bessel.test.ts). Outside [6, Infinity) it falls back to
 * besselK2Scaled, so it is valid for every z; cheaper than besselK2Scaled's 26 terms for z >= 6.
 */
export function besselK2ScaledLarge(z: number): number {
  if (z >= LARGE_Z_MIN && z < Infinity) return clenshaw(CHEB_K2_LARGE, (2 * LARGE_Z_MIN) / z - 1) / Math.sqrt(z);
  return besselK2Scaled(z);
}

/** smallest z of the truncated Hankel series below */
export const ASYMPTOTIC_Z_MIN = 40;
/** sqrt(pi/2) */
const SQRT_HALF_PI = Math.sqrt(HALF_PI);

/**
 * sqrt(z) e^z K_1(z) for z >= ASYMPTOTIC_Z_MIN as a function of u = 1/z: the Hankel series (A&S
 * 9.7.2, mu = 4) through u^6, sqrt(pi/2) (1 + 3u/8 - 15u^2/128 + 105u^3/1024 - 4725u^4/32768
 * + 72765u^5/262144 - 2837835u^6/4194304). For real z > 0 the remainder is below the first omitted
 * term (A&S 9.7, remark after 9.7.4 [memory]), 1.99 u^7 = 1.2e-11 at z = 40 (mpmath: 1.1e-11).
 */
export function sqrtZK1ScaledAsymptotic(u: number): number {
  return SQRT_HALF_PI * (1 + u * (0.375 + u * (-0.1171875 + u * (0.1025390625 + u * (-0.144195556640625 + u * (0.2775764465332031 + u * -0.6765925884246826))))));
}

const CHEB_K0 = chebyshevCoefficients(0);
const CHEB_K1 = chebyshevCoefficients(1);
const CHEB_K2 = chebyshevCoefficients(2);
const scratch = new Float64Array(2);
const CHEB_K1_LARGE = largeArgumentCoefficients(1);
const CHEB_K2_LARGE = largeArgumentCoefficients(2);

/** e^z K_0(z). */
export function besselK0Scaled(z: number): number {
  scaledK01(z, scratch);
  return scratch[0]!;
}

/** e^z K_1(z). */
export function besselK1Scaled(z: number): number {
  if (z > SERIES_MAX && z < Infinity) return clenshaw(CHEB_K1, 4 / z - 1) / Math.sqrt(z);
  scaledK01(z, scratch);
  return scratch[1]!;
}

/** e^z K_2(z), from K_2 = K_0 + (2/z) K_1. */
export function besselK2Scaled(z: number): number {
  if (z > SERIES_MAX && z < Infinity) return clenshaw(CHEB_K2, 4 / z - 1) / Math.sqrt(z);
  scaledK01(z, scratch);
  return scratch[0]! + (2 / z) * scratch[1]!;
}

/** Chebyshev coefficients from samples at the n Chebyshev nodes cos(pi (j + 1/2) / n) (discrete cosine transform). */
function cosineTransform(samples: Float64Array): Float64Array {
  const n = samples.length;
  const c = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    let sum = 0;
    for (let j = 0; j < n; j++) sum += samples[j]! * Math.cos((Math.PI * k * (j + 0.5)) / n);
    c[k] = (2 / n) * sum;
  }
  return c;
}
