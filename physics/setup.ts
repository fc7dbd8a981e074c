/**
 * Scan-level physics inputs: everything that is the same for every point of a scan (halo, detectors,
 * indirect-detection targets, hadronic-input choice). The scan spec's `halo`, `detectors` and
 * `targets` sections are validated into these shapes by scheduler/spec; `prepare()` in
 * physics/evaluate.ts turns them into cached per-scan tables once.
 *
 * Defaults are the product conventions of the shared physics notes (README.md, conventions table).
 */

/** Local dark-matter halo seen by a direct-detection experiment (Standard Halo Model). */
export interface LocalHalo {
  /** local density, GeV/cm^3 */
  readonly rhoLocalGeVcm3: number;
  /** circular speed v0 = sqrt(2) sigma_v, km/s */
  readonly v0KmS: number;
  /** galactic escape speed, km/s */
  readonly vEscKmS: number;
  /** Earth speed in the galactic frame (annual mean), km/s */
  readonly vEarthKmS: number;
}

export type ProfileKind = 'nfw' | 'einasto' | 'burkert';

/** A spherical density profile rho(r). */
export interface Profile {
  readonly kind: ProfileKind;
  /** scale radius, kpc */
  readonly rsKpc: number;
  /** Einasto shape parameter alpha (only for kind 'einasto') */
  readonly alpha?: number;
  /**
   * Normalisation: either the scale density rho_s in GeV/cm^3, or the density at a reference radius
   * (for the Milky Way: the local density at the Sun's distance).
   */
  readonly rhoSGeVcm3?: number;
  /** truncation radius, kpc (density zero beyond); absent means untruncated */
  readonly rTruncKpc?: number;
}

/** The Milky-Way halo for indirect detection. */
export interface GalacticHalo {
  readonly profile: Profile;
  /** distance of the Sun from the Galactic Centre, kpc */
  readonly r0Kpc: number;
  /** density at r0 used to normalise the profile when rhoSGeVcm3 is absent, GeV/cm^3 */
  readonly rhoLocalGeVcm3: number;
  /** one-dimensional velocity dispersion of dark matter today for sigma v today, km/s */
  readonly sigmaVKmS: number;
}

export interface Halo {
  readonly local: LocalHalo;
  readonly galactic: GalacticHalo;
}

/** Efficiency as a flat value or as (recoil energy keVnr, efficiency) pairs interpolated linearly. */
export type Efficiency = number | readonly (readonly [number, number])[];

/** A direct-detection experiment defined in the spec; yields the observable events_<name>. */
export interface Detector {
  /** column-safe name (lower case, digits, underscore) */
  readonly name: string;
  /** element symbol ('Xe', 'Ar', 'Ge', 'Si', 'Na', 'I', ...) or compound formula ('CaWO4', 'C3F8', 'NaI') */
  readonly target: string;
  /** nuclear-recoil energy window [lo, hi], keVnr */
  readonly windowKeV: readonly [number, number];
  readonly efficiency: Efficiency;
  /** exposure, kg day */
  readonly exposureKgDay: number;
}

/** An indirect-detection target defined in the spec; yields flux_<name>_cm2s. */
export interface Target {
  /** column-safe name */
  readonly name: string;
  /** 'galactic_centre': cone around the GC in the galactic halo; 'satellite': a distant halo of its own */
  readonly kind: 'galactic_centre' | 'satellite';
  /** cone half-angle around the target centre, degrees */
  readonly coneDeg: number;
  /**
   * optional: inner half-angle, degrees (0 <= innerDeg < coneDeg): the region is then the ring between
   * innerDeg and coneDeg (e.g. a Galactic-Centre region that leaves out the innermost degrees)
   */
  readonly innerDeg?: number;
  /**
   * optional: angle between the cone's axis and the target centre, degrees (0 to 180; not together
   * with innerDeg): a region off the Galactic Centre, or off a satellite's centre
   */
  readonly offsetDeg?: number;
  /**
   * galactic_centre only, optional: leave out Galactic latitudes |b| < maskLatDeg, degrees (0 to < 90;
   * with a cone or a ring, not with offsetDeg), as analyses of the inner Galaxy mask the plane
   */
  readonly maskLatDeg?: number;
  /** satellite only: distance from the Sun, kpc */
  readonly distanceKpc?: number;
  /** satellite only: its own profile (with truncation radius) */
  readonly profile?: Profile;
  /** photon energy band [lo, hi] in GeV; hi may be Infinity for "above a threshold" */
  readonly energyGeV: readonly [number, number];
  /**
   * satellite only, optional: one-dimensional dark-matter velocity dispersion in the satellite, km/s
   * (dwarfs: ~10). When given, the target's flux uses <sigma v> averaged with this dispersion
   * (velocity-dependent cross sections are much smaller in dwarfs); absent: the Galactic
   * halo.galactic.sigmaVKmS. Must be > 0 and < 3000.
   */
  readonly velocityDispersionKmS?: number;
}

/** Choice of hadronic inputs for direct detection (shared physics notes direct.md §2.3). */
export interface Hadronic {
  /** scalar quark content set: 'A' (default) or 'B' */
  readonly scalarSet: 'A' | 'B';
  /** axial quark spin content set: 'H' (default) */
  readonly spinSet: string;
}

export interface ScanPhysicsSetup {
  readonly halo: Halo;
  readonly detectors: readonly Detector[];
  readonly targets: readonly Target[];
  readonly hadronic: Hadronic;
  /**
   * Optional photon-yield tables that override the built-in approximate fits (physics/indirect/yields.ts),
   * keyed by final state: a fermion name from physics/constants ('b', 'tau', 'mu', ...), 'gg' (mediator
   * decays to gluons) or 'med_med' (the whole mediator-pair cascade). Each table is a list of
   * [x, dN/dx] rows with x = E_gamma / m_chi strictly increasing in (0, 1] and dN/dx >= 0 photons per
   * annihilation (both primaries); interpolated as a power law between positive rows, zero outside.
   * A table for a fermion also serves as the rest-frame spectrum of mediator decays into that fermion
   * (x' = 2 E'/m_med). Absent: the fits, flagged 'approximate_yields'.
   */
  readonly yieldTables?: Readonly<Record<string, readonly (readonly [number, number])[]>>;
  /**
   * Sommerfeld enhancement of s-wave annihilation today (physics/indirect/sommerfeld.ts): 'hulthen'
   * multiplies the s-wave part of sigma v in sigv0 and in every target's flux by the halo average of
   * the Hulthen factor, for scalar and (Dirac) vector mediators. Absent: no factor (the default).
   */
  readonly sommerfeld?: 'hulthen';
}

/** Product defaults (shared physics notes README.md, conventions table). */
export const DEFAULT_HALO: Halo = Object.freeze({
  // Baxter et al. 2021, EPJC 81, 907 (arXiv:2105.00599) recommended SHM parameters
  local: Object.freeze({ rhoLocalGeVcm3: 0.3, v0KmS: 238, vEscKmS: 544, vEarthKmS: 252.2 }),
  galactic: Object.freeze({
    // NFW with r_s = 20 kpc: common practice, no source; R0 = 8.178 kpc: GRAVITY Collaboration 2019, A&A 625, L10
    profile: Object.freeze({ kind: 'nfw' as const, rsKpc: 20 }),
    r0Kpc: 8.178,
    rhoLocalGeVcm3: 0.3,
    // sigma_v = v0/sqrt2 with v0 = 238 km/s (Baxter et al. 2021)
    sigmaVKmS: 238 / Math.SQRT2,
  }),
});

export const DEFAULT_HADRONIC: Hadronic = Object.freeze({ scalarSet: 'A', spinSet: 'H' });

export const EMPTY_SETUP: ScanPhysicsSetup = Object.freeze({
  halo: DEFAULT_HALO,
  detectors: Object.freeze([]),
  targets: Object.freeze([]),
  hadronic: DEFAULT_HADRONIC,
});
