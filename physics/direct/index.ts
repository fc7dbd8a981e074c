/**
 * Direct-detection pillar: public entry points. `prepareDirect` once per scan, then
 * `directObservables` per point (see prepare.ts); the building blocks are exported for tests,
 * constraints (statistics) and documentation.
 */
export { prepareDirect, directObservables, KERNEL_MEMO_CAPACITY, type DirectPrepared, type DirectResult } from './prepare.js';
export { nucleonCouplings, nucleonCouplingsFor, LIGHT_MEDIATOR_GEV, type Bilinear, type HadronicInputs, type NucleonCouplings } from './nucleon.js';
export { SCALAR_SETS, SPIN_SETS, scalarSet, spinSet } from './hadronic.js';
export { ELEMENTS, parseFormula, targetIsotopes } from './isotopes.js';
export {
  poissonUpperLimit,
  feldmanCousinsInterval,
  feldmanCousinsUpperLimit,
  maximumGapUpperLimit,
  maximumGapProbability,
  gapFractions,
  type PoissonLimit,
  type ConfidenceInterval,
} from './statistics.js';
