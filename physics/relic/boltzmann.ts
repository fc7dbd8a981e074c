/**
 * Freeze-out: the Boltzmann equation for the yield Y = n/s of one self-annihilating population, solved
 * in full from near chemical equilibrium to today.
 *
 * Equation (Gondolo & Gelmini 1991, Nucl. Phys. B360, 145; shared notes relic.md eqs. 1.3-1.4):
 *   dY/dx = -L(x) (Y^2 - Y_eq^2),   L(x) = lambda(x) <sigma v>(x) / x^2,
 *   lambda(x) = sqrt(pi/45) M_Pl m g_*^{1/2}(m/x),
 *   Y_eq(x) = (45 g / (4 pi^4)) x^2 K_2(x) / h_eff(m/x)   (Maxwell-Boltzmann, eq. 1.7;
 *   K_2 from the 15-term large-argument form of physics/numerics/bessel.ts for x >= 6, ~1e-14),
 * with M_Pl the non-reduced Planck mass (physics/constants.ts PLANCK_MASS_GEV, the only convention)
 * and h_eff, g_*^{1/2} from physics/dof.ts (its interpolated fast path, < 1e-7 from the fit; the
 * d ln h/d ln T term inside g_*^{1/2} is kept: dropping it
 * changes Omega h^2 by up to +17% at m = 10 GeV, relic.md §1.1).
 *
 * Method (relic.md §3.3):
 *  1. Quasi-static start: x_s where the quasi-static deviation Delta/Y_eq, from
 *     Delta (2 Y_eq + Delta) = -Y_eq' / L, equals `quasiStaticDeviation` (x_s ~ x_f - 3); Y(x_s) =
 *     Y_eq + Delta. Found by a few secant steps in x on ln q(x), q = -Y_eq'/(L Y_eq^2).
 *  2. TR-BDF2 (Bank et al. 1985, IEEE Trans. CAD 4, 436; gamma = 2 - sqrt 2), L-stable and second
 *     order. The right side is quadratic in Y, so each implicit stage is a closed-form root
 *     Y = 2C / (1 + sqrt(1 + 4 a C)) with a > 0 (no cancellation, no Newton iteration). A stage with
 *     C <= 0 halves the step. Fixed step `stepX` in x through freeze-out.
 *  3. x_f is where Y = 1.5 Y_eq (relic.md §0), interpolated linearly in ln(Y/Y_eq) inside the step.
 *  4. Analytic tail: once Y_eq < equilibriumCut * Y, the Y_eq^2 term is negligible (relative
 *     effect ~ equilibriumCut^2) and dY/dx = -L Y^2 integrates exactly:
 *     1/Y_0 = 1/Y(x_a) + int_{x_a}^inf L(x) dx. The integral is done in u = ln x, where the dof
 *     features are regular, by composite 5-point Gauss-Legendre on panels at most `tailPanelWidth`
 *     wide, split at the g_eff fit junction (T = 0.12 GeV), up to the end of the <sigma v> table
 *     (measured against adaptive Gauss-Kronrod at 1e-12 over the bench points and s-wave masses
 *     0.3 GeV-30 TeV, x_a = 20-45: 2.6e-6 at width 0.5, 60 evaluations where the adaptive rule
 *     took 100-200); beyond it <sigma v> is constant and the rest is
 *     sqrt(pi/45) M_Pl <sigma v> int_0^T g_*^{1/2} dT' (physics/dof.ts gStarHalfIntegral).
 * Validity: radiation domination with SM entropy conservation, kinetic equilibrium, MB statistics
 * (x_f >~ 3; below that quantum statistics and the relativistic start matter, flagged by the caller).
 * Accuracy: Y_0 is 2.3-4.1e-4 below scipy Radau (rtol 1e-11, same fit) for s-wave 10-1000 GeV and
 * p-wave at the default step, Y(x) within 8e-4 through freeze-out (tests/relic/boltzmann.test.ts);
 * ~7e-4 at most in Omega h^2 against tight knobs over the mixed bench (tests/bench/relic-bench.ts).
 */
import { PLANCK_MASS_GEV } from '../constants.js';
import { DOF_FIT_JUNCTION_GEV, dofInto, fastDofInto, fastGStarHalf, gStarHalfIntegral } from '../dof.js';
import { besselK1Scaled, besselK2ScaledLarge } from '../numerics/bessel.js';
import { gaussLegendre } from '../numerics/quadrature.js';

/** Numerical knobs of the freeze-out solver (declared with docs in physics/relic/relic.ts). */
export interface FreezeOutKnobs {
  /** TR-BDF2 step in x */
  readonly stepX: number;
  /** Delta/Y_eq at the quasi-static start */
  readonly quasiStaticDeviation: number;
  /** switch to the analytic tail when Y_eq < equilibriumCut * Y */
  readonly equilibriumCut: number;
  /** widest panel (in ln x) of the 5-point Gauss-Legendre rule of the tail integral */
  readonly tailPanelWidth: number;
}

export interface FreezeOutInput {
  readonly mChiGeV: number;
  /** internal degrees of freedom of the tracked population (2 for a Majorana or one Dirac component) */
  readonly gChi: number;
  /** <sigma v>(x) in GeV^-2 */
  readonly sigmaV: (x: number) => number;
  /** <sigma v> is constant for x >= this value (end of its table) */
  readonly sigmaVConstantFromX: number;
  /** lowest x at which the integration may start */
  readonly xStartMin: number;
  /** starting guess for x_f */
  readonly xFGuess: number;
  /** optional x values (ascending) at which to report the trajectory Y(x) in `samples` */
  readonly sampleX?: readonly number[];
}

export interface FreezeOutResult {
  /** asymptotic yield Y_0 = n/s today of the tracked population */
  readonly yieldToday: number;
  /** x where Y = 1.5 Y_eq */
  readonly xF: number;
  /** x where the integration started */
  readonly xStart: number;
  /** x where the analytic tail took over */
  readonly xTail: number;
  /** TR-BDF2 steps taken */
  readonly steps: number;
  /**
   * Y at input.sampleX (empty without): the quasi-static Y_eq (1 + Delta) before x_s, ln Y
   * interpolated linearly inside a TR-BDF2 step, the analytic tail 1/Y(x) = 1/Y(x_a) + int L dx after
   */
  readonly samples: Float64Array;
}

/** sqrt(pi/45) M_Pl, GeV (relic.md §1.1: 3.22586e18 for M_Pl = 1.220890e19) */
const LAMBDA_PREFACTOR = Math.sqrt(Math.PI / 45) * PLANCK_MASS_GEV;
/** 45 / (4 pi^4), relic.md eq. (1.7) */
const YEQ_PREFACTOR = 45 / (4 * Math.PI ** 4);
/** x_f criterion Y = XF_RATIO * Y_eq (relic.md §0) */
const XF_RATIO = 1.5;
/** TR-BDF2 constant */
const GAMMA = 2 - Math.SQRT2;

const dofScratch = new Float64Array(3);

/** lambda(x) = sqrt(pi/45) M_Pl m g_*^{1/2}(m/x) */
export function lambdaOf(mChiGeV: number, x: number): number {
  return LAMBDA_PREFACTOR * mChiGeV * fastGStarHalf(mChiGeV / x);
}

/** Equilibrium yield Y_eq(x) = (45 g/(4 pi^4)) x^2 K_2(x) / h_eff(m/x), Maxwell-Boltzmann. */
export function equilibriumYield(mChiGeV: number, gChi: number, x: number): number {
  fastDofInto(mChiGeV / x, dofScratch);
  return (YEQ_PREFACTOR * gChi * x * x * besselK2ScaledLarge(x) * Math.exp(-x)) / dofScratch[0]!;
}

/** Gauss-Legendre nodes per tail panel */
const TAIL_NODES = 5;

/** Solves the Boltzmann equation from the quasi-static start to today. */
export function solveFreezeOut(input: FreezeOutInput, knobs: FreezeOutKnobs): FreezeOutResult {
  const m = input.mChiGeV;
  const g = input.gChi;
  const sigmaV = input.sigmaV;
  // 1. quasi-static start
  const r = knobs.quasiStaticDeviation;
  const lnTarget = Math.log(r * (2 + r));
  let xs = Math.max(input.xStartMin, input.xFGuess - 3);
  let f0 = lnQAt(m, g, sigmaV, xs) - lnTarget;
  let xPrev = xs + 1;
  let fPrev = lnQAt(m, g, sigmaV, xPrev) - lnTarget;
  for (let iter = 0; iter < 30 && Math.abs(f0) > 1e-4; iter++) {
    const slope = (f0 - fPrev) / (xs - xPrev);
    const step = Math.max(-5, Math.min(5, -f0 / (slope > 0.2 ? slope : 1)));
    xPrev = xs;
    fPrev = f0;
    xs = Math.max(input.xStartMin, xs + step);
    f0 = lnQAt(m, g, sigmaV, xs) - lnTarget;
    if (xs === input.xStartMin && f0 > 0) break;
  }
  const sampleX = input.sampleX ?? [];
  const samples = new Float64Array(sampleX.length);
  let nextSample = 0;
  while (nextSample < sampleX.length && sampleX[nextSample]! <= xs) {
    const qx = Math.exp(lnQAt(m, g, sigmaV, sampleX[nextSample]!));
    samples[nextSample] = point[1]! * (1 + qx / (1 + Math.sqrt(1 + qx)));
    nextSample++;
  }
  const q = Math.exp(lnQAt(m, g, sigmaV, xs));
  let curX = xs;
  let curL = point[0]!;
  let curYEq = point[1]!;
  const delta = q / (1 + Math.sqrt(1 + q)); // positive root of delta (2 + delta) = q
  let y = curYEq * (1 + delta);

  // 2-3. TR-BDF2 through freeze-out
  let xF = NaN;
  let ratioPrev = y / curYEq;
  if (ratioPrev >= XF_RATIO) xF = xs;
  let steps = 0;
  let h = knobs.stepX;
  const maxSteps = 100000;
  const w = (1 - GAMMA) / (2 - GAMMA);
  while (steps < maxSteps) {
    if (!Number.isNaN(xF) && curYEq < knobs.equilibriumCut * y) break;
    const x0 = curX;
    evaluateAt(m, g, sigmaV, x0 + GAMMA * h);
    const midL = point[0]!;
    const midYEq = point[1]!;
    evaluateAt(m, g, sigmaV, x0 + h);
    const pointL = point[0]!;
    const pointYEq = point[1]!;
    const f0v = -curL * (y * y - curYEq * curYEq);
    let a = 0.5 * GAMMA * h * midL;
    let c = y + 0.5 * GAMMA * h * f0v + a * midYEq * midYEq;
    if (!(c > 0)) {
      h *= 0.5;
      continue;
    }
    const yMid = (2 * c) / (1 + Math.sqrt(1 + 4 * a * c));
    a = w * h * pointL;
    c = (yMid - (1 - GAMMA) * (1 - GAMMA) * y) / (GAMMA * (2 - GAMMA)) + a * pointYEq * pointYEq;
    if (!(c > 0)) {
      h *= 0.5;
      continue;
    }
    const yNew = (2 * c) / (1 + Math.sqrt(1 + 4 * a * c));
    steps++;
    const ratio = yNew / pointYEq;
    if (Number.isNaN(xF) && ratio >= XF_RATIO) {
      const lr0 = Math.log(ratioPrev);
      const lr1 = Math.log(ratio);
      xF = x0 + (h * (Math.log(XF_RATIO) - lr0)) / (lr1 - lr0);
    }
    while (nextSample < sampleX.length && sampleX[nextSample]! <= x0 + h) {
      const f = (sampleX[nextSample]! - x0) / h;
      samples[nextSample] = y * Math.pow(yNew / y, f);
      nextSample++;
    }
    ratioPrev = ratio;
    y = yNew;
    curX = x0 + h;
    curL = pointL;
    curYEq = pointYEq;
    h = Math.min(knobs.stepX, 2 * h);
  }

  // 4. analytic tail: int_{x_a}^{x_c} L dx in u = ln x (the dof features are regular in ln T) up
  // to the end x_c of the <sigma v> table, then with <sigma v> constant the closed form
  // int_{x_c}^inf lambda <sigma v> dx / x^2 = sqrt(pi/45) M_Pl <sigma v> int_0^{m/x_c} g_*^{1/2} dT
  const xTail = curX;
  const xConst = Math.max(input.sigmaVConstantFromX, xTail);
  const uA = Math.log(xTail);
  const uJ = Math.log(m / DOF_FIT_JUNCTION_GEV);
  const svConst = sigmaV(xConst);
  const width = knobs.tailPanelWidth;
  for (; nextSample < sampleX.length; nextSample++) samples[nextSample] = 1 / (1 / y + tailTo(m, sigmaV, uA, uJ, xConst, svConst, width, sampleX[nextSample]!));
  const yieldToday = 1 / (1 / y + tailTo(m, sigmaV, uA, uJ, xConst, svConst, width, xConst) + LAMBDA_PREFACTOR * svConst * gStarHalfIntegral(m / xConst));
  return Object.freeze({ yieldToday, xF, xStart: xs, xTail, steps, samples });
}

/** L = lambda <sigma v> / x^2 and Y_eq at the last x given to evaluateAt (module scratch: no allocation per step) */
const point = new Float64Array(2);

function evaluateAt(m: number, g: number, sigmaV: (x: number) => number, x: number): void {
  fastDofInto(m / x, dofScratch);
  point[0] = (LAMBDA_PREFACTOR * m * dofScratch[1]! * sigmaV(x)) / (x * x);
  point[1] = (YEQ_PREFACTOR * g * x * x * besselK2ScaledLarge(x) * Math.exp(-x)) / dofScratch[0]!;
}

/** ln q(x), q = -Y_eq'/(L Y_eq^2), of the quasi-static start; leaves L and Y_eq at x in `point` */
function lnQAt(m: number, g: number, sigmaV: (x: number) => number, x: number): number {
  dofInto(m / x, dofScratch);
  const minusDlnYeq = besselK1Scaled(x) / besselK2ScaledLarge(x) - dofScratch[2]! / x;
  evaluateAt(m, g, sigmaV, x);
  return Math.log(minusDlnYeq / (point[0]! * point[1]!));
}

/**
 * int_{x_a}^{x} L dx' for x >= x_a (u = ln x): the Gauss-Legendre panels up to the end x_c of the
 * <sigma v> table, then with <sigma v> constant the closed form
 * int_{x_c}^x lambda <sigma v> dx / x^2 = sqrt(pi/45) M_Pl <sigma v> int_{m/x}^{m/x_c} g_*^{1/2} dT
 */
function tailTo(m: number, sigmaV: (x: number) => number, uA: number, uJ: number, xConst: number, svConst: number, width: number, x: number): number {
  const uB = Math.log(Math.min(x, xConst));
  let sum = 0;
  if (uJ > uA && uJ < uB) {
    sum = tailIntegral(m, sigmaV, uA, uJ, width) + tailIntegral(m, sigmaV, uJ, uB, width);
  } else if (uB > uA) {
    sum = tailIntegral(m, sigmaV, uA, uB, width);
  }
  if (x > xConst) sum += LAMBDA_PREFACTOR * svConst * (gStarHalfIntegral(m / xConst) - gStarHalfIntegral(m / x));
  return sum;
}

/** int_{uA}^{uB} lambda(x) <sigma v>(x) / x du, x = e^u, composite Gauss-Legendre (TAIL_NODES per panel). */
function tailIntegral(m: number, sigmaV: (x: number) => number, uA: number, uB: number, panelWidth: number): number {
  const rule = gaussLegendre(TAIL_NODES);
  const panels = Math.max(1, Math.ceil((uB - uA) / panelWidth));
  const hu = (uB - uA) / panels;
  let sum = 0;
  for (let j = 0; j < panels; j++) {
    const mid = uA + hu * (j + 0.5);
    for (let i = 0; i < TAIL_NODES; i++) {
      const x = Math.exp(mid + 0.5 * hu * rule.nodes[i]!);
      sum += rule.weights[i]! * fastGStarHalf(m / x) * sigmaV(x) / x;
    }
  }
  return 0.5 * hu * LAMBDA_PREFACTOR * m * sum;
}
