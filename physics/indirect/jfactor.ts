/**
 * J-factors: J(cone) = Int_cone dOmega Int_los rho^2 dl, in GeV^2 cm^-5, for a cone of half-angle
 * theta centred on a halo's centre (the Galactic Centre, or a satellite's centre), and for a ring
 * (annulus) between two such cones, as regions of interest that leave out the innermost degrees, and
 * for a cone whose axis points offsetDeg away from the centre (a region off the Galactic Centre); a
 * cone or ring around the Galactic Centre may leave out the band of Galactic latitudes |b| < b_m.
 *
 * Method (shared notes indirect.md B6): observer at distance D from the halo centre, direction at
 * angle psi from it; impact parameter b = D sin psi, tangent-point distance l* = D cos psi. The line
 * of sight is split at the tangent point and each side is integrated in u = b sinh t (du = b cosh t
 * dt, r = b cosh t), which resolves the peak of width ~b even for a cusp (NFW: J_los ~ 1/psi).
 * The density is zero beyond the halo's outer radius r_max, so the ray runs over |u| <= sqrt(r_max^2
 * - b^2), clipped at the observer (u >= -l*); an observer outside the halo (a satellite) sees only
 * the chord, and directions with b >= r_max see nothing. The cone is
 * J = 2 pi Int_0^theta' sin psi J_los(psi) dpsi with psi = theta' x^2 (the integrand stays finite as
 * psi -> 0 for a cusp; psi = 0 is never evaluated), theta' = min(theta, asin(r_max/D)) when the
 * observer is outside the halo. Regions away from the centre's cusp are integrated as
 * Int sin psi Delta phi(psi) J_los(psi) dpsi, Delta phi the azimuthal width of the region at psi, in
 * psi = a + (b - a)(1 - cos pi u)/2, which smooths square-root edges of Delta phi at both ends:
 *  - a ring theta_in < psi < theta_out: Delta phi = 2 pi (subtracting two cones would lose digits for
 *    thin rings);
 *  - a cone of half-angle theta with its axis at psi0 from the centre: psi in [|psi0 - theta|,
 *    psi0 + theta], Delta phi = 2 acos[(cos theta - cos psi cos psi0)/(sin psi sin psi0)] (spherical
 *    law of cosines); when the centre lies inside the cone, the full disc psi < theta - psi0 is a
 *    centred cone of its own (with its cusp mapping);
 *  - the plane masked (|b| < b_m left out): a direction at psi from the centre and azimuth phi from the
 *    plane has sin b = sin psi sin phi, so Delta phi = 2 pi - 4 asin(sin b_m / sin psi) for psi > b_m.
 * Both integrals use the adaptive Gauss-Kronrod of physics/numerics.
 *
 * Validity: spherical halos; no foreground (a satellite's J does not include the Milky-Way halo along
 * the same line of sight, as is usual for dwarf analyses, indirect.md B6 note). Accuracy: relative
 * ~1e-8 (LOS_REL_TOL, CONE_REL_TOL); checked against an independent scipy quadrature in the plain
 * path length (tests/fixtures/indirect/make_fixtures.py), the B6 table and the closed-form total of a
 * truncated NFW halo, J_tot = 4 pi rho_s^2 r_s^3 [1 - (1+c)^-3] / (3 d^2); offset cones and masked
 * regions against 2-D scipy quadratures in other coordinates (make_offset_fixtures.py).
 *
 * References: Navarro, Frenk & White 1996 (ApJ 462, 563); indirect.md B5/B6 (definitions and the
 * robust LOS scheme); Evans, Sanders & Geringer-Sameth 2016 (PRD 93, 103512) for J(theta) of cusps.
 */
import { BASE } from '../constants.js';
import { integrate } from '../numerics/quadrature.js';
import type { HaloDensity } from './profiles.js';

/** Relative tolerance of each line-of-sight integral (numerical knob). */
export const LOS_REL_TOL = 1e-10;
/** Relative tolerance of the integral over the cone (numerical knob). */
export const CONE_REL_TOL = 1e-8;
/** Subinterval budget of each adaptive integral (numerical knob). */
export const J_MAX_INTERVALS = 400;

const KPC_CM = BASE.kiloparsec.value;

/** Int_{t0}^{t1} rho^2(b cosh t) b cosh t dt: one side of the ray, in GeV^2 cm^-6 kpc. */
function side(density: HaloDensity, b: number, u0: number, u1: number): number {
  if (!(u1 > u0)) return 0;
  const t0 = Math.asinh(u0 / b);
  const t1 = Math.asinh(u1 / b);
  return integrate((t: number) => {
    const r = b * Math.cosh(t);
    const rho = density.densityGeVcm3(Math.min(r, density.rMaxKpc));
    return rho * rho * r;
  }, t0, t1, { relTol: LOS_REL_TOL, maxIntervals: J_MAX_INTERVALS }).value;
}

/**
 * Line-of-sight integral Int rho^2 dl in GeV^2 cm^-6 kpc along the direction at angle psi (radians,
 * 0 < psi <= pi) from the halo centre, observer at distance dKpc from it.
 */
export function losIntegral(density: HaloDensity, dKpc: number, psi: number): number {
  if (!(psi > 0 && psi <= Math.PI)) throw new RangeError(`losIntegral: psi must be in (0, pi], got ${psi}`);
  const b = dKpc * Math.sin(psi);
  const rMax = density.rMaxKpc;
  if (b >= rMax) return 0;
  const lStar = dKpc * Math.cos(psi);
  const half = Math.sqrt((rMax - b) * (rMax + b));
  // u = l - l*, observer at u = -l*: behind the tangent point u runs over [-min(l*, half), 0],
  // beyond it over [0, half]; for psi > 90 deg the observer is past the tangent point (u >= |l*|).
  if (lStar >= 0) return side(density, b, 0, Math.min(lStar, half)) + side(density, b, 0, half);
  return side(density, b, -lStar, half);
}

/** Largest angle from the halo centre at which a line of sight meets the halo (pi when the observer is inside it). */
function visibleEdge(density: HaloDensity, dKpc: number): number {
  return density.rMaxKpc < dKpc ? Math.asin(density.rMaxKpc / dKpc) : Math.PI;
}

/** J-factor of a cone of half-angle coneRad around the halo centre, GeV^2 cm^-5. */
export function coneJFactor(density: HaloDensity, dKpc: number, coneRad: number): number {
  if (!(coneRad > 0 && coneRad <= Math.PI)) throw new RangeError(`coneJFactor: cone half-angle must be in (0, pi], got ${coneRad}`);
  const theta = Math.min(coneRad, visibleEdge(density, dKpc));
  const value = integrate((x: number) => {
    const psi = theta * x * x;
    return 2 * theta * x * Math.sin(psi) * losIntegral(density, dKpc, psi);
  }, 0, 1, { relTol: CONE_REL_TOL, maxIntervals: J_MAX_INTERVALS }).value;
  return 2 * Math.PI * value * KPC_CM;
}

/**
 * Int_lo^hi sin psi width(psi) J_los(psi) dpsi in GeV^2 cm^-5, width(psi) the azimuthal extent of the
 * region at angle psi from the centre (2 pi for a full circle), in psi = lo + (hi - lo)(1 - cos pi u)/2,
 * which smooths square-root edges of the width at both ends. For regions away from the centre's cusp.
 */
function azimuthalIntegral(density: HaloDensity, dKpc: number, lo: number, hi: number, width: (psi: number) => number): number {
  const value = integrate((u: number) => {
    const psi = lo + ((hi - lo) * (1 - Math.cos(Math.PI * u))) / 2;
    const dpsi = ((hi - lo) * Math.PI * Math.sin(Math.PI * u)) / 2;
    return dpsi * Math.sin(psi) * width(psi) * losIntegral(density, dKpc, psi);
  }, 0, 1, { relTol: CONE_REL_TOL, maxIntervals: J_MAX_INTERVALS }).value;
  return value * KPC_CM;
}

const FULL_CIRCLE = (): number => 2 * Math.PI;

/**
 * J-factor of the ring innerRad < psi < outerRad around the halo centre, GeV^2 cm^-5 (innerRad = 0:
 * the cone, coneJFactor). Directions beyond the halo's edge (observer outside it) contribute nothing.
 */
export function ringJFactor(density: HaloDensity, dKpc: number, innerRad: number, outerRad: number): number {
  if (!(innerRad >= 0 && outerRad > innerRad && outerRad <= Math.PI)) {
    throw new RangeError(`ringJFactor: need 0 <= inner < outer <= pi, got ${innerRad}, ${outerRad}`);
  }
  if (innerRad === 0) return coneJFactor(density, dKpc, outerRad);
  const outer = Math.min(outerRad, visibleEdge(density, dKpc));
  return outer > innerRad ? azimuthalIntegral(density, dKpc, innerRad, outer, FULL_CIRCLE) : 0;
}

/**
 * J-factor of a cone of half-angle coneRad whose axis lies offsetRad from the halo centre, GeV^2 cm^-5
 * (offsetRad = 0: coneJFactor). Directions beyond the halo's edge contribute nothing.
 */
export function offsetConeJFactor(density: HaloDensity, dKpc: number, coneRad: number, offsetRad: number): number {
  if (!(coneRad > 0 && coneRad <= Math.PI && offsetRad >= 0 && offsetRad <= Math.PI)) {
    throw new RangeError(`offsetConeJFactor: need 0 < cone <= pi and 0 <= offset <= pi, got ${coneRad}, ${offsetRad}`);
  }
  if (offsetRad === 0) return coneJFactor(density, dKpc, coneRad);
  // the full disc around the centre, when the cone holds it
  const disc = coneRad > offsetRad ? coneJFactor(density, dKpc, coneRad - offsetRad) : 0;
  const lo = Math.abs(offsetRad - coneRad);
  const hi = Math.min(offsetRad + coneRad, Math.PI, visibleEdge(density, dKpc));
  if (!(hi > lo)) return disc;
  const cosTheta = Math.cos(coneRad);
  const cosOffset = Math.cos(offsetRad);
  const sinOffset = Math.sin(offsetRad);
  return disc + azimuthalIntegral(density, dKpc, lo, hi, (psi) => {
    const c = (cosTheta - Math.cos(psi) * cosOffset) / (Math.sin(psi) * sinOffset);
    return c <= -1 ? 2 * Math.PI : c >= 1 ? 0 : 2 * Math.acos(c);
  });
}

/**
 * J-factor of the ring innerRad < psi < outerRad around the Galactic Centre without the band of
 * Galactic latitudes |b| < maskRad, GeV^2 cm^-5 (maskRad = 0: ringJFactor). The halo centre is taken
 * to lie in the Galactic plane, as the Galactic Centre does.
 */
export function maskedRingJFactor(density: HaloDensity, dKpc: number, innerRad: number, outerRad: number, maskRad: number): number {
  if (!(maskRad >= 0 && maskRad < Math.PI / 2)) throw new RangeError(`maskedRingJFactor: need 0 <= mask < pi/2, got ${maskRad}`);
  if (maskRad === 0) return ringJFactor(density, dKpc, innerRad, outerRad);
  if (!(innerRad >= 0 && outerRad > innerRad && outerRad <= Math.PI)) {
    throw new RangeError(`maskedRingJFactor: need 0 <= inner < outer <= pi, got ${innerRad}, ${outerRad}`);
  }
  const lo = Math.max(innerRad, maskRad);
  // beyond pi - maskRad every direction lies within the band
  const hi = Math.min(outerRad, visibleEdge(density, dKpc), Math.PI - maskRad);
  if (!(hi > lo)) return 0;
  const sinMask = Math.sin(maskRad);
  return azimuthalIntegral(density, dKpc, lo, hi, (psi) => {
    const s = Math.sin(psi);
    return s > sinMask ? 2 * Math.PI - 4 * Math.asin(sinMask / s) : 0;
  });
}
