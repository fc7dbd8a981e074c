/**
 * Nuclear-recoil event rates and expected events in a detector.
 *
 * What: the differential rate per unit target mass of one isotope, and the detector response
 * kernel: for a detector (target isotopes, energy window, efficiency, exposure), a dark-matter
 * mass and (for light mediators) a mediator mass, six numbers K such that the expected events are
 *   N = K0 f_p^2 + K1 f_p f_n + K2 f_n^2 + K3 a_p^2 + K4 a_p a_n + K5 a_n^2
 * with the SI amplitudes f_N and SD amplitudes a_N of physics/direct/nucleon.ts (GeV^-2).
 *
 * Method (direct.md §3, §5.1):
 *  dR/dE_R = rho0 sigma_A(0) F^2(q) eta(v_min) / (2 m_chi mu_A^2)   per unit target mass, with
 *  sigma_A^SI(0) = (mu_A^2/pi) [Z f_p + (A-Z) f_n]^2 (Helm F^2, physics/direct/helm.ts) and
 *  sigma_A^SD(0) = (4 mu_A^2/pi) ((J+1)/J) [a_p <S_p> + a_n <S_n>]^2 (thin-shell F^2), so mu_A
 *  cancels and each isotope contributes w_i (rho0 / (2 pi m_chi)) c^2 int eps F^2 eta P dE.
 *  v_min = sqrt(m_A E_R / (2 mu_A^2)), eta from physics/direct/halo.ts, P = [M^2/(M^2+q^2)]^2 the
 *  mediator propagator (q^2 = 2 m_A E_R) when it matters (see PROPAGATOR_CONTACT_TOL).
 *  The energy integral runs over the window cut at E_R,max (v_min = v_esc + v_E), split at the eta
 *  kink (v_min = v_esc - v_E) and at efficiency-table nodes, with fixed Gauss-Legendre panels
 *  (GL_NODES per panel) sized so that each spans at most PANEL_PHASE_RAD of q r_n,
 *  PANEL_VMIN_KMS of v_min and PANEL_PROPAGATOR_LN of ln(m_med^2 + q^2): the integrand is then a
 *  smooth, slowly varying function on each panel. Spin-carrying isotopes are also split at the
 *  thin-shell plateau edges (kinks of the SD F^2).
 *
 * Validity: elastic scattering, SHM, contact or single-propagator interactions; SD rates use the
 * thin-shell stand-in (order-of-magnitude only, flagged by the caller). Efficiency acts on nuclear
 * recoil energy (keVnr); quenching is the user's responsibility.
 * Accuracy: the quadrature reproduces a scipy adaptive-quadrature reference to 4e-13 relative
 * (measured on the tests/fixtures/direct cases; the test allows 1e-8); the physics uncertainty is
 * dominated by the halo and the form factors.
 * References: Lewin & Smith 1996, Astropart. Phys. 6, 87; direct.md §3-§5.
 */
import { BASE, GEV2_TO_CM2, C_KM_S } from '../constants.js';
import { InvalidInputError } from '../issue.js';
import { gaussLegendre } from '../numerics/quadrature.js';
import type { Detector, Efficiency } from '../setup.js';
import type { ShmEta } from './halo.js';
import { helmFormFactorSq, helmRadiusFm, thinShellFormFactorSq, thinShellKinksKeV, thinShellRadiusFm } from './helm.js';
import { targetIsotopes, type TargetIsotope } from './isotopes.js';

// ---------------------------------------------------------------- numerical knobs
/** Gauss-Legendre nodes per panel: 10 gives <= 4e-13 relative on the scipy fixture cases (8 gave 2e-10). */
export const GL_NODES = 10;
/** Largest span of q r_n (Helm argument) per panel, radians: keeps F^2 low-order on a panel. */
export const PANEL_PHASE_RAD = 1.0;
/** Largest span of v_min per panel, km/s (eta varies on the scale v0 ~ 220 km/s). */
export const PANEL_VMIN_KMS = 100;
/**
 * Largest change of ln(m_med^2 + q^2) per piece for light mediators: the propagator factor varies
 * like a double pole at q^2 = -m_med^2, which fixed Gauss-Legendre panels resolve only when each
 * piece spans a bounded ratio of (m_med^2 + q^2) (uniform panels left 1e-4 errors for m_med << q).
 * Pieces are therefore geometric in (m_med^2 + q^2); the same holds for the moment weights.
 */
export const PANEL_PROPAGATOR_LN = 0.5;
/** Upper bound on panels per isotope (reached only for extreme windows). */
export const MAX_PANELS = 256;
/**
 * The propagator factor is dropped (contact limit) when q_max^2 / M^2 is below this: the events
 * then change by less than 2e-5 relative, far below the physics uncertainty.
 */
export const PROPAGATOR_CONTACT_TOL = 1e-5;

// ---------------------------------------------------------------- unit conversion
/** 1 GeV/c^2 in kg: 1e9 eV / c^2 (SI exact constants). */
const GEV_IN_KG = (1e9 * BASE.electronVolt.value) / (BASE.speedOfLight.value / 100) ** 2;
/** seconds per day (SI definition of the day as 86 400 s) */
const SECONDS_PER_DAY = 86400;
const C_CM_S = BASE.speedOfLight.value;

/**
 * Converts rho0[GeV/cm^3] / m_chi[GeV] * sigma[cm^2] * eta[s/km] / (2 mu_A^2 [GeV^2]) into events
 * per kg per day per keV: c^2 (cm/s)^2 for the 1/v^2 of dsigma/dE, 1e-5 for s/km -> s/cm, 1/GeV_in_kg
 * for the target mass, 86400 s/day, 1e-6 GeV/keV.
 */
const RATE_UNIT = (C_CM_S * C_CM_S * 1e-5 * SECONDS_PER_DAY * 1e-6) / GEV_IN_KG;

const reducedMass = (a: number, b: number): number => (a * b) / (a + b);

/**
 * Differential rate of one pure isotope, events kg^-1 day^-1 keV^-1.
 * @param sigmaA0Cm2 nuclear cross section at zero momentum transfer, cm^2
 * @param formFactorSq F^2 at this recoil energy
 * @param etaSKm eta(v_min) at this recoil energy, s/km
 */
export function recoilRate(massGeV: number, mChiGeV: number, rhoGeVcm3: number, sigmaA0Cm2: number, formFactorSq: number, etaSKm: number): number {
  const mu = reducedMass(mChiGeV, massGeV);
  return ((rhoGeVcm3 / mChiGeV) * sigmaA0Cm2 * formFactorSq * etaSKm * RATE_UNIT) / (2 * mu * mu);
}

/** Minimum DM speed for recoil energy eRKeV on nucleus massGeV, km/s (direct.md §1). */
export function vMinKmS(eRKeV: number, mChiGeV: number, massGeV: number): number {
  const mu = reducedMass(mChiGeV, massGeV);
  return Math.sqrt((massGeV * eRKeV * 1e-6) / (2 * mu * mu)) * C_KM_S;
}

/** Recoil energy at which v_min equals vKmS, keV (inverse of vMinKmS). */
export function recoilForVMinKeV(vKmS: number, mChiGeV: number, massGeV: number): number {
  const mu = reducedMass(mChiGeV, massGeV);
  const beta = vKmS / C_KM_S;
  return ((2 * mu * mu * beta * beta) / massGeV) * 1e6;
}

// ---------------------------------------------------------------- detectors
/** A target isotope with its precomputed Helm and thin-shell radii (fm). */
export type PreparedIsotope = TargetIsotope & {
  readonly helmRadiusFm: number;
  readonly shellRadiusFm: number;
  /** energies of the thin-shell plateau edges (SD F^2 kinks), keV; empty for spin-0 isotopes */
  readonly shellKinksKeV: readonly number[];
};

/** A detector prepared once per scan: isotopes with precomputed radii, efficiency, exposure. */
export interface PreparedDetector {
  readonly name: string;
  readonly isotopes: readonly PreparedIsotope[];
  readonly loKeV: number;
  readonly hiKeV: number;
  readonly exposureKgDay: number;
  /** efficiency at a recoil energy inside the window */
  readonly efficiency: (eKeV: number) => number;
  /** energies where the efficiency has kinks (table nodes), keV */
  readonly efficiencyNodesKeV: readonly number[];
  /** true when some isotope carries spin data (SD response non-zero) */
  readonly hasSpin: boolean;
}

function detectorIssue(path: string, message: string, seen: unknown, allowed: string): never {
  throw new InvalidInputError([{ code: 'out_of_range', path, message, seen: JSON.stringify(seen), allowed }]);
}

function prepareEfficiency(eff: Efficiency, path: string): { fn: (e: number) => number; nodes: number[] } {
  if (typeof eff === 'number') {
    if (!(Number.isFinite(eff) && eff >= 0 && eff <= 1)) detectorIssue(path, 'flat efficiency must lie in [0, 1]', eff, '0 <= efficiency <= 1');
    return { fn: () => eff, nodes: [] };
  }
  if (!Array.isArray(eff) || eff.length < 2) {
    detectorIssue(path, 'efficiency table needs at least two [keVnr, efficiency] pairs', eff, 'number in [0, 1] or >= 2 pairs');
  }
  const es = new Float64Array(eff.length);
  const vs = new Float64Array(eff.length);
  eff.forEach((pair, i) => {
    const [e, v] = pair;
    if (!(Number.isFinite(e) && e >= 0 && (i === 0 || e > es[i - 1]!))) {
      detectorIssue(`${path}[${i}][0]`, 'efficiency-table energies must be finite, >= 0 and strictly increasing (keVnr)', e, 'increasing energies >= 0');
    }
    if (!(Number.isFinite(v) && v >= 0 && v <= 1)) detectorIssue(`${path}[${i}][1]`, 'efficiency values must lie in [0, 1]', v, '0 <= efficiency <= 1');
    es[i] = e;
    vs[i] = v;
  });
  const n = es.length;
  const fn = (e: number): number => {
    if (e < es[0]! || e > es[n - 1]!) return 0;
    let lo = 0;
    let hi = n - 1;
    while (hi - lo > 1) {
      const mid = (lo + hi) >> 1;
      if (es[mid]! <= e) lo = mid;
      else hi = mid;
    }
    const t = (e - es[lo]!) / (es[hi]! - es[lo]!);
    return vs[lo]! + t * (vs[hi]! - vs[lo]!);
  };
  return { fn, nodes: [...es] };
}

/** Validates and prepares one spec detector; `path` is its spec path, e.g. 'detectors[0]'. */
export function prepareDetector(detector: Detector, path: string): PreparedDetector {
  const isotopes = targetIsotopes(detector.target, `${path}.target`).map((i) =>
    Object.freeze({
      ...i,
      helmRadiusFm: helmRadiusFm(i.a),
      shellRadiusFm: thinShellRadiusFm(i.a),
      shellKinksKeV: Object.freeze(i.spin ? thinShellKinksKeV(i.massGeV, thinShellRadiusFm(i.a)) : []),
    }),
  );
  const w = detector.windowKeV;
  if (!(Array.isArray(w) && w.length === 2 && Number.isFinite(w[0]) && Number.isFinite(w[1]) && w[0] >= 0 && w[1] > w[0])) {
    detectorIssue(`${path}.windowKeV`, 'energy window must be [lo, hi] keVnr with 0 <= lo < hi, both finite', w, '0 <= lo < hi (keVnr)');
  }
  const exp = detector.exposureKgDay;
  if (!(Number.isFinite(exp) && exp > 0)) detectorIssue(`${path}.exposureKgDay`, 'exposure must be a finite number > 0 (kg day)', exp, '> 0 kg day');
  const eff = prepareEfficiency(detector.efficiency, `${path}.efficiency`);
  return Object.freeze({
    name: detector.name,
    isotopes: Object.freeze(isotopes),
    loKeV: w[0],
    hiKeV: w[1],
    exposureKgDay: exp,
    efficiency: eff.fn,
    efficiencyNodesKeV: Object.freeze(eff.nodes.filter((e) => e > w[0] && e < w[1])),
    hasSpin: isotopes.some((i) => i.spin !== undefined),
  });
}

// ---------------------------------------------------------------- response kernel
/** Number of coefficients of a response kernel (SI pp, pn, nn; SD pp, pn, nn). */
export const KERNEL_SIZE = 6;

/**
 * Chebyshev basis in x = (2 ln E - ln E_lo - ln E_hi) / (ln E_hi - ln E_lo) for propagator
 * moments (physics/direct/kernel-table.ts): w_a(E) T_k(x) for a < MOMENT_WEIGHTS and k < count,
 * with the weights w_a = (E_lo / E)^a; E in keV. Stored at index a * count + k.
 */
export interface MomentBasis {
  readonly lnLoKeV: number;
  readonly lnHiKeV: number;
  readonly count: number;
}

/** Number of weights (E_lo/E)^a, a = 0, 1, 2, of the moment basis. */
export const MOMENT_WEIGHTS = 3;

/**
 * Energy integrals of one isotope: si[a * count + k] = int eps F_Helm^2 eta P w_a T_k dE (MomentBasis)
 * and sd[...] the same with the thin-shell F^2 (left untouched for spin-0 isotopes), keV s/km;
 * without a basis only si[0], sd[0] (P alone). P is the propagator factor for m2 = m_med^2 > 0, 1 for m2 = 0.
 * Zero when the isotope cannot recoil into the window (E_R,max <= window low edge).
 */
export function isotopeIntegrals(
  det: PreparedDetector,
  iso: PreparedIsotope,
  shm: ShmEta,
  mChiGeV: number,
  m2: number,
  basis: MomentBasis | null,
  si: Float64Array,
  sd: Float64Array,
): void {
  const count = basis ? basis.count : 1;
  const size = basis ? MOMENT_WEIGHTS * count : 1;
  const spin = iso.spin;
  si.fill(0, 0, size);
  if (spin) sd.fill(0, 0, size);
  const eMax = Math.min(det.hiKeV, recoilForVMinKeV(shm.vMaxKmS, mChiGeV, iso.massGeV));
  if (!(eMax > det.loKeV)) return;
  const rule = gaussLegendre(GL_NODES);
  const xScale = basis ? 2 / (basis.lnHiKeV - basis.lnLoKeV) : 0;
  const xShift = basis ? (basis.lnHiKeV + basis.lnLoKeV) / (basis.lnHiKeV - basis.lnLoKeV) : 0;
  const eKink = recoilForVMinKeV(shm.vKinkKmS, mChiGeV, iso.massGeV);
  const inner = (e: number): boolean => e > det.loKeV && e < eMax;
  const cuts = [det.loKeV, ...det.efficiencyNodesKeV.filter(inner), ...(inner(eKink) ? [eKink] : []), ...iso.shellKinksKeV.filter(inner), eMax].sort((p, q) => p - q);
  const loKeV = basis ? Math.exp(basis.lnLoKeV) : 0;
  let siIntegral = 0;
  let sdIntegral = 0;
  // light mediators and the moment weights (E_lo/E)^a vary like poles at E = -shift: split such
  // pieces geometrically in (E + shift) so that each spans at most logLimit in ln(E + shift)
  const shift = m2 > 0 ? m2 / (2 * iso.massGeV * 1e-6) : 0;
  const logLimit = basis ? Math.min(PANEL_PROPAGATOR_LN, (basis.lnHiKeV - basis.lnLoKeV) / Math.max(1, basis.count / 4)) : PANEL_PROPAGATOR_LN;
  for (let c = 0; c + 1 < cuts.length; c++) {
    const ca = cuts[c]!;
    const cb = cuts[c + 1]!;
    if (!(cb > ca)) continue;
    const logSpan = (m2 > 0 || basis) && ca + shift > 0 ? Math.log((cb + shift) / (ca + shift)) : 0;
    const pieces = Math.min(MAX_PANELS, Math.max(1, Math.ceil(logSpan / logLimit)));
    for (let g = 0; g < pieces; g++) {
      const a = g === 0 ? ca : (ca + shift) * Math.exp((logSpan * g) / pieces) - shift;
      const b = g === pieces - 1 ? cb : (ca + shift) * Math.exp((logSpan * (g + 1)) / pieces) - shift;
      if (!(b > a)) continue;
      const phase = (Math.sqrt(2 * iso.massGeV * b * 1e-6) - Math.sqrt(2 * iso.massGeV * a * 1e-6)) / BASE.hbarC.value * iso.helmRadiusFm;
      const dv = vMinKmS(b, mChiGeV, iso.massGeV) - vMinKmS(a, mChiGeV, iso.massGeV);
      const panels = Math.min(MAX_PANELS, Math.max(1, Math.ceil(phase / PANEL_PHASE_RAD), Math.ceil(dv / PANEL_VMIN_KMS)));
      const width = (b - a) / panels;
      for (let p = 0; p < panels; p++) {
        const pa = a + p * width;
        const half = 0.5 * width;
        const mid = pa + half;
        for (let n = 0; n < GL_NODES; n++) {
          const e = mid + half * rule.nodes[n]!;
          const q2GeV2 = 2 * iso.massGeV * e * 1e-6;
          const qFm = Math.sqrt(q2GeV2) / BASE.hbarC.value;
          let common = half * rule.weights[n]! * det.efficiency(e) * shm.eta(vMinKmS(e, mChiGeV, iso.massGeV));
          if (m2 > 0) {
            const prop = m2 / (m2 + q2GeV2);
            common *= prop * prop;
          }
          const siTerm = common * helmFormFactorSq(qFm, iso.helmRadiusFm);
          const sdTerm = spin ? common * thinShellFormFactorSq(qFm, iso.shellRadiusFm) : 0;
          siIntegral += siTerm;
          sdIntegral += sdTerm;
          if (basis && common !== 0) addMomentTerms(si, sd, spin !== undefined, siTerm, sdTerm, xScale * Math.log(e) - xShift, loKeV / e, count);
        }
      }
    }
  }
  si[0] = siIntegral;
  if (spin) sd[0] = sdIntegral;
}

/**
 * Adds one quadrature node's terms times T_k(x) (E_lo/E)^a to si and sd (isotopeIntegrals' layout,
 * index a * count + k) for every k < count and a < MOMENT_WEIGHTS except (0, 0), whose sum the caller
 * keeps apart. T_k by the recurrence T_{k+1} = 2 x T_k - T_{k-1}; w1 = E_lo / E.
 */
function addMomentTerms(
  si: Float64Array, sd: Float64Array, spin: boolean, siTerm: number, sdTerm: number, x: number, w1: number, count: number,
): void {
  let tPrev = 1;
  let t = 1;
  for (let k = 0; k < count; k++) {
    if (k > 0) {
      const tNext = k === 1 ? x : 2 * x * t - tPrev;
      tPrev = t;
      t = tNext;
    }
    let w = t;
    for (let a = 0; a < MOMENT_WEIGHTS; a++) {
      if (a > 0 || k > 0) {
        const i = a * count + k;
        si[i] = si[i]! + siTerm * w;
        if (spin) sd[i] = sd[i]! + sdTerm * w;
      }
      w *= w1;
    }
  }
}

/**
 * Events per (amplitude GeV^-2)^2 per unit energy integral: exposure * rho / (2 pi m_chi), with the
 * GeV^-2 -> cm^2 and rate-unit conversions.
 */
export function kernelPrefactor(det: PreparedDetector, rhoGeVcm3: number, mChiGeV: number): number {
  return (det.exposureKgDay * rhoGeVcm3 * GEV2_TO_CM2 * RATE_UNIT) / (2 * Math.PI * mChiGeV);
}

/**
 * Adds one isotope's SI and SD energy integrals (isotopeIntegrals, k = 0) to a kernel `acc`
 * (KERNEL_SIZE entries from `offset`), weighted by its mass fraction, nucleon numbers and spins.
 */
export function addIsotopeToKernel(iso: PreparedIsotope, prefactor: number, siIntegral: number, sdIntegral: number, acc: Float64Array, offset = 0): void {
  const n = iso.a - iso.z;
  const si = prefactor * iso.massFraction * siIntegral;
  acc[offset] = acc[offset]! + si * iso.z * iso.z;
  acc[offset + 1] = acc[offset + 1]! + si * 2 * iso.z * n;
  acc[offset + 2] = acc[offset + 2]! + si * n * n;
  const spin = iso.spin;
  if (spin) {
    const sd = (prefactor * iso.massFraction * sdIntegral * 4 * (spin.j + 1)) / spin.j;
    acc[offset + 3] = acc[offset + 3]! + sd * spin.sp * spin.sp;
    acc[offset + 4] = acc[offset + 4]! + sd * 2 * spin.sp * spin.sn;
    acc[offset + 5] = acc[offset + 5]! + sd * spin.sn * spin.sn;
  }
}

/**
 * Response kernel of a detector (see the module comment), written into `out` at `offset`, by direct
 * quadrature (the reference that physics/direct/kernel-table.ts interpolates).
 * @param mMedGeV mediator mass for the propagator factor, or null for the contact limit
 */
export function responseKernel(
  det: PreparedDetector,
  shm: ShmEta,
  rhoGeVcm3: number,
  mChiGeV: number,
  mMedGeV: number | null,
  out: Float64Array,
  offset = 0,
): void {
  const m2 = mMedGeV === null ? 0 : mMedGeV * mMedGeV;
  const prefactor = kernelPrefactor(det, rhoGeVcm3, mChiGeV);
  const si = new Float64Array(1);
  const sd = new Float64Array(1);
  out.fill(0, offset, offset + KERNEL_SIZE);
  for (const iso of det.isotopes) {
    isotopeIntegrals(det, iso, shm, mChiGeV, m2, null, si, sd);
    if (si[0] === 0 && sd[0] === 0) continue;
    addIsotopeToKernel(iso, prefactor, si[0]!, sd[0]!, out, offset);
  }
}
