/**
 * Prompt photon yields dN/dx per annihilation (x = E_gamma / m_chi, both primaries counted) for each
 * final state, and the boosted cascade spectrum of chi chi -> M M with M -> f fbar.
 *
 * What and method (shared notes indirect.md B7):
 *  - quarks and gluon pairs: the single hadronic fit dN/dx = 0.73 e^{-7.8 x} x^{-1.5} of Bergstrom,
 *    Ullio & Buckley 1998 (Astropart. Phys. 9, 137) [memory], set to zero below
 *    E = m_pi0 / 2 where its x^{-1.5} rise is unphysical;
 *  - tau+tau-: the fit x^{-1.31} (6.94 x - 4.93 x^2 - 0.51 x^3) e^{-4.53 x} recalled from Fornengo,
 *    Pieri & Scopel 2004 (PRD 70, 103529) [memory]; it comes from full event simulation, so it is
 *    taken to include the radiation off the taus (no FSR added, to avoid double counting);
 *  - e+e-, mu+mu- (masses from physics/constants): leading-log collinear final-state radiation
 *    dN/dx = (alpha_em/pi) [1 + (1-x)^2]/x ln[s (1-x)/m_l^2], s = 4 m_chi^2, zero where the log is
 *    negative (Birkedal, Matchev, Perelstein & Spray 2005, hep-ph/0507194 [memory]);
 *  - cascades (B7.5): a mediator of energy m_chi (gamma_b = m_chi/M) decaying isotropically into a
 *    final state k with rest-frame yield dN_k/dx' (x' = 2 E'/M, i.e. the annihilation yield at a
 *    dark-matter mass M/2) gives, for two mediators per annihilation,
 *        dN/dx = (2/beta_b) Int_{2x/(1+beta_b)}^{min(1, 2x/(1-beta_b))} dx'/x' dN_k/dx'(x').
 *    Photon counts in a band [x_lo, x_hi] follow by exchanging the order of integration:
 *        N = (2/beta_b) Int_0^1 dx'/x' dN_k/dx' |[x'(1-beta_b)/2, x'(1+beta_b)/2] cut [x_lo, x_hi]|.
 *  - a user table of (x, dN/dx) pairs for a channel overrides its fit; it is interpolated as a
 *    power law between nodes where both values are positive, linearly otherwise, zero outside.
 *
 * Validity: the fits are mass-independent shapes meant for m_chi >~ 10-100 GeV; b bbar and W+W-
 * differ in reality and the fit ignores it. Every result that uses a fit carries the flag
 * 'approximate_yields'. Expect factor ~2 uncertainty on the flux in a given band.
 *
 * Accuracy: the closed forms are exact; band integrals are done in ln x by the adaptive quadrature of
 * physics/numerics to a relative tolerance of YIELD_REL_TOL.
 */
import { ALPHA_EM, LEPTONS, PI0_MASS_GEV, QUARKS } from '../constants.js';
import type { Issue } from '../issue.js';
import { integrate } from '../numerics/quadrature.js';

/** Relative tolerance of the band integrals of the yields (numerical knob). */
export const YIELD_REL_TOL = 1e-8;

/** Below this boost velocity a cascade is treated as decays at rest (relative error ~beta^2). */
const CASCADE_BETA_AT_REST = 1e-6;

export type YieldKind = 'hadronic' | 'tau' | 'fsr' | 'table';

/** A photon spectrum of one final state at a given dark-matter mass: x -> dN/dx. */
export type Spectrum = (x: number) => number;

/** Hadronic fit of Bergstrom, Ullio & Buckley 1998 (Astropart. Phys. 9, 137) [memory]. */
export function hadronicYield(x: number, mChiGeV: number): number {
  if (!(x > 0 && x < 1) || x * mChiGeV < PI0_MASS_GEV / 2) return 0;
  return (0.73 * Math.exp(-7.8 * x)) / (x * Math.sqrt(x));
}

/** tau+tau- fit recalled from Fornengo, Pieri & Scopel 2004 (PRD 70, 103529) [memory]. */
export function tauYield(x: number): number {
  if (!(x > 0 && x < 1)) return 0;
  return Math.pow(x, -1.31) * (6.94 * x - 4.93 * x * x - 0.51 * x * x * x) * Math.exp(-4.53 * x);
}

/**
 * Leading-log final-state radiation off a fermion pair of charge Q = +-1 and mass mFermionGeV
 * (Birkedal, Matchev, Perelstein & Spray 2005, hep-ph/0507194 [memory]) with s = 4 m_chi^2.
 */
export function fsrYield(x: number, mChiGeV: number, mFermionGeV: number): number {
  if (!(x > 0 && x < 1)) return 0;
  const log = Math.log((4 * mChiGeV * mChiGeV * (1 - x)) / (mFermionGeV * mFermionGeV));
  if (!(log > 0)) return 0;
  return ((ALPHA_EM / Math.PI) * (1 + (1 - x) * (1 - x)) * log) / x;
}

/** A user-supplied dN/dx table, x = E/m_chi strictly increasing in (0, 1], dN/dx >= 0. */
export type YieldTable = readonly (readonly [number, number])[];

/** The interpolant of a yield table: power law between positive nodes, linear otherwise, zero outside. */
export function tableSpectrum(table: YieldTable): Spectrum {
  const xs = Float64Array.from(table, (p) => p[0]);
  const ys = Float64Array.from(table, (p) => p[1]);
  const n = xs.length;
  return (x: number): number => {
    if (!(x >= (xs[0] as number) && x <= (xs[n - 1] as number))) return 0;
    let lo = 0;
    let hi = n - 1;
    while (hi - lo > 1) {
      const mid = (lo + hi) >> 1;
      if ((xs[mid] as number) <= x) lo = mid;
      else hi = mid;
    }
    const x0 = xs[lo] as number;
    const x1 = xs[hi] as number;
    const y0 = ys[lo] as number;
    const y1 = ys[hi] as number;
    if (x1 === x0) return y0;
    if (y0 > 0 && y1 > 0) return y0 * Math.pow(y1 / y0, Math.log(x / x0) / Math.log(x1 / x0));
    return y0 + ((y1 - y0) * (x - x0)) / (x1 - x0);
  };
}

/** Where the yield of one final state comes from. */
export interface YieldSource {
  readonly kind: YieldKind;
  /** the fermion mass for 'fsr', GeV */
  readonly fermionMassGeV?: number;
  /** the table for 'table' */
  readonly table?: YieldTable;
}

/** The photon spectrum of a final state produced at rest-frame energy 2 m, as a function of x = E/m. */
export function spectrumOf(source: YieldSource, mGeV: number): Spectrum {
  switch (source.kind) {
    case 'hadronic':
      return (x) => hadronicYield(x, mGeV);
    case 'tau':
      return tauYield;
    case 'fsr': {
      const mf = source.fermionMassGeV as number;
      return (x) => fsrYield(x, mGeV, mf);
    }
    case 'table':
      return tableSpectrumOf(source.table as YieldTable);
  }
}

/**
 * One interpolant per user table (the table arrays live as long as the prepared setup): building it
 * copies the table, which spectrumOf would otherwise do at every photon-yield memo miss, i.e. at
 * every new mass of a random scan. Same function, so the same numbers.
 */
const TABLE_SPECTRA = new WeakMap<YieldTable, Spectrum>();

function tableSpectrumOf(table: YieldTable): Spectrum {
  let f = TABLE_SPECTRA.get(table);
  if (f === undefined) {
    f = tableSpectrum(table);
    TABLE_SPECTRA.set(table, f);
  }
  return f;
}

/** Number of photons of a spectrum with x in [xLo, xHi] (band integral in ln x). */
export function bandCount(spectrum: Spectrum, xLo: number, xHi: number, breakpoints: readonly number[] = []): number {
  const lo = Math.max(xLo, Number.MIN_VALUE);
  const hi = Math.min(xHi, 1);
  if (!(hi > lo)) return 0;
  const points = breakpoints.filter((b) => b > lo && b < hi).map(Math.log);
  return integrate((y: number) => {
    const x = Math.exp(y);
    return x * spectrum(x);
  }, Math.log(lo), Math.log(hi), { relTol: YIELD_REL_TOL, breakpoints: points }).value;
}

/** Energy sum: Int x dN/dx dx over (xLo, 1) = 2 x (fraction of 2 m_chi carried by photons). */
export function energySum(spectrum: Spectrum, xLo: number, breakpoints: readonly number[] = []): number {
  const lo = Math.max(xLo, Number.MIN_VALUE);
  const points = breakpoints.filter((b) => b > lo && b < 1).map(Math.log);
  return integrate((y: number) => {
    const x = Math.exp(y);
    return x * x * spectrum(x);
  }, Math.log(lo), 0, { relTol: YIELD_REL_TOL, breakpoints: points }).value;
}

/**
 * Cascade spectrum dN/dx of chi chi -> M M, M -> k, at a given x (both mediators counted), from the
 * per-decay rest-frame spectrum perDecay(x'), x' = 2 E'/M. beta is the mediator speed sqrt(1 - M^2/m_chi^2).
 */
export function cascadeYield(
  perDecay: Spectrum, beta: number, x: number, perDecayBreaks: readonly number[] = [], relTol = YIELD_REL_TOL,
): number {
  if (!(x > 0 && x < 1)) return 0;
  if (beta < CASCADE_BETA_AT_REST) return 4 * perDecay(2 * x);
  const lo = (2 * x) / (1 + beta);
  const hi = Math.min(1, (2 * x) / (1 - beta));
  if (!(hi > lo)) return 0;
  // a jump of the per-decay spectrum (hadronic cut) inside the range must be a breakpoint, or the
  // adaptive rule misjudges its error for some x
  const points = perDecayBreaks.filter((p) => p > lo && p < hi).map(Math.log);
  return (2 / beta) * integrate((y: number) => perDecay(Math.exp(y)), Math.log(lo), Math.log(hi), { relTol, breakpoints: points }).value;
}

/**
 * Photons of a cascade with x in [xLo, xHi] (both mediators counted):
 * (2/beta) Int dx'/x' perDecay(x') |[x'(1-beta)/2, x'(1+beta)/2] cut [xLo, xHi]|.
 */
export function cascadeBandCount(perDecay: Spectrum, beta: number, xLo: number, xHi: number, perDecayBreaks: readonly number[] = []): number {
  const hiX = Math.min(xHi, 1);
  if (!(hiX > xLo)) return 0;
  if (beta < CASCADE_BETA_AT_REST) {
    // decays at rest: x = x'/2 exactly, two mediators
    return 2 * bandCount(perDecay, 2 * xLo, 2 * hiX, perDecayBreaks);
  }
  const a = (1 - beta) / 2;
  const b = (1 + beta) / 2;
  const lo = Math.max(xLo / b, Number.MIN_VALUE);
  const hi = Math.min(1, hiX / a);
  if (!(hi > lo)) return 0;
  const kinks = [xLo / a, hiX / b, hiX / a, ...perDecayBreaks].filter((k) => k > lo && k < hi).map(Math.log);
  kinks.sort((p, q) => p - q);
  const value = integrate((y: number) => {
    const xp = Math.exp(y);
    const overlap = Math.min(b * xp, hiX) - Math.max(a * xp, xLo);
    return overlap > 0 ? perDecay(xp) * overlap : 0;
  }, Math.log(lo), Math.log(hi), { relTol: YIELD_REL_TOL, breakpoints: kinks }).value;
  return (2 / beta) * value;
}

// ---------------------------------------------------------------- channel -> yield source

const QUARK_NAMES: ReadonlySet<string> = new Set(QUARKS.map((q) => q.name));
const FSR_LEPTONS: ReadonlyMap<string, number> = new Map(
  LEPTONS.filter((l) => l.name !== 'tau').map((l) => [l.name, l.massGeV] as [string, number]),
);

/** Final states that have a built-in yield: quarks, gluon pairs (mediator decays), charged leptons. */
export const FIT_CHANNELS: readonly string[] = Object.freeze([...QUARK_NAMES, 'gg', 'tau', ...FSR_LEPTONS.keys()]);
/** Final states a user yield table may be given for: those with a fit, and the whole mediator-pair cascade. */
export const TABLE_CHANNELS: readonly string[] = Object.freeze([...FIT_CHANNELS, 'med_med']);

/**
 * The yield source of a final state: the user table when one is given for it, else the built-in fit,
 * else null (no photon yield known; the caller flags it). `key` identifies the spectrum shape for
 * caching: all quarks share the hadronic fit.
 */
export function yieldSourceFor(channel: string, tables: Readonly<Record<string, YieldTable>> | undefined): (YieldSource & { readonly key: string }) | null {
  const table = tables?.[channel];
  if (table !== undefined) return { kind: 'table', table, key: `table:${channel}` };
  if (QUARK_NAMES.has(channel) || channel === 'gg') return { kind: 'hadronic', key: 'hadronic' };
  if (channel === 'tau') return { kind: 'tau', key: 'tau' };
  const mass = FSR_LEPTONS.get(channel);
  if (mass !== undefined) return { kind: 'fsr', fermionMassGeV: mass, key: `fsr:${channel}` };
  return null;
}

/** Points in x where a spectrum at mass m is not smooth (hadronic cut, FSR end point, table nodes). */
export function spectrumBreaks(source: YieldSource, mGeV: number): number[] {
  switch (source.kind) {
    case 'hadronic':
      return [PI0_MASS_GEV / (2 * mGeV)];
    case 'tau':
      return [];
    case 'fsr': {
      const mf = source.fermionMassGeV as number;
      return [1 - (mf * mf) / (4 * mGeV * mGeV)];
    }
    case 'table':
      return (source.table as YieldTable).map((p) => p[0]);
  }
}

/**
 * Checks user yield tables: at least two rows, x strictly increasing in (0, 1], dN/dx finite and
 * >= 0. Returns every problem with its path (e.g. 'yieldTables.b[3]').
 */
export function checkYieldTables(tables: Readonly<Record<string, YieldTable>>, path = 'yieldTables'): Issue[] {
  const issues: Issue[] = [];
  for (const [channel, table] of Object.entries(tables)) {
    const p = `${path}.${channel}`;
    if (!TABLE_CHANNELS.includes(channel)) {
      issues.push({ code: 'invalid_choice', path: p, message: `no final state '${channel}' takes a yield table`, seen: channel, allowed: TABLE_CHANNELS.join(', ') });
      continue;
    }
    if (!Array.isArray(table) || table.length < 2) {
      issues.push({ code: 'type', path: p, message: 'a yield table needs at least two [x, dN/dx] rows', allowed: '[[x, dNdx], ...], x = E/m_chi' });
      continue;
    }
    let previous = 0;
    table.forEach((row, i) => {
      const x = row?.[0];
      const y = row?.[1];
      if (typeof x !== 'number' || !(x > previous && x <= 1)) {
        issues.push({
          code: 'out_of_range', path: `${p}[${i}][0]`, message: 'x = E/m_chi must increase strictly within (0, 1]',
          seen: String(x), allowed: `${previous} < x <= 1`,
        });
      } else previous = x;
      if (typeof y !== 'number' || !(Number.isFinite(y) && y >= 0)) {
        issues.push({ code: 'out_of_range', path: `${p}[${i}][1]`, message: 'dN/dx must be a finite number >= 0', seen: String(y), allowed: '>= 0' });
      }
    });
  }
  return issues;
}
