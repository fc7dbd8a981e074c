/**
 * The whole physics of one model point, in dependency order:
 *
 *   mediator width -> annihilation cross sections -> thermal average + freeze-out (relic)
 *                  -> direct detection (nucleon cross sections, detector events)
 *                  -> indirect detection (sigma v today, photon flux per target)
 *
 * `prepare(setup)` does everything that does not depend on the point once per scan (isotope data,
 * detector response kernels, J-factors, yield integrals); `evaluate(point, prepared)` is pure and
 * deterministic: the same input gives bit-identical output in any process or thread.
 *
 * Validity: tree-level simplified models with one mediator; see physics/validity.ts and each stage's
 * head comment for where the approximations stop. Results are research approximations.
 */
import { mediatorWidth } from './widths.js';
import { buildAnnihilation } from './annihilation.js';
import { relicAbundance, DEFAULT_RELIC_KNOBS } from './relic/relic.js';
import { prepareDirect, directObservables, type DirectPrepared } from './direct/index.js';
import { prepareIndirect, indirectObservables, INDIRECT_KNOBS, SOMMERFELD_KNOBS, type IndirectPrepared } from './indirect/index.js';
import { validityFlags } from './validity.js';
import type { ModelPoint } from './model.js';
import type { ScanPhysicsSetup } from './setup.js';
import { eventsColumn, fluxColumn, numericObservableNames, type Observables } from './observables.js';

export interface Prepared {
  readonly setup: ScanPhysicsSetup;
  /** numeric observable names in column order (flags excluded) */
  readonly observableNames: readonly string[];
  /** numerical knobs in force, stored with each scan for provenance */
  readonly knobs: Readonly<Record<string, unknown>>;
  readonly direct: DirectPrepared;
  readonly indirect: IndirectPrepared;
}

export function prepare(setup: ScanPhysicsSetup): Prepared {
  return Object.freeze({
    setup,
    observableNames: Object.freeze(
      numericObservableNames(setup.detectors.map((d) => d.name), setup.targets.map((t) => t.name)),
    ),
    // the Sommerfeld knobs only when the factor is on, so scans made before it existed resume unchanged
    knobs: Object.freeze({ relic: DEFAULT_RELIC_KNOBS, indirect: setup.sommerfeld ? { ...INDIRECT_KNOBS, sommerfeld: SOMMERFELD_KNOBS } : INDIRECT_KNOBS }),
    direct: prepareDirect(setup),
    indirect: prepareIndirect(setup),
  });
}

export function evaluate(point: ModelPoint, prepared: Prepared): Observables {
  const widthMedGeV = point.width_med ?? mediatorWidth(point).totalGeV;
  const annihilation = buildAnnihilation(point, widthMedGeV);
  const relic = relicAbundance(annihilation, point.dm);
  const direct = directObservables(point, prepared.direct);
  const indirect = indirectObservables(point, annihilation, prepared.indirect);

  const values: Record<string, number> = {
    omega_h2: relic.omegaH2,
    x_f: relic.xF,
    sigv_fo_cm3s: relic.sigvFoCm3s,
    sigv0_cm3s: indirect.sigv0Cm3s,
    sigma_si_p_cm2: direct.sigmaSiPCm2,
    sigma_si_n_cm2: direct.sigmaSiNCm2,
    sigma_sd_p_cm2: direct.sigmaSdPCm2,
    sigma_sd_n_cm2: direct.sigmaSdNCm2,
    width_med_gev: widthMedGeV,
  };
  const { detectors, targets } = prepared.setup;
  for (let i = 0; i < detectors.length; i++) values[eventsColumn(detectors[i]!.name)] = direct.eventsByDetector[i] ?? NaN;
  for (let i = 0; i < targets.length; i++) values[fluxColumn(targets[i]!.name)] = indirect.fluxByTarget[i] ?? NaN;
  const flags = joinFlags([validityFlags(point, widthMedGeV), relic.flags, direct.flags, indirect.flags]);
  return Object.freeze({ values: Object.freeze(values), flags });
}

/** The distinct flags of all stages, sorted, comma-joined ('' when none: the common case, no allocation). */
function joinFlags(lists: readonly (readonly string[])[]): string {
  const all: string[] = [];
  for (const list of lists) for (const f of list) if (!all.includes(f)) all.push(f);
  return all.length === 0 ? '' : all.sort().join(',');
}
