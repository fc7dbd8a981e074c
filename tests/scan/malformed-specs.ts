/**
 * A valid base spec and a list of malformed variants, each with the path its issue must name.
 * Shared by the in-process validation test and the CLI test (exit 2, ledger unchanged).
 */
export type SpecJson = Record<string, any>;

export function baseSpec(): SpecJson {
  return {
    name: 'unit',
    model: { dm: 'dirac', mediator: 'vector', g_q: 0.25 },
    axes: {
      m_chi: { from: 10, to: 1000, steps: 5, spacing: 'log' },
      m_med: { values: [100, 1000] },
      g_chi: { equals: 'm_med / 1000' },
    },
    detectors: [{ name: 'xe_demo', target: 'Xe', windowKeV: [5, 40], efficiency: 0.5, exposureKgDay: 1000 }],
    targets: [{ name: 'gc', kind: 'galactic_centre', coneDeg: 1, energyGeV: [1, null] }],
  };
}

export interface MalformedCase {
  readonly what: string;
  readonly path: string;
  readonly mutate: (s: SpecJson) => unknown;
}

export const MALFORMED: readonly MalformedCase[] = [
  { what: 'name missing', path: 'name', mutate: (s) => { delete s.name; } },
  { what: 'name with a space', path: 'name', mutate: (s) => { s.name = 'my scan'; } },
  { what: 'negative fixed mass', path: 'model.m_chi', mutate: (s) => { delete s.axes.m_chi; s.model.m_chi = -1; } },
  { what: 'unknown fixed parameter', path: 'model.foo', mutate: (s) => { s.model.foo = 1; } },
  { what: 'dm not a dm kind', path: 'model.dm', mutate: (s) => { s.model.dm = 'scalar'; } },
  { what: 'coupling given as text', path: 'model.g_q', mutate: (s) => { s.model.g_q = 'abc'; } },
  { what: 'range below the parameter minimum', path: 'axes.m_chi.from', mutate: (s) => { s.axes.m_chi.from = 0; } },
  { what: 'range above the parameter maximum', path: 'axes.m_chi.to', mutate: (s) => { s.axes.m_chi.to = 1e6; } },
  { what: 'grid range without steps', path: 'axes.m_chi.steps', mutate: (s) => { delete s.axes.m_chi.steps; } },
  { what: 'unknown spacing', path: 'axes.m_chi.spacing', mutate: (s) => { s.axes.m_chi.spacing = 'cubic'; } },
  { what: 'zero steps', path: 'axes.m_chi.steps', mutate: (s) => { s.axes.m_chi.steps = 0; } },
  { what: 'fractional steps', path: 'axes.m_chi.steps', mutate: (s) => { s.axes.m_chi.steps = 2.5; } },
  { what: 'axis on an unknown parameter', path: 'axes.bogus', mutate: (s) => { s.axes.bogus = { values: [1] }; } },
  { what: 'empty values', path: 'axes.m_med.values', mutate: (s) => { s.axes.m_med.values = []; } },
  { what: 'one value out of range', path: 'axes.m_med.values[1]', mutate: (s) => { s.axes.m_med.values = [100, -5]; } },
  { what: 'property access in equals', path: 'axes.g_chi.equals', mutate: (s) => { s.axes.g_chi.equals = 'm_chi.constructor'; } },
  { what: 'unknown name in equals', path: 'axes.g_chi.equals', mutate: (s) => { s.axes.g_chi.equals = 'foo * 2'; } },
  { what: 'equals cycle', path: 'axes.g_', mutate: (s) => { delete s.model.g_q; s.axes.g_chi.equals = 'g_q * 2'; s.axes.g_q = { equals: 'g_chi / 2' }; } },
  { what: 'range on a choice parameter', path: 'axes.mediator', mutate: (s) => { delete s.model.mediator; s.axes.mediator = { from: 1, to: 2, steps: 2 }; } },
  { what: 'parameter both fixed and scanned', path: 'model.m_chi', mutate: (s) => { s.model.m_chi = 50; } },
  { what: 'unknown sampling kind', path: 'sampling.kind', mutate: (s) => { s.sampling = { kind: 'sobol' }; } },
  { what: 'random sampling without count', path: 'sampling.count', mutate: (s) => { s.sampling = { kind: 'random', seed: 1 }; delete s.axes.m_chi.steps; } },
  { what: 'steps under random sampling', path: 'axes.m_chi.steps', mutate: (s) => { s.sampling = { kind: 'random', count: 10, seed: 1 }; } },
  { what: 'negative seed', path: 'sampling.seed', mutate: (s) => { s.sampling = { kind: 'latin_hypercube', count: 10, seed: -1 }; delete s.axes.m_chi.steps; } },
  { what: 'detector name not column-safe', path: 'detectors[0].name', mutate: (s) => { s.detectors[0].name = 'Xe-1'; } },
  { what: 'inverted recoil window', path: 'detectors[0].windowKeV', mutate: (s) => { s.detectors[0].windowKeV = [40, 5]; } },
  { what: 'efficiency above one', path: 'detectors[0].efficiency', mutate: (s) => { s.detectors[0].efficiency = 1.5; } },
  { what: 'zero exposure', path: 'detectors[0].exposureKgDay', mutate: (s) => { s.detectors[0].exposureKgDay = 0; } },
  { what: 'target material not a formula', path: 'detectors[0].target', mutate: (s) => { s.detectors[0].target = 'xenon'; } },
  { what: 'duplicate detector name', path: 'detectors[1].name', mutate: (s) => { s.detectors.push({ ...s.detectors[0] }); } },
  { what: 'unknown target kind', path: 'targets[0].kind', mutate: (s) => { s.targets[0].kind = 'cluster'; } },
  { what: 'satellite without distance', path: 'targets[0].distanceKpc', mutate: (s) => { s.targets[0] = { name: 'sat', kind: 'satellite', coneDeg: 0.5, profile: { kind: 'nfw', rsKpc: 1 }, energyGeV: [1, 100] }; } },
  { what: 'cone wider than the sky', path: 'targets[0].coneDeg', mutate: (s) => { s.targets[0].coneDeg = 200; } },
  { what: 'negative circular speed', path: 'halo.local.v0KmS', mutate: (s) => { s.halo = { local: { v0KmS: -1 } }; } },
  { what: 'einasto without alpha', path: 'halo.galactic.profile.alpha', mutate: (s) => { s.halo = { galactic: { profile: { kind: 'einasto', rsKpc: 20 } } }; } },
  { what: 'unknown halo key', path: 'halo.extra', mutate: (s) => { s.halo = { extra: 1 }; } },
  { what: 'misspelled top-level key', path: 'axis', mutate: (s) => { s.axis = s.axes; } },
  { what: 'constraints not a list', path: 'constraints', mutate: (s) => { s.constraints = { relic: true }; } },
  { what: 'log spacing from zero', path: 'axes.g_q.spacing', mutate: (s) => { delete s.model.g_q; s.axes.g_q = { from: 0, to: 1, steps: 3, spacing: 'log' }; } },
  { what: 'grid with too many points', path: 'axes', mutate: (s) => { s.axes.m_chi.steps = 1e7; s.axes.g_q = { from: 0.1, to: 1, steps: 1e7 }; delete s.model.g_q; } },
  { what: 'unknown scalar set', path: 'hadronic.scalarSet', mutate: (s) => { s.hadronic = { scalarSet: 'C' }; } },
  { what: 'unknown Sommerfeld approximation', path: 'indirect.sommerfeld', mutate: (s) => { s.indirect = { sommerfeld: 'exact' }; } },
  { what: 'unknown indirect key', path: 'indirect.boost', mutate: (s) => { s.indirect = { boost: 10 }; } },
  { what: 'ring wider inside than outside', path: 'targets[0].innerDeg', mutate: (s) => { s.targets[0].innerDeg = s.targets[0].coneDeg; } },
  { what: 'negative inner half-angle', path: 'targets[0].innerDeg', mutate: (s) => { s.targets[0].innerDeg = -1; } },
  { what: 'offset cone that is also a ring', path: 'targets[0].offsetDeg', mutate: (s) => { s.targets[0].offsetDeg = 5; s.targets[0].innerDeg = 0.5; } },
  { what: 'offset beyond the sky', path: 'targets[0].offsetDeg', mutate: (s) => { s.targets[0].offsetDeg = 190; } },
  { what: 'plane mask on a satellite', path: 'targets[0].maskLatDeg', mutate: (s) => { s.targets[0] = { name: 'sat', kind: 'satellite', coneDeg: 0.5, maskLatDeg: 1, distanceKpc: 80, profile: { kind: 'nfw', rsKpc: 1, rhoSGeVcm3: 1 }, energyGeV: [1, 100] }; } },
  { what: 'plane mask of 90 degrees', path: 'targets[0].maskLatDeg', mutate: (s) => { s.targets[0].maskLatDeg = 90; } },
  { what: 'yield table for a final state that has none', path: 'indirect.yieldTables.photon', mutate: (s) => { s.indirect = { yieldTables: { photon: [[0.1, 1], [1, 0]] } }; } },
  { what: 'yield table beyond x = 1', path: 'indirect.yieldTables.b[1][0]', mutate: (s) => { s.indirect = { yieldTables: { b: [[0.1, 1], [1.5, 0]] } }; } },
  { what: 'dispersion on the galactic centre', path: 'targets[0].velocityDispersionKmS', mutate: (s) => { s.targets[0].velocityDispersionKmS = 10; } },
];

/** Applies a case to a fresh base spec. */
export function malformed(c: MalformedCase): SpecJson {
  const s = baseSpec();
  c.mutate(s);
  return s;
}
