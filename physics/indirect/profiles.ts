/**
 * Dark-matter density profiles for indirect detection: NFW, Einasto and Burkert, their
 * normalisation, and the outer radius used for line-of-sight integrals.
 *
 * What: a resolved `HaloDensity` (scale density rho_s in GeV/cm^3, scale radius, outer radius) for
 * the Milky Way (normalised to the local density at the Sun's distance R0 unless rho_s is given)
 * and for a satellite target (rho_s must be given; its own truncation radius).
 *
 * Method: closed forms (shared notes indirect.md B6):
 *   NFW      rho = rho_s / [ (r/r_s) (1 + r/r_s)^2 ]            Navarro, Frenk & White 1996, ApJ 462, 563
 *   Einasto  rho = rho_s exp{ -(2/a) [ (r/r_s)^a - 1 ] }        Einasto 1965; a = 0.17 default
 *                                                              (Navarro et al. 2004, MNRAS 349, 1039)
 *   Burkert  rho = rho_s / [ (1 + r/r_s)(1 + (r/r_s)^2) ]      Burkert 1995, ApJ 447, L25
 * Normalisation rho_s = rho_0 / shape(R0 / r_s), shape = profile with rho_s = 1.
 *
 * Validity: spherical, smooth halos; no substructure boost, no baryonic contraction. The density is
 * zero beyond the outer radius: the truncation radius when given, otherwise 200 kpc for the Milky
 * Way (indirect.md B6: cones <= 30 deg change by < 1e-4 when going to 1000 kpc) and
 * UNTRUNCATED_OUTER_RADIUS_RS scale radii for a satellite.
 *
 * Accuracy: exact closed forms in double precision.
 */
import { InvalidInputError, type Issue } from '../issue.js';
import type { GalacticHalo, Profile, ProfileKind, Target } from '../setup.js';

/** Einasto shape parameter when the spec gives none (Navarro et al. 2004, MNRAS 349, 1039 [memory, indirect.md B6]). */
export const EINASTO_ALPHA_DEFAULT = 0.17;

/** Outer radius of an untruncated Milky-Way halo, kpc (indirect.md B6, common practice). */
export const GALACTIC_OUTER_RADIUS_KPC = 200;

/**
 * Outer radius of an untruncated satellite halo in units of its scale radius. rho^2 falls at least
 * as r^-6 for all three profiles, so the volume integral beyond 1000 r_s is below ~1e-9 of the total.
 */
export const UNTRUNCATED_OUTER_RADIUS_RS = 1000;

export interface HaloDensity {
  readonly kind: ProfileKind;
  /** scale radius, kpc */
  readonly rsKpc: number;
  /** scale density, GeV/cm^3 */
  readonly rhoSGeVcm3: number;
  /** Einasto alpha (NaN for the other profiles) */
  readonly alpha: number;
  /** radius beyond which the density is zero, kpc */
  readonly rMaxKpc: number;
  /** density at galactocentric (halo-centric) radius r in kpc, GeV/cm^3; zero beyond rMaxKpc */
  densityGeVcm3(rKpc: number): number;
}

/** The profile shape with rho_s = 1 at x = r / r_s (no truncation). */
export function profileShape(kind: ProfileKind, x: number, alpha: number): number {
  switch (kind) {
    case 'nfw':
      return 1 / (x * (1 + x) * (1 + x));
    case 'einasto':
      return Math.exp((-2 / alpha) * (Math.pow(x, alpha) - 1));
    case 'burkert':
      return 1 / ((1 + x) * (1 + x * x));
  }
}

function checkPositive(value: number | undefined, path: string, what: string, issues: Issue[]): void {
  if (value === undefined || !(Number.isFinite(value) && value > 0)) {
    issues.push({
      code: 'out_of_range',
      path,
      message: `${what} must be a finite number > 0`,
      seen: String(value),
      allowed: '> 0',
    });
  }
}

function checkProfile(profile: Profile, path: string, issues: Issue[]): void {
  if (!['nfw', 'einasto', 'burkert'].includes(profile.kind)) {
    issues.push({
      code: 'invalid_choice', path: `${path}.kind`, message: 'profile kind must be one of nfw, einasto, burkert',
      seen: String(profile.kind), allowed: 'nfw, einasto, burkert',
    });
  }
  checkPositive(profile.rsKpc, `${path}.rsKpc`, 'scale radius (kpc)', issues);
  if (profile.alpha !== undefined) checkPositive(profile.alpha, `${path}.alpha`, 'Einasto alpha', issues);
  if (profile.rhoSGeVcm3 !== undefined) checkPositive(profile.rhoSGeVcm3, `${path}.rhoSGeVcm3`, 'scale density (GeV/cm^3)', issues);
  if (profile.rTruncKpc !== undefined) checkPositive(profile.rTruncKpc, `${path}.rTruncKpc`, 'truncation radius (kpc)', issues);
}

function makeDensity(profile: Profile, rhoSGeVcm3: number, rMaxKpc: number): HaloDensity {
  const kind = profile.kind;
  const rsKpc = profile.rsKpc;
  const alpha = kind === 'einasto' ? (profile.alpha ?? EINASTO_ALPHA_DEFAULT) : NaN;
  return Object.freeze({
    kind,
    rsKpc,
    rhoSGeVcm3,
    alpha,
    rMaxKpc,
    densityGeVcm3(rKpc: number): number {
      if (rKpc > rMaxKpc) return 0;
      return rhoSGeVcm3 * profileShape(kind, rKpc / rsKpc, alpha);
    },
  });
}

/**
 * The Milky-Way halo: rho_s from the profile when given, otherwise rho_0 / shape(R0 / r_s).
 * Throws InvalidInputError naming the field when an input is out of range.
 */
export function galacticDensity(galactic: GalacticHalo, path = 'halo.galactic'): HaloDensity {
  const issues: Issue[] = [];
  checkProfile(galactic.profile, `${path}.profile`, issues);
  checkPositive(galactic.r0Kpc, `${path}.r0Kpc`, 'distance of the Sun from the Galactic Centre (kpc)', issues);
  if (galactic.profile.rhoSGeVcm3 === undefined) {
    checkPositive(galactic.rhoLocalGeVcm3, `${path}.rhoLocalGeVcm3`, 'local dark-matter density (GeV/cm^3)', issues);
  }
  if (issues.length > 0) throw new InvalidInputError(issues);
  const p = galactic.profile;
  const alpha = p.alpha ?? EINASTO_ALPHA_DEFAULT;
  const rhoS = p.rhoSGeVcm3 ?? galactic.rhoLocalGeVcm3 / profileShape(p.kind, galactic.r0Kpc / p.rsKpc, alpha);
  return makeDensity(p, rhoS, p.rTruncKpc ?? GALACTIC_OUTER_RADIUS_KPC);
}

/** A satellite target's own halo; its scale density must be given. */
export function satelliteDensity(target: Target, path: string): HaloDensity {
  const issues: Issue[] = [];
  const profile = target.profile;
  if (profile === undefined) {
    issues.push({ code: 'missing', path: `${path}.profile`, message: 'a satellite target needs its own profile' });
    throw new InvalidInputError(issues);
  }
  checkProfile(profile, `${path}.profile`, issues);
  checkPositive(profile.rhoSGeVcm3, `${path}.profile.rhoSGeVcm3`, 'satellite scale density (GeV/cm^3)', issues);
  if (issues.length > 0) throw new InvalidInputError(issues);
  return makeDensity(profile, profile.rhoSGeVcm3 as number, profile.rTruncKpc ?? UNTRUNCATED_OUTER_RADIUS_RS * profile.rsKpc);
}
