/**
 * Interpolated detector response kernels, so that every new DM mass costs a table look-up instead
 * of an energy quadrature (physics/direct/rate.ts responseKernel).
 *
 * What: per detector and target isotope, the energy integrals J(m_chi) = int eps F^2 eta dE (SI with
 * the Helm, SD with the thin-shell F^2) as lazily built tables in the DM mass, and for light
 * mediators their Chebyshev moments, from which the kernel of rate.ts is assembled for any
 * (m_chi, m_med).
 *
 * Method:
 *  - Threshold. An isotope can recoil into the window only above the mass m_thr at which
 *    E_R,max = 2 mu_A^2 (v_esc + v_E)^2 / m_A reaches the effective low edge E_eff (the window low
 *    edge, or where the efficiency first becomes non-zero). Closed form: mu = sqrt(m_A E_eff / 2) /
 *    (v_esc + v_E), m_thr = mu m_A / (m_A - mu). Near it eta vanishes quadratically in v_min, so
 *    J ~ (m - m_thr)^p h(m) with p = 3 (p = 4 if eps vanishes at E_eff) and h smooth. The table
 *    variable is t = ln((m - m_thr)/GeV): ln J is then smooth in t down to the threshold
 *    (asymptotically linear), and m <= m_thr gives exactly zero, as in the quadrature.
 *  - Breakpoints. J(m) is piecewise analytic: the non-smooth masses are where E_R,max or the eta
 *    kink (v_min = v_esc - v_E) crosses E_eff, the window top or an efficiency node. Each is
 *    computed in closed form like m_thr and starts a new table segment, so that no interpolation
 *    stencil straddles one.
 *  - Interpolation. Uniform nodes in t per segment (TABLE_STEP apart, segment ends exact),
 *    STENCIL_POINTS-point Lagrange interpolation of ln J and of the moment ratios J_k / J_0, with
 *    the stencil kept inside its segment.
 *  - Light mediators. The propagator P = [M^2/(M^2+q^2)]^2 (q^2 = 2 m_A E_R) is interpolated on
 *    [E_eff, E_hi] in x ~ ln E_R by a Chebyshev series: as a function of ln q^2 it is analytic with
 *    its nearest poles a distance pi off the real axis whatever M is, so a few tens of terms give
 *    1e-8 relative (the count is chosen per detector at preparation by a dense check,
 *    CHEBYSHEV_REL_TOL). Then int g P dE = sum_k c_k(M) J_k(m) with the moments
 *    J_k = int g T_k(x) dE tabulated like J_0. The tables store the moments already transformed to
 *    the Chebyshev points E_j (W_j = sum_k C_kj J_k with the cosine matrix C of the interpolant), so
 *    a point costs int g P dE = sum_j P(E_j) W_j(m): N propagator values and N look-ups per isotope.
 *    Where P spans orders of magnitude over the window (m_med << q) small table errors would be
 *    amplified, so moments are also kept with weights w_a = (E_lo/E)^a (a = 1, 2) and each point
 *    interpolates P / w_a for the a that makes it flattest. The mediator mass thus needs no table
 *    dimension. A window starting at 0 keV
 *    (ln E unbounded) or one needing more than CHEBYSHEV_MAX_TERMS terms falls back to the exact
 *    quadrature (prepare.ts memo).
 *  - Laziness and determinism. A node is computed the first time a stencil needs it; its value is a
 *    pure function of (detector, isotope, segment, index), so results are bit-identical whatever
 *    points came first. Masses closer to threshold than THRESHOLD_GAP_REL m_thr, or outside the
 *    model's m_chi range, use the exact per-isotope quadrature (events there are < 1e-9 of nearby).
 *
 * Validity: that of rate.ts (SHM, Helm / thin shell, contact or single propagator).
 * Accuracy (tests/direct/kernel-table.test.ts, dense comparison with the exact quadrature on Xe with
 * and without an efficiency table, Ar, Ge, CaWO4, CF3I, NaI, light and heavy mediators): relative
 * error of each kernel entry well below 1e-4 wherever it exceeds 1e-6 of its maximum; near the
 * threshold the relative error stays small down to THRESHOLD_GAP_REL.
 * References: Lewin & Smith 1996, Astropart. Phys. 6, 87 (kinematics); Trefethen 2013,
 * "Approximation Theory and Approximation Practice", SIAM, ch. 3, 8 (Chebyshev interpolation and its
 * convergence for functions analytic in a Bernstein ellipse).
 */
import { C_KM_S } from '../constants.js';
import { PARAMETERS } from '../model.js';
import type { ShmEta } from './halo.js';
import {
  KERNEL_SIZE, MOMENT_WEIGHTS, PROPAGATOR_CONTACT_TOL, addIsotopeToKernel, isotopeIntegrals, kernelPrefactor,
  type MomentBasis, type PreparedDetector, type PreparedIsotope,
} from './rate.js';

// ---------------------------------------------------------------- numerical knobs
/** Node spacing in t = ln((m_chi - m_thr)/GeV); measured errors are in the module comment. */
export const TABLE_STEP = 1 / 16;
/** Points of the Lagrange interpolation stencil (cubic; the evaluation is unrolled for 4). */
export const STENCIL_POINTS = 4;
/** Masses with m_chi - m_thr below this fraction of m_thr use the exact quadrature. */
export const THRESHOLD_GAP_REL = 1e-3;
/** Largest relative error allowed for the Chebyshev interpolant of the propagator factor. */
export const CHEBYSHEV_REL_TOL = 1e-8;
/** Most Chebyshev terms before a detector falls back to the exact quadrature for light mediators. */
export const CHEBYSHEV_MAX_TERMS = 40;

const paramRange = (name: string): { min: number; max: number } => {
  const p = PARAMETERS.find((q) => q.name === name);
  if (!p || p.kind !== 'number') throw new Error(`kernel-table: model parameter ${name} missing`);
  return { min: p.min, max: p.max };
};
/** m_chi range of the model (physics/model.ts), GeV */
const M_CHI = paramRange('m_chi');
/** m_med range of the model (physics/model.ts), GeV */
const M_MED = paramRange('m_med');

/** DM mass at which E_R,max for DM speed vKmS equals eKeV on nucleus massGeV, or Infinity. */
export function massForRecoilGeV(vKmS: number, eKeV: number, massGeV: number): number {
  const mu = Math.sqrt((eKeV * 1e-6 * massGeV) / 2) / (vKmS / C_KM_S);
  return mu < massGeV ? (mu * massGeV) / (massGeV - mu) : Infinity;
}

/**
 * Lowest energy above which the efficiency is positive inside the window (keV), or null when it
 * vanishes on the whole window. The efficiency is linear between the cut points.
 */
export function effectiveLowEdgeKeV(det: PreparedDetector): number | null {
  const cuts = [det.loKeV, ...det.efficiencyNodesKeV, det.hiKeV];
  for (let i = 0; i + 1 < cuts.length; i++) {
    if (det.efficiency(0.5 * (cuts[i]! + cuts[i + 1]!)) > 0) return cuts[i]!;
  }
  return null;
}

/** Chebyshev points x_j = cos(pi (j + 1/2) / n) and the cosine matrix cos(k pi (j + 1/2) / n). */
function chebyshevPoints(n: number): { x: Float64Array; cos: Float64Array } {
  const x = new Float64Array(n);
  const cos = new Float64Array(n * n);
  for (let j = 0; j < n; j++) x[j] = Math.cos((Math.PI * (j + 0.5)) / n);
  for (let k = 0; k < n; k++) for (let j = 0; j < n; j++) cos[k * n + j] = Math.cos((k * Math.PI * (j + 0.5)) / n);
  return { x, cos };
}

/** Chebyshev coefficients of the interpolant through values f at chebyshevPoints(n). */
function chebyshevCoefficients(f: Float64Array, cos: Float64Array, n: number, out: Float64Array): void {
  for (let k = 0; k < n; k++) {
    let s = 0;
    for (let j = 0; j < n; j++) s += f[j]! * cos[k * n + j]!;
    out[k] = ((k === 0 ? 1 : 2) * s) / n;
  }
}

/** Clenshaw summation of sum_k c_k T_k(x). */
function chebyshevSum(c: Float64Array, n: number, x: number): number {
  let b1 = 0;
  let b2 = 0;
  for (let k = n - 1; k >= 1; k--) {
    const b = 2 * x * b1 - b2 + c[k]!;
    b2 = b1;
    b1 = b;
  }
  return x * b1 - b2 + c[0]!;
}

/**
 * Smallest even number of Chebyshev terms for which the interpolant of P(s) = (1 + e^(s - d))^-2
 * on s = ln E in [lnLo, lnHi] has relative error <= CHEBYSHEV_REL_TOL for every d in [dMin, dMax]
 * (d = ln(M^2 / (2 m_A)) in keV units), checked on a dense (d, s) grid; 0 when none up to
 * CHEBYSHEV_MAX_TERMS. P depends on M and the isotope only through d, and for d far outside
 * [lnLo, lnHi] its relative shape no longer changes, so the clipped grid covers all cases.
 */
export function chebyshevTermsFor(lnLo: number, lnHi: number, dMin: number, dMax: number): number {
  const lo = Math.max(dMin, lnLo - 25);
  const hi = Math.min(dMax, lnHi + 25);
  const dCount = Math.max(2, Math.ceil((hi - lo) / 0.1) + 1);
  const sCount = 97;
  for (let n = 4; n <= CHEBYSHEV_MAX_TERMS; n += 2) {
    const { x, cos } = chebyshevPoints(n);
    const f = new Float64Array(n);
    const c = new Float64Array(n);
    let worst = 0;
    for (let i = 0; i < dCount && worst <= CHEBYSHEV_REL_TOL; i++) {
      const d = hi > lo ? lo + ((hi - lo) * i) / (dCount - 1) : lo;
      for (let j = 0; j < n; j++) f[j] = (1 + Math.exp(0.5 * (lnHi - lnLo) * x[j]! + 0.5 * (lnHi + lnLo) - d)) ** -2;
      chebyshevCoefficients(f, cos, n, c);
      for (let j = 0; j < sCount; j++) {
        const xs = -1 + (2 * j) / (sCount - 1);
        const exact = (1 + Math.exp(0.5 * (lnHi - lnLo) * xs + 0.5 * (lnHi + lnLo) - d)) ** -2;
        worst = Math.max(worst, Math.abs(chebyshevSum(c, n, xs) / exact - 1));
      }
    }
    if (worst <= CHEBYSHEV_REL_TOL) return n;
  }
  return 0;
}

/** Lagrange weights of equally spaced nodes 0..n-1 at local coordinate s. */
function lagrangeWeights(s: number, n: number, out: Float64Array): void {
  if (n === 4) {
    const s1 = s - 1;
    const s2 = s - 2;
    const s3 = s - 3;
    out[0] = (-s1 * s2 * s3) / 6;
    out[1] = (s * s2 * s3) / 2;
    out[2] = (-s * s1 * s3) / 2;
    out[3] = (s * s1 * s2) / 6;
    return;
  }
  for (let j = 0; j < n; j++) {
    let w = 1;
    for (let i = 0; i < n; i++) if (i !== j) w *= (s - i) / (j - i);
    out[j] = w;
  }
}

interface Segment {
  /** t of the first node */
  readonly t0: number;
  /** node spacing in t */
  readonly dt: number;
  /** number of intervals (nodes = intervals + 1) */
  readonly intervals: number;
  /** index of the first node in the isotope's node arrays */
  readonly offset: number;
}

/** Lazily built interpolation table of one isotope's energy integrals and moments. */
class IsotopeTable {
  /** threshold DM mass, GeV (0 when the window reaches E_R = 0) */
  readonly mThrGeV: number;
  private readonly tLo: number;
  private readonly tHi: number;
  private readonly segments: Segment[] = [];
  /** per node: ln J_0 (SI), then W_(a,j)/J_0 at 1 + a N + j (SI), then the same for SD if spin */
  private readonly values: Float64Array;
  private readonly built: Uint8Array;
  private readonly stride: number;
  private readonly count: number;
  private readonly size: number;
  private readonly si: Float64Array;
  private readonly sd: Float64Array;
  private readonly weights = new Float64Array(STENCIL_POINTS);
  nodesBuilt = 0;

  constructor(
    private readonly det: PreparedDetector,
    readonly iso: PreparedIsotope,
    private readonly shm: ShmEta,
    eEffKeV: number,
    private readonly basis: MomentBasis | null,
    /** cosine matrix of chebyshevPoints(basis.count) */
    private readonly chebCos: Float64Array,
  ) {
    this.count = basis ? basis.count : 1;
    this.size = basis ? 1 + MOMENT_WEIGHTS * basis.count : 1;
    this.stride = (iso.spin ? 2 : 1) * this.size;
    this.si = new Float64Array(MOMENT_WEIGHTS * this.count);
    this.sd = new Float64Array(MOMENT_WEIGHTS * this.count);
    const mA = iso.massGeV;
    this.mThrGeV = eEffKeV > 0 ? massForRecoilGeV(shm.vMaxKmS, eEffKeV, mA) : 0;
    const gap = Math.max(M_CHI.min - this.mThrGeV, THRESHOLD_GAP_REL * this.mThrGeV);
    this.tLo = Math.log(gap);
    this.tHi = Math.log(M_CHI.max - this.mThrGeV);
    if (!(this.tHi > this.tLo)) {
      this.values = new Float64Array(0);
      this.built = new Uint8Array(0);
      return;
    }
    const inside = (e: number): boolean => e > eEffKeV && e < det.hiKeV;
    const edges = [eEffKeV, det.hiKeV, ...det.efficiencyNodesKeV.filter(inside), ...iso.shellKinksKeV.filter(inside)];
    const breaks = [shm.vMaxKmS, shm.vKinkKmS]
      .flatMap((v) => edges.map((e) => massForRecoilGeV(v, e, mA)))
      .filter((m) => m > this.mThrGeV)
      .map((m) => Math.log(m - this.mThrGeV))
      .filter((t) => t > this.tLo && t < this.tHi)
      .sort((a, b) => a - b);
    const bounds = [this.tLo];
    for (const t of [...breaks, this.tHi]) {
      // merge breakpoints closer than a small fraction of a step (keeps node spacing sane)
      if (t - bounds[bounds.length - 1]! > 1e-3 * TABLE_STEP) bounds.push(t);
      else if (t === this.tHi) bounds[bounds.length - 1] = t;
    }
    let offset = 0;
    for (let i = 0; i + 1 < bounds.length; i++) {
      const span = bounds[i + 1]! - bounds[i]!;
      const intervals = Math.max(STENCIL_POINTS - 1, Math.ceil(span / TABLE_STEP));
      this.segments.push({ t0: bounds[i]!, dt: span / intervals, intervals, offset });
      offset += intervals + 1;
    }
    this.values = new Float64Array(offset * this.stride);
    this.built = new Uint8Array(offset);
  }

  private buildNode(seg: Segment, k: number): void {
    const index = seg.offset + k;
    const t = k === seg.intervals ? seg.t0 + seg.intervals * seg.dt : seg.t0 + k * seg.dt;
    const mChi = this.mThrGeV + Math.exp(t);
    isotopeIntegrals(this.det, this.iso, this.shm, mChi, 0, this.basis, this.si, this.sd);
    const base = index * this.stride;
    const store = (src: Float64Array, at: number): void => {
      const j0 = src[0]!;
      if (!(j0 > 0)) throw new Error(`kernel-table: non-positive energy integral ${j0} above threshold (m_chi ${mChi} GeV, A ${this.iso.a})`);
      this.values[at] = Math.log(j0);
      if (!this.basis) return;
      const n = this.count;
      for (let a = 0; a < MOMENT_WEIGHTS; a++) {
        for (let j = 0; j < n; j++) {
          // coefficient of P(E_j) in sum_k c_k J_(a,k), c = cosine transform of the P(E_j)
          let wj = 0;
          for (let k = 0; k < n; k++) wj += ((k === 0 ? 1 : 2) / n) * this.chebCos[k * n + j]! * src[a * n + k]!;
          this.values[at + 1 + a * n + j] = wj / j0;
        }
      }
    };
    store(this.si, base);
    if (this.iso.spin) store(this.sd, base + this.size);
    this.built[index] = 1;
    this.nodesBuilt++;
  }

  /**
   * SI and SD energy integrals (P included) at mChi, written to out[0], out[1].
   * @param pHat P / w_weight at the Chebyshev energies for this isotope, or null (contact)
   * @param weight index a of the moment weight (E_lo/E)^a that pHat goes with
   * @param m2 m_med^2 for the exact fallback (0 = contact)
   */
  integrals(mChiGeV: number, pHat: Float64Array | null, weight: number, m2: number, out: Float64Array): void {
    out[0] = 0;
    out[1] = 0;
    if (!(mChiGeV > this.mThrGeV)) return;
    const t = Math.log(mChiGeV - this.mThrGeV);
    if (!(t >= this.tLo && t <= this.tHi)) {
      isotopeIntegrals(this.det, this.iso, this.shm, mChiGeV, m2, null, this.si, this.sd);
      out[0] = this.si[0]!;
      out[1] = this.iso.spin ? this.sd[0]! : 0;
      return;
    }
    const segs = this.segments;
    let s = 0;
    while (s + 1 < segs.length && t >= segs[s + 1]!.t0) s++;
    const seg = segs[s]!;
    const u = (t - seg.t0) / seg.dt;
    const k = Math.min(seg.intervals - 1, Math.max(0, Math.floor(u)));
    const start = Math.min(seg.intervals + 1 - STENCIL_POINTS, Math.max(0, k - (STENCIL_POINTS / 2 - 1)));
    for (let j = 0; j < STENCIL_POINTS; j++) if (!this.built[seg.offset + start + j]) this.buildNode(seg, start + j);
    const w = this.weights;
    lagrangeWeights(u - start, STENCIL_POINTS, w);
    const base = (seg.offset + start) * this.stride;
    out[0] = this.evaluate(base, w, pHat, weight);
    if (this.iso.spin) out[1] = this.evaluate(base + this.size, w, pHat, weight);
  }

  private evaluate(base: number, w: Float64Array, pHat: Float64Array | null, weight: number): number {
    const v = this.values;
    const stride = this.stride;
    const w0 = w[0]!;
    const w1 = w[1]!;
    const w2 = w[2]!;
    const w3 = w[3]!;
    const s2 = 2 * stride;
    const s3 = 3 * stride;
    const j0 = Math.exp(w0 * v[base]! + w1 * v[base + stride]! + w2 * v[base + s2]! + w3 * v[base + s3]!);
    if (!pHat) return j0;
    const first = base + 1 + weight * this.count;
    let avg = 0;
    for (let q = 0; q < this.count; q++) {
      const i = first + q;
      avg += pHat[q]! * (w0 * v[i]! + w1 * v[i + stride]! + w2 * v[i + s2]! + w3 * v[i + s3]!);
    }
    return j0 * avg;
  }
}

/** Interpolated response kernels of one prepared detector (see the module comment). */
export class DetectorKernelTable {
  private readonly tables: IsotopeTable[];
  /** Chebyshev terms for light mediators; 0 = light mediators use the exact quadrature */
  readonly chebyshevTerms: number;
  /** largest q^2 in the window over the isotopes, GeV^2 (contact-limit test) */
  readonly q2MaxGeV2: number;
  private readonly chebEnergiesKeV: Float64Array;
  private readonly pValues: Float64Array;
  /** (E_j / E_lo)^a at the Chebyshev energies, a < MOMENT_WEIGHTS */
  private readonly weightValues: Float64Array[];
  private readonly scaled: Float64Array;
  /** window used by the Chebyshev basis, keV */
  private readonly eLoKeV: number;
  private readonly eHiKeV: number;
  private readonly pair = new Float64Array(2);

  constructor(private readonly det: PreparedDetector, private readonly shm: ShmEta, private readonly rhoGeVcm3: number) {
    this.q2MaxGeV2 = Math.max(...det.isotopes.map((iso) => 2 * iso.massGeV * det.hiKeV * 1e-6));
    const eEff = effectiveLowEdgeKeV(det);
    let terms = 0;
    if (eEff !== null && eEff > 0) {
      const lnLo = Math.log(eEff);
      const lnHi = Math.log(det.hiKeV);
      const masses = det.isotopes.map((i) => i.massGeV);
      const m2Contact = this.q2MaxGeV2 / PROPAGATOR_CONTACT_TOL;
      const dMin = Math.log((M_MED.min * M_MED.min) / (2 * Math.max(...masses) * 1e-6));
      const dMax = Math.log(m2Contact / (2 * Math.min(...masses) * 1e-6));
      terms = chebyshevTermsFor(lnLo, lnHi, dMin, dMax);
    }
    this.chebyshevTerms = terms;
    const basis: MomentBasis | null = terms > 0 && eEff !== null ? { lnLoKeV: Math.log(eEff), lnHiKeV: Math.log(det.hiKeV), count: terms } : null;
    const pts = chebyshevPoints(terms);
    this.chebEnergiesKeV = basis ? pts.x.map((x) => Math.exp(0.5 * (basis.lnHiKeV - basis.lnLoKeV) * x + 0.5 * (basis.lnHiKeV + basis.lnLoKeV))) : new Float64Array(0);
    this.pValues = new Float64Array(terms);
    this.scaled = new Float64Array(terms);
    this.eLoKeV = basis ? Math.exp(basis.lnLoKeV) : 0;
    this.eHiKeV = det.hiKeV;
    this.weightValues = Array.from({ length: MOMENT_WEIGHTS }, (_, a) =>
      this.chebEnergiesKeV.map((e) => (basis ? (e / Math.exp(basis.lnLoKeV)) ** a : 1)));
    this.tables = eEff === null ? [] : det.isotopes.map((iso) => new IsotopeTable(det, iso, shm, eEff, basis, pts.cos));
  }

  /** true when q^2 / m_med^2 stays below PROPAGATOR_CONTACT_TOL over the window */
  isContact(mMedGeV: number): boolean {
    return this.q2MaxGeV2 / (mMedGeV * mMedGeV) < PROPAGATOR_CONTACT_TOL;
  }

  /**
   * P / w_a at the Chebyshev energies (into this.scaled) for nucleus massGeV, with the weight a
   * chosen to make P / w_a flattest (smallest max/min), so that small errors of the tabulated
   * moments are not amplified where P spans orders of magnitude. Returns a.
   */
  private propagatorValues(massGeV: number, m2: number): number {
    const n = this.chebyshevTerms;
    const twoMA = 2 * massGeV * 1e-6;
    for (let j = 0; j < n; j++) {
      const p = m2 / (m2 + twoMA * this.chebEnergiesKeV[j]!);
      this.pValues[j] = p * p;
    }
    // P w_a^-1 ~ y^a / (1 + y)^2 with y = q^2 / M^2: monotone for a = 0, 2; for a = 1 its maximum
    // is at y = 1. Spreads from the window ends (and y = 1 when inside) decide.
    const yLo = (twoMA * this.eLoKeV) / m2;
    const yHi = (twoMA * this.eHiKeV) / m2;
    const r0 = (1 + yHi) / (1 + yLo);
    const spread0 = r0 * r0;
    const r2 = (yHi * (1 + yLo)) / (yLo * (1 + yHi));
    const spread2 = r2 * r2;
    const f1Lo = yLo / ((1 + yLo) * (1 + yLo));
    const f1Hi = yHi / ((1 + yHi) * (1 + yHi));
    const spread1 = (yLo < 1 && yHi > 1 ? 0.25 : Math.max(f1Lo, f1Hi)) / Math.min(f1Lo, f1Hi);
    const best = spread0 <= spread1 && spread0 <= spread2 ? 0 : spread1 <= spread2 ? 1 : 2;
    const wb = this.weightValues[best]!;
    for (let j = 0; j < n; j++) this.scaled[j] = this.pValues[j]! * wb[j]!;
    return best;
  }

  /** Table nodes computed so far (diagnostics). */
  nodesBuilt(): number {
    return this.tables.reduce((s, t) => s + t.nodesBuilt, 0);
  }

  /**
   * Interpolated kernel at (mChi, mMed) into out[offset .. offset + KERNEL_SIZE); mMed null or a
   * contact-limit mass gives the contact kernel. Callers must use the exact quadrature instead when
   * the mediator is light and chebyshevTerms is 0.
   */
  kernel(mChiGeV: number, mMedGeV: number | null, out: Float64Array, offset = 0): void {
    const light = mMedGeV !== null && !this.isContact(mMedGeV);
    if (light && this.chebyshevTerms === 0) throw new Error('kernel-table: light mediator without a Chebyshev basis; use the exact kernel');
    const m2 = light ? mMedGeV * mMedGeV : 0;
    out.fill(0, offset, offset + KERNEL_SIZE);
    const prefactor = kernelPrefactor(this.det, this.rhoGeVcm3, mChiGeV);
    const n = this.chebyshevTerms;
    for (const table of this.tables) {
      if (!(mChiGeV > table.mThrGeV)) continue;
      const weight = light ? this.propagatorValues(table.iso.massGeV, m2) : 0;
      table.integrals(mChiGeV, light ? this.scaled : null, weight, m2, this.pair);
      addIsotopeToKernel(table.iso, prefactor, this.pair[0]!, this.pair[1]!, out, offset);
    }
  }
}
