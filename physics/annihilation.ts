/**
 * Annihilation cross sections of the dark-matter pair, fully relativistic in the Mandelstam s.
 *
 * What: sigma(s) and sigma*v_Mol(s) per final state for chi chibar (Dirac) or chi chi (Majorana)
 * annihilating through one s-channel mediator (scalar S, pseudoscalar P, vector V, axial A) into
 * every quark pair (if g_q > 0) and charged-lepton pair (if g_l > 0), plus the mediator pair
 * (t/u-channel chi exchange) when m_chi > m_med. Implements the Annihilation contract of
 * physics/annihilation-model.ts.
 *
 * Method, f fbar: the closed forms of the shared notes indirect.md A1 (exact tree level after the
 * angular integration; unitary-gauge spin-1 propagator, whose q_mu q_nu / M^2 part gives the
 * helicity-suppressed axial s-wave), with the fixed-width Breit-Wigner
 * |D|^2 = (s - M^2)^2 + M^2 Gamma^2. Couplings as indirect.md A0: spin-0 c_f = g m_f / v (Yukawa-like),
 * spin-1 universal g_q / g_l; colour factor 3 for quarks.
 *
 * Method, mediator pair: exact tree-level chi chibar -> med med (t- and u-channel chi exchange,
 * spin average 1/4, factor 1/2 for identical bosons, three Proca polarisations with
 * sum eps eps* = -g + k k / M^2), integrated over the angle in closed form. Derived here with sympy
 * from explicit 4x4 Dirac traces (the spin-summed |M|^2 times (t - m^2)^2 (u - m^2)^2 is even and
 * quartic in cos(theta); tests/fixtures/annihilation/derive_pair_closed_form.py).
 * With r = M^2/m_chi^2, sh = s/m_chi^2, d = sh - 4, e = sh - 4r, w = sh - 2r:
 *   sigma v_Mol = g_chi^4 sqrt(e/sh) / (8 pi m_chi^2 sh w^2) * [ x^2/(1-x^2) c1 + x^2 c2 H(x) + 2 n0 ],
 *   x^2 = d e / w^2,  x^2/(1-x^2) = d e / (4 (r^2 - 4r + sh)),  H(x) = (atanh(x)/x - 1)/x^2
 *   (x = beta_chi beta_med s / (s - 2M^2) < 1; H by its Taylor series sum x^(2n)/(2n+3) for x^2 < 0.01),
 *   S: n0 = 8d,                c1 = -2(4-r)^2,  c2 = d^2 + (24-4r) d + 6r^2 - 32r + 48
 *   P: n0 = 0,                 c1 = -2r^2,      c2 = d^2 + (8-4r) d + 6r^2 - 16r + 16
 *   V: n0 = d^2 + (16+4r) d + 16 - 16r,        c1 = -8(r+2)^2,  c2 = 4 (d^2 + 12d + 4r^2 - 8r + 24)
 *   A: n0 = [2d^3 + (16 - 8r + r^2) d^2 + (32 - 32r + 24r^2 + 4r^3) d + 16r^2 - 16r^3] / r^2,
 *      c1 = -8(4-r)^2,
 *      c2 = 4 [(r^2 + 4r - 4) d^2 + (48r - 4r^2 - 32) d + 4r^4 - 16r^3 - 32r^2 + 128r - 64] / r^2.
 * The 1/r terms of A are the longitudinal modes coupled to the non-conserved axial current (growth as
 * g^4 v^2 m_chi^2/(12 pi M^4) for M -> 0, a unitarity problem of the model: Kahlhoefer et al. 2016,
 * JHEP 02, 016 [memory]); for V they cancel (conserved current). All polynomials are precomputed per
 * point; the s = 4 m^2 zeros of the p-wave channels are explicit factors of d (no cancellation).
 * v -> 0 reproduces indirect.md A4 exactly (V/A s-wave, S and P v^2 coefficients); the full v^2
 * coefficients of V and A are in physics/annihilation-nr.ts. The channel is absent when
 * m_med >= m_chi (no Boltzmann-tail opening of a kinematically forbidden pair channel).
 *
 * Majorana (normalisation (g_chi/2) chibar Gamma chi, indirect.md A6): the same sigma as Dirac at
 * equal g_chi for every final state; the vector current vanishes, so a vector mediator gives no
 * annihilation at all (the result then has no channels and sigma = 0). For the pair channel this was
 * checked separately (both exchanges present for Majorana too, the u-channel carried against the
 * fermion flow with C-conjugated vertices and a relative minus sign, flow rules of Denner, Eck, Hahn &
 * Kublbeck 1992, Nucl. Phys. B387, 467 [memory]): for S, P, A the spin-summed |M|^2 equals the Dirac one
 * angle by angle (fixture, to 1e-12), as the decomposition of a Dirac fermion into two decoupled
 * Majoranas with (g/2) couplings (chi1 chi2 -> med med has no tree diagram) requires.
 *
 * Validity: tree level, perturbative couplings, narrow-to-moderate width (fixed-width
 * Breit-Wigner; Gamma/M > 0.3 is flagged by the evaluation). Quark final states are taken as free
 * quarks: below a few GeV (hadronic thresholds) the rates are indicative only. No Sommerfeld
 * factor, no loop-induced final states (gg, gamma gamma), no W/Z/h final states.
 *
 * Accuracy: all channels are exact tree-level closed forms in double precision. Agreement with the
 * explicit-spinor numerics of tests/fixtures/annihilation: f fbar ~1e-12; mediator pair <= 1.2e-12 for
 * v_rel >= 0.01 and <= 8e-10 at v_rel = 1e-3 (rounding of s - 4 m^2 on both sides), over r = 1e-6 ... 0.9999
 * and v_rel up to 1.9.
 *
 * References: Abercrombie et al. 2015, arXiv:1507.00966, Sec. 2 (Lagrangians); Berlin, Hooper &
 * McDermott 2014, PRD 89, 115022 (non-relativistic limits) [memory]; Pospelov, Ritz & Voloshin
 * 2008, PLB 662, 53 (chi chibar -> V V s-wave) [memory]; indirect.md A4 (pair-channel NR limits);
 * Gondolo & Gelmini 1991, Nucl. Phys. B360, 145
 * (v_Mol = 2 beta_chi in the CM frame).
 *
 * Hot path: sigmaTotalGeV2 / sigmaVByChannelGeV2 are called ~1e3 times per model point; everything
 * that does not depend on s is precomputed here into Float64Arrays, and a call allocates nothing.
 */
import type { Annihilation, AnnihilationChannel, Pole } from './annihilation-model.js';
import { BASE, type Fermion } from './constants.js';
import { InvalidInputError, type Issue } from './issue.js';
import type { ModelPoint } from './model.js';
import { DEFAULT_FERMIONS } from './widths.js';

/** Options other than the model point and width. */
export interface AnnihilationOptions {
  /** final-state fermions (masses, colours); default: all quarks and charged leptons of physics/constants */
  readonly fermions?: readonly Fermion[];
  /** electroweak vev for the spin-0 Yukawa couplings, GeV; default BASE.higgsVev (246.22) */
  readonly vevGeV?: number;
  /** include the mediator-pair channel 'med_med' when m_chi > m_med; default true */
  readonly mediatorPairs?: boolean;
}

/** Name of the mediator-pair channel in the Annihilation contract. */
export const MEDIATOR_PAIR_CHANNEL = 'med_med';

/**
 * Per-point constants of the exact chi chibar -> med med cross section (see the head comment):
 * sigma v_Mol = norm sqrt(e/sh) / (sh w^2) [xr c1 + x^2 c2 H(x) + 2 n0], with the polynomials in
 * d = s/m_chi^2 - 4 stored as coefficients. Depends only on g_chi, m_chi, m_med and the mediator.
 */
interface PairConstants {
  /** r = m_med^2 / m_chi^2 */
  readonly r: number;
  /** g_chi^4 / (8 pi m_chi^2), GeV^-2 */
  readonly norm: number;
  /** n0 = n00 + n01 d + n02 d^2 + n03 d^3 */
  readonly n0: readonly [number, number, number, number];
  /** c1 (independent of d) */
  readonly c1: number;
  /** c2 = c20 + c21 d + c22 d^2 */
  readonly c2: readonly [number, number, number];
}

function pairConstants(mediator: ModelPoint['mediator'], gChi: number, mChiGeV: number, mMedGeV: number): PairConstants {
  const r = (mMedGeV * mMedGeV) / (mChiGeV * mChiGeV);
  const g2 = gChi * gChi;
  const norm = (g2 * g2) / (8 * Math.PI * mChiGeV * mChiGeV);
  switch (mediator) {
    case 'scalar':
      return { r, norm, n0: [0, 8, 0, 0], c1: -2 * (4 - r) * (4 - r), c2: [6 * r * r - 32 * r + 48, 24 - 4 * r, 1] };
    case 'pseudoscalar':
      return { r, norm, n0: [0, 0, 0, 0], c1: -2 * r * r, c2: [6 * r * r - 16 * r + 16, 8 - 4 * r, 1] };
    case 'vector':
      return { r, norm, n0: [16 - 16 * r, 16 + 4 * r, 1, 0], c1: -8 * (r + 2) * (r + 2), c2: [16 * r * r - 32 * r + 96, 48, 4] };
    case 'axial': {
      // the 1/r and 1/r^2 terms are the longitudinal (k_mu k_nu / M^2) parts of the Proca polarisation sum
      const ir = 1 / r;
      const ir2 = ir * ir;
      return {
        r, norm,
        n0: [16 - 16 * r, 32 * ir2 - 32 * ir + 24 + 4 * r, (4 * ir - 1) * (4 * ir - 1), 2 * ir2],
        c1: -8 * (4 - r) * (4 - r),
        c2: [16 * r * r - 64 * r - 128 + 512 * ir - 256 * ir2, 192 * ir - 16 - 128 * ir2, 4 + 16 * ir - 16 * ir2],
      };
    }
  }
}

/** Adds an out_of_range issue when `value` is not a finite number > 0. */
function checkPositive(issues: Issue[], name: string, value: number): void {
  if (!(Number.isFinite(value) && value > 0)) {
    issues.push({ code: 'out_of_range', path: name, message: `${name} must be a finite number > 0`, seen: String(value), allowed: '> 0' });
  }
}

function checkInputs(point: ModelPoint, widthMedGeV: number): void {
  const issues: Issue[] = [];
  checkPositive(issues, 'm_chi', point.m_chi);
  checkPositive(issues, 'm_med', point.m_med);
  if (!(Number.isFinite(widthMedGeV) && widthMedGeV >= 0)) {
    issues.push({
      code: 'out_of_range', path: 'width_med', message: 'width_med (mediator total width, GeV) must be a finite number >= 0',
      seen: String(widthMedGeV), allowed: '>= 0',
    });
  }
  for (const name of ['g_chi', 'g_q', 'g_l'] as const) {
    if (!Number.isFinite(point[name])) {
      issues.push({ code: 'out_of_range', path: name, message: `${name} must be a finite number`, seen: String(point[name]) });
    }
  }
  if (issues.length > 0) throw new InvalidInputError(issues);
}

/**
 * Per-channel output of sigmaTotalGeV2, shared by all instances: written and summed within one
 * synchronous call that calls nothing else; grown by the constructor to the largest channel count.
 */
let channelScratch = new Float64Array(16);

/** Mediator kinds as small integers for the switch of the hot path. */
const SCALAR = 0;
const PSEUDOSCALAR = 1;
const VECTOR = 2;
const AXIAL = 3;
const MEDIATOR_CODE = { scalar: SCALAR, pseudoscalar: PSEUDOSCALAR, vector: VECTOR, axial: AXIAL } as const;

/**
 * Builds the annihilation of one model point with the mediator total width `widthMedGeV` (the
 * minimal width of physics/widths.ts or a user-given width). Throws InvalidInputError for
 * non-finite or non-positive masses and a negative or non-finite width.
 */
export function buildAnnihilation(point: ModelPoint, widthMedGeV: number, options: AnnihilationOptions = {}): Annihilation {
  checkInputs(point, widthMedGeV);
  return new SimplifiedModelAnnihilation(point, widthMedGeV, options);
}

/**
 * The Annihilation of one point: every s-independent constant precomputed into fields and
 * Float64Arrays. A class, not closures: one frozen object per point and no function objects (under
 * tsx each named closure costs a __name call at creation). The evaluation arithmetic is unchanged
 * from the closure form (bit-identical results).
 */
class SimplifiedModelAnnihilation implements Annihilation {
  readonly mChiGeV: number;
  readonly channels: readonly AnnihilationChannel[];
  readonly poles: readonly Pole[];
  readonly subthresholdPoles: readonly Pole[];
  readonly thresholdsGeV: readonly number[];
  private readonly kind: number;
  private readonly mx2: number;
  private readonly fourMx2: number;
  private readonly M2: number;
  private readonly MGamma2: number;
  private readonly invM2: number;
  private readonly invMx2: number;
  private readonly nF: number;
  private readonly nAll: number;
  // per-channel constants as plain arrays of doubles: a typed array above 64 bytes costs ~1 us to
  // allocate (off-heap backing store), element reads are as fast
  private readonly C: readonly number[];
  private readonly F4: readonly number[];
  private readonly F2: readonly number[];
  private readonly AX: readonly number[];
  private readonly hasPair: boolean;
  // mediator-pair constants (zero without the pair channel)
  private readonly pr: number;
  private readonly pNorm: number;
  private readonly n00: number;
  private readonly n01: number;
  private readonly n02: number;
  private readonly n03: number;
  private readonly pc1: number;
  private readonly c20: number;
  private readonly c21: number;
  private readonly c22: number;
  /** (1 - x^2) w^2 / 4 = r^2 - 4 r + sh, without sh */
  private readonly pRR: number;

  constructor(point: ModelPoint, widthMedGeV: number, options: AnnihilationOptions) {
    const fermions = options.fermions ?? DEFAULT_FERMIONS;
    const vevGeV = options.vevGeV ?? BASE.higgsVev.value;
    const mediator = point.mediator;
    const spin0 = mediator === 'scalar' || mediator === 'pseudoscalar';
    const mChi = point.m_chi;
    const M = point.m_med;
    const mx2 = mChi * mChi;
    const M2 = M * M;
    // Majorana vector current vanishes identically (indirect.md A6): no coupling to dark matter
    const gChi = point.dm === 'majorana' && mediator === 'vector' ? 0 : point.g_chi;

    const channels: AnnihilationChannel[] = [];
    const coeff: number[] = [];
    const fourMf2: number[] = [];
    const twoMf2: number[] = [];
    const axialMass: number[] = [];
    if (gChi !== 0) {
      for (const f of fermions) {
        const gBare = f.kind === 'quark' ? point.g_q : point.g_l;
        if (gBare === 0) continue;
        const gF = spin0 ? (gBare * f.massGeV) / vevGeV : gBare;
        const norm = spin0 ? 8 * Math.PI : 6 * Math.PI;
        channels.push(Object.freeze({ name: f.name, thresholdGeV: 2 * f.massGeV }));
        coeff.push((f.colours * gChi * gChi * gF * gF) / norm);
        fourMf2.push(4 * f.massGeV * f.massGeV);
        twoMf2.push(2 * f.massGeV * f.massGeV);
        axialMass.push(12 * mx2 * f.massGeV * f.massGeV);
      }
    }
    const nF = channels.length;
    const pair = gChi !== 0 && (options.mediatorPairs ?? true) && mChi > M
      ? pairConstants(mediator, gChi, mChi, M)
      : null;
    if (pair) channels.push(Object.freeze({ name: MEDIATOR_PAIR_CHANNEL, thresholdGeV: 2 * M }));

    this.mChiGeV = mChi;
    this.kind = MEDIATOR_CODE[mediator];
    this.mx2 = mx2;
    this.fourMx2 = 4 * mx2;
    this.M2 = M2;
    this.MGamma2 = M2 * widthMedGeV * widthMedGeV;
    this.invM2 = 1 / M2;
    this.invMx2 = 1 / mx2;
    this.nF = nF;
    this.nAll = channels.length;
    this.C = coeff;
    this.F4 = fourMf2;
    this.F2 = twoMf2;
    this.AX = axialMass;
    this.hasPair = pair !== null;
    this.pr = pair ? pair.r : 0;
    this.pNorm = pair ? pair.norm : 0;
    this.n00 = pair ? pair.n0[0] : 0;
    this.n01 = pair ? pair.n0[1] : 0;
    this.n02 = pair ? pair.n0[2] : 0;
    this.n03 = pair ? pair.n0[3] : 0;
    this.pc1 = pair ? pair.c1 : 0;
    this.c20 = pair ? pair.c2[0] : 0;
    this.c21 = pair ? pair.c2[1] : 0;
    this.c22 = pair ? pair.c2[2] : 0;
    this.pRR = this.pr * this.pr - 4 * this.pr;
    if (channelScratch.length < this.nAll) channelScratch = new Float64Array(this.nAll);

    this.channels = Object.freeze(channels);
    this.poles = Object.freeze(M > 2 * mChi ? [Object.freeze({ massGeV: M, widthGeV: widthMedGeV })] : []);
    // the same propagator's pole when the mediator lies at or below 2 m_chi (the thermal average
    // refines towards threshold when it is close)
    this.subthresholdPoles = Object.freeze(M > 2 * mChi ? [] : [Object.freeze({ massGeV: M, widthGeV: widthMedGeV })]);
    this.thresholdsGeV = Object.freeze([...new Set(channels.map((c) => c.thresholdGeV).filter((t) => t > 2 * mChi))].sort((a, b) => a - b));
    Object.freeze(this);
  }

  // below threshold every channel is zero; a NaN s propagates as NaN (never silently zero)
  sigmaVByChannelGeV2(sGeV2: number, out: Float64Array): number {
    if (sGeV2 < this.fourMx2) {
      for (let i = 0; i < this.nAll; i++) out[i] = 0;
      return 0;
    }
    let sum = this.fermionSum(sGeV2, out);
    if (this.hasPair) {
      const v = this.pairSigmaV(sGeV2);
      out[this.nF] = v;
      sum += v;
    }
    return sum;
  }

  sigmaTotalGeV2(sGeV2: number): number {
    // sigma = sigma v_Mol / (2 beta_chi); at s = 4 m^2 the phase-space factor (s - 4m^2) of every
    // consumer vanishes, so 0 is returned there instead of the s-wave 1/beta divergence
    if (sGeV2 <= this.fourMx2) return 0;
    const betaChi = Math.sqrt((sGeV2 - this.fourMx2) / sGeV2);
    return this.sigmaVByChannelGeV2(sGeV2, channelScratch) / (2 * betaChi);
  }

  /** f fbar channels into out[0 .. nF-1] (s >= 4 m_chi^2), returns their sum */
  private fermionSum(s: number, out: Float64Array): number {
    const nF = this.nF;
    const C = this.C;
    const F4 = this.F4;
    const M2 = this.M2;
    const MGamma2 = this.MGamma2;
    let sum = 0;
    switch (this.kind) {
      case SCALAR: {
        const k = (s - this.fourMx2) / ((s - M2) * (s - M2) + MGamma2);
        for (let i = 0; i < nF; i++) {
          const x = s - (F4[i] as number);
          let v = 0;
          if (x > 0) {
            const bf = Math.sqrt(x / s);
            v = (C[i] as number) * k * bf * bf * bf;
          }
          out[i] = v;
          sum += v;
        }
        return sum;
      }
      case PSEUDOSCALAR: {
        const k = s / ((s - M2) * (s - M2) + MGamma2);
        for (let i = 0; i < nF; i++) {
          const x = s - (F4[i] as number);
          const v = x > 0 ? (C[i] as number) * k * Math.sqrt(x / s) : 0;
          out[i] = v;
          sum += v;
        }
        return sum;
      }
      case VECTOR: {
        const F2 = this.F2;
        const k = (s + 2 * this.mx2) / (s * ((s - M2) * (s - M2) + MGamma2));
        for (let i = 0; i < nF; i++) {
          const x = s - (F4[i] as number);
          const v = x > 0 ? (C[i] as number) * k * Math.sqrt(x / s) * (s + (F2[i] as number)) : 0;
          out[i] = v;
          sum += v;
        }
        return sum;
      }
      default: {
        // AXIAL
        const AX = this.AX;
        const k = 1 / (s * ((s - M2) * (s - M2) + MGamma2));
        const t = s - this.fourMx2;
        const w = 1 - s * this.invM2;
        const w2 = w * w;
        for (let i = 0; i < nF; i++) {
          const x = s - (F4[i] as number);
          const v = x > 0 ? (C[i] as number) * k * Math.sqrt(x / s) * (t * x + (AX[i] as number) * w2) : 0;
          out[i] = v;
          sum += v;
        }
        return sum;
      }
    }
  }

  /** exact chi chibar -> med med, sigma v_Mol in GeV^-2 (s >= 4 m_chi^2 > 4 m_med^2) */
  private pairSigmaV(s: number): number {
    const pr = this.pr;
    const invMx2 = this.invMx2;
    const d = (s - this.fourMx2) * invMx2; // s/m^2 - 4 = beta_chi^2 s/m^2
    const sh = s * invMx2;
    const ish = 1 / sh;
    const e = sh - 4 * pr; // beta_med^2 s/m^2
    const w = sh - 2 * pr;
    const w2 = w * w;
    const iw2 = 1 / w2;
    const iq = 1 / (this.pRR + sh); // 4 / ((1 - x^2) w^2)
    const de = d * e;
    const x2 = de * iw2; // x = beta_chi beta_med s / (s - 2 M^2)
    const xr = 0.25 * de * iq; // x^2 / (1 - x^2) without the cancellation of 1 - x^2
    let h: number; // H(x) = (atanh(x)/x - 1)/x^2
    if (x2 < 0.01) {
      // Taylor series sum_n x^(2n)/(2n+3); the first omitted term is < 1e-16/19 relative
      h = 1 / 3 + x2 * (1 / 5 + x2 * (1 / 7 + x2 * (1 / 9 + x2 * (1 / 11 + x2 * (1 / 13 + x2 * (1 / 15 + x2 * (1 / 17)))))));
    } else {
      const x = Math.sqrt(x2);
      // atanh(x) = ln((1+x)^2 / (1-x^2)) / 2 with 1 - x^2 = 4 (r^2 - 4r + sh) / w^2 taken exactly
      const atanh = 0.5 * Math.log((1 + x) * (1 + x) * w2 * 0.25 * iq);
      h = (atanh - x) / (x * x2);
    }
    const n0 = this.n00 + d * (this.n01 + d * (this.n02 + d * this.n03));
    const c2 = this.c20 + d * (this.c21 + d * this.c22);
    return this.pNorm * Math.sqrt(e * ish) * (xr * this.pc1 + x2 * c2 * h + 2 * n0) * ish * iw2;
  }
}
