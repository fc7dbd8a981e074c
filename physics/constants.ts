/**
 * Physical constants as sourced records.
 *
 * Every number used by the physics stages comes from here. Base values carry their unit and source;
 * derived values are computed from base values in code, so one edit propagates everywhere. The
 * edition string below is stored in each scan's provenance.
 *
 * Sources:
 *  - CODATA 2018: E. Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021).
 *  - PDG 2024: S. Navas et al. (Particle Data Group), Phys. Rev. D 110, 030001 (2024).
 *  - Planck 2018 VI: N. Aghanim et al., A&A 641, A6 (2020), arXiv:1807.06209.
 *  - Fixsen 2009: D. J. Fixsen, ApJ 707, 916 (2009) (CMB temperature).
 */

export interface Constant {
  readonly value: number;
  readonly unit: string;
  readonly source: string;
}

const c = (value: number, unit: string, source: string): Constant => Object.freeze({ value, unit, source });

/** Stored with every scan so results can be traced to the inputs used. */
export const CONSTANTS_EDITION = 'CODATA2018+PDG2024+Planck2018';

// ---------------------------------------------------------------- base constants
export const BASE = Object.freeze({
  gNewton: c(6.6743e-11, 'm^3 kg^-1 s^-2', 'CODATA 2018'),
  hbarC: c(0.1973269804, 'GeV fm', 'CODATA 2018 (exact SI-derived: hbar*c = 197.3269804 MeV fm)'),
  hbar: c(6.582119569e-25, 'GeV s', 'CODATA 2018 (exact SI-derived)'),
  speedOfLight: c(2.99792458e10, 'cm/s', 'SI exact'),
  electronVolt: c(1.602176634e-19, 'J', 'SI exact'),
  boltzmannK: c(8.617333262e-14, 'GeV/K', 'CODATA 2018 (exact SI-derived)'),
  megaparsec: c(3.0856775814913673e24, 'cm', 'IAU 2015 Resolution B2 (exact pc definition)'),
  kiloparsec: c(3.0856775814913673e21, 'cm', 'IAU 2015 Resolution B2 (exact pc definition)'),
  atomicMassUnit: c(0.93149410242, 'GeV', 'CODATA 2018'),
  protonMass: c(0.93827208816, 'GeV', 'CODATA 2018'),
  neutronMass: c(0.93956542052, 'GeV', 'CODATA 2018'),
  /** Neutral-pion mass: the photon-yield fits are cut below E = m_pi0 / 2. */
  pi0Mass: c(0.1349768, 'GeV', 'PDG 2024, pi0 summary table: 134.9768 MeV'),
  /** Fine-structure constant at zero momentum transfer (final-state radiation). */
  alphaEm: c(1 / 137.035999084, '1', 'CODATA 2018: 1/alpha = 137.035999084'),
  solarMass: c(1.98841e30, 'kg', 'IAU 2015 Resolution B3 nominal GM_sun / CODATA 2018 G'),
  cmbTemperature: c(2.7255, 'K', 'Fixsen 2009, ApJ 707, 916'),
  hubble100: c(100, 'km s^-1 Mpc^-1', 'definition of h'),
  /** Electroweak vacuum expectation value from G_F: v = (sqrt2 G_F)^(-1/2). */
  higgsVev: c(246.22, 'GeV', 'PDG 2024, from G_F = 1.1663788e-5 GeV^-2'),
  /** Strong coupling used for the loop-induced gluon width (fixed, not run). */
  alphaS: c(0.1, '1', 'common practice, no source: fixed alpha_s near the weak scale (PDG 2024 alpha_s(M_Z)=0.1180 runs to ~0.1 at a few hundred GeV)'),
  /** Planck 2018 cold-dark-matter density. */
  omegaCh2: c(0.12, '1', 'Planck 2018 VI, A&A 641, A6, abstract: 0.120 +- 0.001'),
  omegaCh2Sigma: c(0.001, '1', 'Planck 2018 VI, A&A 641, A6, abstract'),
  /** Omega h^2 = C (m/GeV) Y0: C = s0 / (rho_c/h^2). Derived in shared physics notes relic.md §1.5. */
  omegaYieldFactor: c(2.7439e8, 'GeV^-1', 's0 = 2891.2 cm^-3 (PDG 2024 astrophysical constants) / rho_c/h^2 = 1.05368e-5 GeV cm^-3 (CODATA 2018 G)'),
});

// ---------------------------------------------------------------- fermion masses (PDG 2024)
/** A Standard-Model fermion that the mediator can couple to. */
export interface Fermion {
  readonly name: string;
  readonly massGeV: number;
  /** colour factor N_c */
  readonly colours: number;
  readonly kind: 'quark' | 'lepton';
  readonly source: string;
}

const f = (name: string, massGeV: number, colours: number, kind: 'quark' | 'lepton', source: string): Fermion =>
  Object.freeze({ name, massGeV, colours, kind, source });

/**
 * Quark masses: MS-bar masses for u, d, s at 2 GeV, m_c(m_c), m_b(m_b), and the top pole mass from
 * direct measurements. The choice of running versus pole masses is a convention that changes
 * spin-0 rates by up to ~2x (see README, validity limits).
 */
export const QUARKS: readonly Fermion[] = Object.freeze([
  f('u', 2.16e-3, 3, 'quark', 'PDG 2024 quark summary, m_u(2 GeV)'),
  f('d', 4.70e-3, 3, 'quark', 'PDG 2024 quark summary, m_d(2 GeV)'),
  f('s', 93.5e-3, 3, 'quark', 'PDG 2024 quark summary, m_s(2 GeV)'),
  f('c', 1.273, 3, 'quark', 'PDG 2024 quark summary, m_c(m_c)'),
  f('b', 4.183, 3, 'quark', 'PDG 2024 quark summary, m_b(m_b)'),
  f('t', 172.57, 3, 'quark', 'PDG 2024 quark summary, direct measurements'),
]);

export const LEPTONS: readonly Fermion[] = Object.freeze([
  f('e', 0.51099895e-3, 1, 'lepton', 'CODATA 2018 / PDG 2024'),
  f('mu', 0.1056583755, 1, 'lepton', 'CODATA 2018 / PDG 2024'),
  f('tau', 1.77693, 1, 'lepton', 'PDG 2024 lepton summary'),
]);

// ---------------------------------------------------------------- derived constants
const GeV_PER_KG = 1 / (BASE.electronVolt.value * 1e9 / (BASE.speedOfLight.value / 100) ** 2);

/** Planck mass M_Pl = (hbar c / G)^(1/2) in GeV (non-reduced). The only Planck-mass convention used. */
export const PLANCK_MASS_GEV: number = (() => {
  const hbarSI = BASE.hbar.value * BASE.electronVolt.value * 1e9; // J s
  const cSI = BASE.speedOfLight.value / 100; // m/s
  const mKg = Math.sqrt((hbarSI * cSI) / BASE.gNewton.value);
  return mKg * GeV_PER_KG;
})();

/** 1 GeV^-2 in cm^2: (hbar c)^2 with hbar c in GeV cm. */
export const GEV2_TO_CM2: number = (BASE.hbarC.value * 1e-13) ** 2;

/** 1 GeV^-2 times c in cm^3/s: converts sigma*v from natural units. */
export const GEV2_TO_CM3S: number = GEV2_TO_CM2 * BASE.speedOfLight.value;

/** Speed of light in km/s. */
export const C_KM_S: number = BASE.speedOfLight.value / 1e5;

/** Neutral-pion mass in GeV. */
export const PI0_MASS_GEV: number = BASE.pi0Mass.value;

/** Fine-structure constant alpha_em. */
export const ALPHA_EM: number = BASE.alphaEm.value;

/** GeV per solar mass. */
export const SOLAR_MASS_GEV: number = BASE.solarMass.value * GeV_PER_KG;

/** Omega h^2 = OMEGA_YIELD_FACTOR * (m/GeV) * Y0. */
export const OMEGA_YIELD_FACTOR: number = BASE.omegaYieldFactor.value;
