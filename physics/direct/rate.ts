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
 *  (GL_NODES per panel) sized so that each spans at most PANEL_PHASE_RAD of q r_n and
 *  PANEL_VMIN_KMS of v_min: the integrand is then a smooth, slowly varying function on each panel.
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
import { helmFormFactorSq, helmRadiusFm, thinShellFormFactorSq, thinShellRadiusFm } from './helm.js';
import { targetIsotopes, type TargetIsotope } from './isotopes.js';

// ---------------------------------------------------------------- numerical knobs
/** Gauss-Legendre nodes per panel: 10 gives <= 4e-13 relative on the scipy fixture cases (8 gave 2e-10). */
export const GL_NODES = 10;
/** Largest span of q r_n (Helm argument) per panel, radians: keeps F^2 low-order on a panel. */
export const PANEL_PHASE_RAD = 1.0;
/** Largest span of v_min per panel, km/s (eta varies on the scale v0 ~ 220 km/s). */
export const PANEL_VMIN_KMS = 100;
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
/** A detector prepared once per scan: isotopes with precomputed radii, efficiency, exposure. */
export interface PreparedDetector {
  readonly name: string;
  readonly isotopes: readonly (TargetIsotope & { readonly helmRadiusFm: number; readonly shellRadiusFm: number })[];
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
    Object.freeze({ ...i, helmRadiusFm: helmRadiusFm(i.a), shellRadiusFm: thinShellRadiusFm(i.a) }),
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
 * Response kernel of a detector (see the module comment), written into `out` at `offset`.
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
  const rule = gaussLegendre(GL_NODES);
  const m2 = mMedGeV === null ? 0 : mMedGeV * mMedGeV;
  // events per (amplitude GeV^-2)^2: exposure * rho/(2 pi m_chi) * GeV^-2 -> cm^2 conversion
  const prefactor = (det.exposureKgDay * rhoGeVcm3 * GEV2_TO_CM2 * RATE_UNIT) / (2 * Math.PI * mChiGeV);
  let siPP = 0;
  let siPN = 0;
  let siNN = 0;
  let sdPP = 0;
  let sdPN = 0;
  let sdNN = 0;
  for (const iso of det.isotopes) {
    const eMax = Math.min(det.hiKeV, recoilForVMinKeV(shm.vMaxKmS, mChiGeV, iso.massGeV));
    if (!(eMax > det.loKeV)) continue;
    const eKink = recoilForVMinKeV(shm.vKinkKmS, mChiGeV, iso.massGeV);
    const cuts = [det.loKeV, ...det.efficiencyNodesKeV.filter((e) => e < eMax), ...(eKink > det.loKeV && eKink < eMax ? [eKink] : []), eMax].sort((p, q) => p - q);
    let siIntegral = 0;
    let sdIntegral = 0;
    const spin = iso.spin;
    for (let c = 0; c + 1 < cuts.length; c++) {
      const a = cuts[c]!;
      const b = cuts[c + 1]!;
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
          siIntegral += common * helmFormFactorSq(qFm, iso.helmRadiusFm);
          if (spin) sdIntegral += common * thinShellFormFactorSq(qFm, iso.shellRadiusFm);
        }
      }
    }
    const n = iso.a - iso.z;
    const si = prefactor * iso.massFraction * siIntegral;
    siPP += si * iso.z * iso.z;
    siPN += si * 2 * iso.z * n;
    siNN += si * n * n;
    if (spin) {
      const sd = (prefactor * iso.massFraction * sdIntegral * 4 * (spin.j + 1)) / spin.j;
      sdPP += sd * spin.sp * spin.sp;
      sdPN += sd * 2 * spin.sp * spin.sn;
      sdNN += sd * spin.sn * spin.sn;
    }
  }
  out.set([siPP, siPN, siNN, sdPP, sdPN, sdNN], offset);
}
