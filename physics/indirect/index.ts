/**
 * The indirect-detection stage: <sigma v> today, branching ratios and the prompt gamma-ray flux of
 * every target of the scan.
 *
 *   prepareIndirect(setup)            once per scan: validate targets and yield tables, J-factor per
 *                                      target (jfactor.ts), velocity scales, photon-count memo
 *   indirectObservables(point, ann, prepared)
 *        = Maxwellian <sigma v> per channel (velocity-average.ts)
 *          -> photons in each target's band per channel (yields.ts, cached; mediator pairs as boosted
 *             cascades with the mediator's own decay fractions from physics/widths.ts)
 *          -> flux (flux.ts: Majorana 1/2 <sigma v> rho^2/m^2, Dirac half of that)
 *
 * With setup.sommerfeld = 'hulthen', each average's s-wave part a_f (the v -> 0 limit of sigma v per
 * channel) is multiplied by the halo average of the Sommerfeld factor (sommerfeld.ts):
 * <sigma v>_f + a_f (<S>_w - 1) for every velocity scale w in use.
 *
 * Flags: 'approximate_yields' (a built-in fit was used), 'no_photon_yield_<channel>' (a final state
 * without a known yield; it contributes no photons), 'stable_mediator_no_photons' (mediator pairs
 * with no open decay), 'sigv0_not_converged' (an adaptive velocity average, or the Sommerfeld
 * average, missed its tolerance), 'sommerfeld_hulthen' (the factor raised sigv0 or a flux by more than 0.1 %: approximate, see
 * sommerfeld.ts), 'sommerfeld_not_applied' (asked for, but pseudoscalar and axial exchange give no
 * potential the formula covers).
 *
 * Validity: prompt photons only (no inverse-Compton, no lines); Sommerfeld only when asked for, s-wave
 * only; satellites without the Milky-Way foreground; see each module's head comment.
 * References: shared notes indirect.md B5-B8, A6.
 */
import type { Annihilation } from '../annihilation-model.js';
import { GEV2_TO_CM3S } from '../constants.js';
import { InvalidInputError, type Issue } from '../issue.js';
import type { ModelPoint } from '../model.js';
import type { ScanPhysicsSetup, Target } from '../setup.js';
import { mediatorWidth } from '../widths.js';
import { cascadePhotons, directPhotons, photonFluxCm2s, PhotonMemo, PHOTON_MEMO_MASSES, type Band } from './flux.js';
import { CONE_REL_TOL, J_MAX_INTERVALS, LOS_REL_TOL, maskedRingJFactor, offsetConeJFactor } from './jfactor.js';
import type { HaloDensity } from './profiles.js';
import { EINASTO_ALPHA_DEFAULT, GALACTIC_OUTER_RADIUS_KPC, galacticDensity, satelliteDensity, UNTRUNCATED_OUTER_RADIUS_RS } from './profiles.js';
import {
  ADAPTIVE_MAX_INTERVALS, ADAPTIVE_REL_TOL, CHECK_NODES, CHECK_REL_TOL, CLEARANCE_W2, FAST_NODES,
  maxwellAverage, relativeVelocityScale, V_MAX_W, type VelocityAverage,
} from './velocity-average.js';
import { checkYieldTables, YIELD_REL_TOL, yieldSourceFor, type YieldTable } from './yields.js';
import { maxwellSommerfeld, sommerfeldAlpha, SOMMERFELD_MAX_INTERVALS, SOMMERFELD_REL_TOL } from './sommerfeld.js';

/**
 * Relative velocity v1, in units of w, of the two probes v1 and 2 v1 from which the s-wave part is
 * extrapolated (numerical knob): a = (4 sigma v(v1) - sigma v(2 v1)) / 3 removes the v^2 (p-wave) term,
 * leaving O(v1^4); v1 is large enough that s - 4 m^2 keeps its digits.
 */
export const SWAVE_PROBE_W = 0.01;
/** Knobs of the Sommerfeld factor, part of a scan's knobs only when the factor is asked for (older scans keep theirs). */
export const SOMMERFELD_KNOBS = Object.freeze({
  approximation: 'hulthen', relTol: SOMMERFELD_REL_TOL, maxIntervals: SOMMERFELD_MAX_INTERVALS, swaveProbeW: SWAVE_PROBE_W,
});

/** Numerical knobs and defaults of the indirect stage, for each scan's provenance. */
export const INDIRECT_KNOBS = Object.freeze({
  velocityAverage: Object.freeze({
    fastNodes: FAST_NODES, checkNodes: CHECK_NODES, checkRelTol: CHECK_REL_TOL, clearanceW2: CLEARANCE_W2,
    vMaxW: V_MAX_W, adaptiveRelTol: ADAPTIVE_REL_TOL, adaptiveMaxIntervals: ADAPTIVE_MAX_INTERVALS,
  }),
  jFactor: Object.freeze({
    losRelTol: LOS_REL_TOL, coneRelTol: CONE_REL_TOL, maxIntervals: J_MAX_INTERVALS,
    galacticOuterRadiusKpc: GALACTIC_OUTER_RADIUS_KPC, untruncatedOuterRadiusRs: UNTRUNCATED_OUTER_RADIUS_RS,
    einastoAlphaDefault: EINASTO_ALPHA_DEFAULT,
  }),
  yields: Object.freeze({ relTol: YIELD_REL_TOL, photonMemoMasses: PHOTON_MEMO_MASSES }),
});

/** Name of the mediator-pair channel in the Annihilation contract (physics/annihilation.ts). */
const MEDIATOR_PAIR = 'med_med';

export interface PreparedTarget {
  readonly name: string;
  readonly kind: Target['kind'];
  /** J-factor of the target's cone, GeV^2 cm^-5 */
  readonly jGeV2cm5: number;
  readonly band: Band;
  /** relative-velocity scale w = 2 sigma_1D / c used for this target's <sigma v> */
  readonly velocityScale: number;
}

export interface IndirectPrepared {
  readonly targets: readonly PreparedTarget[];
  /** relative-velocity scale of the Galactic halo (for sigv0) */
  readonly galacticVelocityScale: number;
  readonly yieldTables: Readonly<Record<string, YieldTable>> | undefined;
  /** per-scan cache of photons per annihilation in each band (bounded) */
  readonly memo: PhotonMemo;
  /** multiply the s-wave part of sigma v by the halo-averaged Sommerfeld factor */
  readonly sommerfeld: boolean;
}

export interface IndirectResult {
  /** <sigma v> today in the Galactic halo, cm^3/s (chi chibar for Dirac, chi chi for Majorana) */
  readonly sigv0Cm3s: number;
  /** fraction of <sigma v> today per final state (Galactic halo velocities) */
  readonly branching: Readonly<Record<string, number>>;
  /** integrated photon flux per target in its band, cm^-2 s^-1, same order as setup.targets */
  readonly fluxByTarget: readonly number[];
  readonly flags: readonly string[];
}

const MAX_DISPERSION_KMS = 3000;

function checkTarget(t: Target, path: string, issues: Issue[]): void {
  if (!(Number.isFinite(t.coneDeg) && t.coneDeg > 0 && t.coneDeg <= 180)) {
    issues.push({ code: 'out_of_range', path: `${path}.coneDeg`, message: 'cone half-angle must be in (0, 180] degrees', seen: String(t.coneDeg), allowed: '0 < coneDeg <= 180' });
  }
  if (t.innerDeg !== undefined && !(Number.isFinite(t.innerDeg) && t.innerDeg >= 0 && t.innerDeg < t.coneDeg)) {
    issues.push({ code: 'out_of_range', path: `${path}.innerDeg`, message: 'inner half-angle must be at least 0 and below coneDeg (degrees)', seen: String(t.innerDeg), allowed: `0 <= innerDeg < ${t.coneDeg}` });
  }
  if (t.offsetDeg !== undefined && !(Number.isFinite(t.offsetDeg) && t.offsetDeg >= 0 && t.offsetDeg <= 180)) {
    issues.push({ code: 'out_of_range', path: `${path}.offsetDeg`, message: 'offset of the cone axis must be in [0, 180] degrees', seen: String(t.offsetDeg), allowed: '0 <= offsetDeg <= 180' });
  }
  if (t.maskLatDeg !== undefined && !(Number.isFinite(t.maskLatDeg) && t.maskLatDeg >= 0 && t.maskLatDeg < 90)) {
    issues.push({ code: 'out_of_range', path: `${path}.maskLatDeg`, message: 'masked latitude band must be in [0, 90) degrees', seen: String(t.maskLatDeg), allowed: '0 <= maskLatDeg < 90' });
  }
  if (t.maskLatDeg !== undefined && (t.kind !== 'galactic_centre' || t.offsetDeg !== undefined)) {
    issues.push({ code: 'invalid', path: `${path}.maskLatDeg`, message: 'the Galactic plane is masked only in a cone or ring around the Galactic Centre (not a satellite, not with offsetDeg)', seen: String(t.maskLatDeg), allowed: 'absent, or a galactic_centre target without offsetDeg' });
  }
  if (t.offsetDeg !== undefined && t.innerDeg !== undefined) {
    issues.push({ code: 'invalid', path: `${path}.offsetDeg`, message: 'an offset cone cannot also be a ring: give offsetDeg or innerDeg, not both', seen: `offsetDeg ${t.offsetDeg}, innerDeg ${t.innerDeg}`, allowed: 'one of offsetDeg, innerDeg' });
  }
  const [lo, hi] = t.energyGeV ?? [NaN, NaN];
  if (!(Number.isFinite(lo) && lo > 0 && hi > lo)) {
    issues.push({
      code: 'out_of_range', path: `${path}.energyGeV`, message: 'photon energy band [lo, hi] needs 0 < lo < hi (hi may be Infinity), GeV',
      seen: JSON.stringify(t.energyGeV), allowed: '0 < lo < hi <= Infinity',
    });
  }
  if (t.kind === 'satellite' && !(Number.isFinite(t.distanceKpc) && (t.distanceKpc as number) > 0)) {
    issues.push({ code: 'out_of_range', path: `${path}.distanceKpc`, message: 'satellite distance must be a finite number > 0 (kpc)', seen: String(t.distanceKpc), allowed: '> 0' });
  }
  if (t.kind !== 'satellite' && t.kind !== 'galactic_centre') {
    issues.push({ code: 'invalid_choice', path: `${path}.kind`, message: 'target kind must be galactic_centre or satellite', seen: String(t.kind), allowed: 'galactic_centre, satellite' });
  }
  const v = t.velocityDispersionKmS;
  if (v !== undefined && !(Number.isFinite(v) && v > 0 && v < MAX_DISPERSION_KMS)) {
    issues.push({ code: 'out_of_range', path: `${path}.velocityDispersionKmS`, message: `velocity dispersion must be in (0, ${MAX_DISPERSION_KMS}) km/s`, seen: String(v), allowed: `0 < v < ${MAX_DISPERSION_KMS}` });
  }
}

/**
 * Once per scan: validates the targets and yield tables (InvalidInputError lists every problem with
 * its path), computes each target's J-factor and velocity scale, and sets up the photon memo.
 */
export function prepareIndirect(setup: ScanPhysicsSetup): IndirectPrepared {
  const issues: Issue[] = [];
  const sigma = setup.halo.galactic.sigmaVKmS;
  if (!(Number.isFinite(sigma) && sigma > 0 && sigma < MAX_DISPERSION_KMS)) {
    issues.push({ code: 'out_of_range', path: 'halo.galactic.sigmaVKmS', message: `velocity dispersion must be in (0, ${MAX_DISPERSION_KMS}) km/s`, seen: String(sigma), allowed: `0 < v < ${MAX_DISPERSION_KMS}` });
  }
  setup.targets.forEach((t, i) => checkTarget(t, `targets[${i}]`, issues));
  if (setup.yieldTables !== undefined) issues.push(...checkYieldTables(setup.yieldTables));
  if (issues.length > 0) throw new InvalidInputError(issues);

  const galacticW = relativeVelocityScale(sigma);
  const needsGalaxy = setup.targets.some((t) => t.kind === 'galactic_centre');
  const galaxy = needsGalaxy ? galacticDensity(setup.halo.galactic) : null;
  const targets = setup.targets.map((t, i): PreparedTarget => {
    const coneRad = (t.coneDeg * Math.PI) / 180;
    const innerRad = ((t.innerDeg ?? 0) * Math.PI) / 180;
    const offsetRad = ((t.offsetDeg ?? 0) * Math.PI) / 180;
    const maskRad = ((t.maskLatDeg ?? 0) * Math.PI) / 180;
    const region = (density: HaloDensity, dKpc: number): number =>
      offsetRad > 0 ? offsetConeJFactor(density, dKpc, coneRad, offsetRad) : maskedRingJFactor(density, dKpc, innerRad, coneRad, maskRad);
    const jGeV2cm5 =
      t.kind === 'galactic_centre'
        ? region(galaxy!, setup.halo.galactic.r0Kpc)
        : region(satelliteDensity(t, `targets[${i}]`), t.distanceKpc as number);
    const velocityScale =
      t.kind === 'satellite' && t.velocityDispersionKmS !== undefined ? relativeVelocityScale(t.velocityDispersionKmS) : galacticW;
    return Object.freeze({ name: t.name, kind: t.kind, jGeV2cm5, band: Object.freeze({ loGeV: t.energyGeV[0], hiGeV: t.energyGeV[1] }), velocityScale });
  });
  return Object.freeze({
    targets: Object.freeze(targets),
    galacticVelocityScale: galacticW,
    yieldTables: setup.yieldTables,
    memo: new PhotonMemo(),
    sommerfeld: setup.sommerfeld === 'hulthen',
  });
}

/**
 * The velocity average with its s-wave part enhanced by <S>_w: <sigma v>_f + a_f (<S>_w - 1), a_f the
 * channel's v -> 0 limit of sigma v, extrapolated from v1 = SWAVE_PROBE_W w and 2 v1 (Richardson).
 */
function withSommerfeld(ann: Annihilation, avg: VelocityAverage, w: number, alpha: number, mMedGeV: number, flags: Set<string>): VelocityAverage {
  const s = maxwellSommerfeld(w, alpha, ann.mChiGeV, mMedGeV);
  if (!s.converged) flags.add('sigv0_not_converged');
  const v = SWAVE_PROBE_W * w;
  const m2 = ann.mChiGeV * ann.mChiGeV;
  const near = new Float64Array(ann.channels.length);
  const far = new Float64Array(ann.channels.length);
  ann.sigmaVByChannelGeV2(m2 * (4 + v * v), near);
  ann.sigmaVByChannelGeV2(m2 * (4 + 4 * v * v), far);
  const byChannel = new Float64Array(ann.channels.length);
  let total = 0;
  for (let c = 0; c < byChannel.length; c++) {
    const sWave = Math.max(0, (4 * (near[c] as number) - (far[c] as number)) / 3);
    byChannel[c] = (avg.byChannelGeV2[c] as number) + sWave * (s.mean - 1);
    total += byChannel[c] as number;
  }
  if (total > avg.totalGeV2 * (1 + 1e-3)) flags.add('sommerfeld_hulthen');
  return Object.freeze({ totalGeV2: total, byChannelGeV2: byChannel, method: avg.method, converged: avg.converged && s.converged });
}

/** Mediator decay fractions into final states with a photon yield (the DM pair is closed when m_chi > m_med). */
function mediatorDecayFractions(point: ModelPoint): Record<string, number> {
  const partials = mediatorWidth(point).partialsGeV;
  let total = 0;
  for (const [k, v] of Object.entries(partials)) if (k !== 'dm') total += v;
  const out: Record<string, number> = {};
  if (!(total > 0)) return out;
  for (const [k, v] of Object.entries(partials)) if (k !== 'dm') out[k] = v / total;
  return out;
}

/** Photons per annihilation in target `index`'s band, weighted by the channel fractions of `avg`. */
function photonsPerAnnihilation(
  point: ModelPoint, ann: Annihilation, avg: VelocityAverage, prepared: IndirectPrepared, index: number,
  flags: Set<string>, decayFractions: () => Record<string, number>,
): number {
  const target = prepared.targets[index]!;
  const tag = String(index);
  const m = ann.mChiGeV;
  let photons = 0;
  ann.channels.forEach((channel, c) => {
    const fraction = avg.totalGeV2 > 0 ? (avg.byChannelGeV2[c] as number) / avg.totalGeV2 : 0;
    if (!(fraction > 0)) return;
    const direct = yieldSourceFor(channel.name, prepared.yieldTables);
    if (direct !== null) {
      if (direct.kind !== 'table') flags.add('approximate_yields');
      photons += fraction * directPhotons(prepared.memo, tag, direct, m, target.band);
      return;
    }
    if (channel.name !== MEDIATOR_PAIR) {
      flags.add(`no_photon_yield_${channel.name}`);
      return;
    }
    const decays = decayFractions();
    if (Object.keys(decays).length === 0) flags.add('stable_mediator_no_photons');
    let cascade = 0;
    for (const [k, br] of Object.entries(decays)) {
      const source = yieldSourceFor(k, prepared.yieldTables);
      if (source === null) {
        flags.add(`no_photon_yield_${k}`);
        continue;
      }
      if (source.kind !== 'table') flags.add('approximate_yields');
      cascade += br * cascadePhotons(prepared.memo, tag, source, m, point.m_med, target.band);
    }
    photons += fraction * cascade;
  });
  return photons;
}

/**
 * Per point: <sigma v> today, branching ratios and the flux of every target. Pure apart from the
 * photon memo, whose hits equal its misses bit for bit.
 */
export function indirectObservables(point: ModelPoint, ann: Annihilation, prepared: IndirectPrepared): IndirectResult {
  const flags = new Set<string>();
  const alpha = prepared.sommerfeld ? sommerfeldAlpha(point) : null;
  if (prepared.sommerfeld && alpha === null && ann.channels.length > 0) flags.add('sommerfeld_not_applied');
  const average = (w: number): VelocityAverage => {
    const avg = maxwellAverage(ann, w);
    if (!avg.converged) flags.add('sigv0_not_converged');
    return alpha === null ? avg : withSommerfeld(ann, avg, w, alpha, point.m_med, flags);
  };
  const galactic = average(prepared.galacticVelocityScale);
  const branching: Record<string, number> = {};
  ann.channels.forEach((channel, c) => {
    branching[channel.name] = galactic.totalGeV2 > 0 ? (galactic.byChannelGeV2[c] as number) / galactic.totalGeV2 : 0;
  });
  let fractions: Record<string, number> | null = null;
  const decayFractions = (): Record<string, number> => (fractions ??= mediatorDecayFractions(point));

  const fluxByTarget = prepared.targets.map((target, i) => {
    const avg = target.velocityScale === prepared.galacticVelocityScale ? galactic : average(target.velocityScale);
    if (!(avg.totalGeV2 > 0)) return 0;
    const photons = photonsPerAnnihilation(point, ann, avg, prepared, i, flags, decayFractions);
    return photonFluxCm2s(avg.totalGeV2, target.jGeV2cm5, ann.mChiGeV, photons, point.dm);
  });
  return Object.freeze({
    sigv0Cm3s: galactic.totalGeV2 * GEV2_TO_CM3S,
    branching: Object.freeze(branching),
    fluxByTarget: Object.freeze(fluxByTarget),
    flags: Object.freeze([...flags].sort()),
  });
}

