/**
 * Names, units and order of the observables of one model point (ledger columns, `point --json`
 * keys). Fixed observables come first; one `events_<detector>` per spec detector and one
 * `flux_<target>_cm2s` per spec target follow in spec order; `flags` is last.
 */

export interface ObservableSpec {
  readonly name: string;
  readonly unit: string;
  readonly doc: string;
}

export const FIXED_OBSERVABLES: readonly ObservableSpec[] = Object.freeze([
  { name: 'omega_h2', unit: '', doc: 'relic abundance Omega h^2 from the full Boltzmann solution (chi + chibar for Dirac)' },
  { name: 'x_f', unit: '', doc: 'freeze-out m/T, where Y = 1.5 Y_eq' },
  { name: 'sigv_fo_cm3s', unit: 'cm^3/s', doc: 'thermally averaged annihilation cross section at x_f' },
  { name: 'sigv0_cm3s', unit: 'cm^3/s', doc: 'annihilation cross section today (Maxwellian halo velocities)' },
  { name: 'sigma_si_p_cm2', unit: 'cm^2', doc: 'spin-independent DM-proton cross section' },
  { name: 'sigma_si_n_cm2', unit: 'cm^2', doc: 'spin-independent DM-neutron cross section' },
  { name: 'sigma_sd_p_cm2', unit: 'cm^2', doc: 'spin-dependent DM-proton cross section' },
  { name: 'sigma_sd_n_cm2', unit: 'cm^2', doc: 'spin-dependent DM-neutron cross section' },
  { name: 'width_med_gev', unit: 'GeV', doc: 'mediator total width used' },
]);

/** Detector and target names become column names, so they are restricted to this pattern. */
export const COLUMN_SAFE_NAME = /^[a-z][a-z0-9_]{0,39}$/;

export const eventsColumn = (detector: string): string => `events_${detector}`;
export const fluxColumn = (target: string): string => `flux_${target}_cm2s`;

/**
 * Unit of an observable column: its FIXED_OBSERVABLES unit, 'cm^-2 s^-1' for a flux column, ''
 * for expected events (a count) and for names that are not observables.
 */
export function observableUnit(name: string): string {
  const fixed = FIXED_OBSERVABLES.find((o) => o.name === name);
  if (fixed) return fixed.unit;
  if (name.startsWith('flux_')) return 'cm^-2 s^-1';
  return '';
}

/** Ordered numeric observable names for a scan with these detectors and targets (flags excluded). */
export function numericObservableNames(detectors: readonly string[], targets: readonly string[]): string[] {
  return [
    ...FIXED_OBSERVABLES.map((o) => o.name),
    ...detectors.map(eventsColumn),
    ...targets.map(fluxColumn),
  ];
}

/**
 * The result of evaluating one point. Numbers are finite, or NaN where a quantity does not exist
 * or could not be computed (stored as NULL; the reason is in flags). `flags` is a sorted,
 * comma-separated list.
 */
export interface Observables {
  readonly values: Readonly<Record<string, number>>;
  readonly flags: string;
}
