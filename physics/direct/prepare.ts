/**
 * Direct-detection stage: per-scan preparation and per-point observables.
 *
 * What: `prepareDirect(setup)` does everything that does not depend on the model point once per
 * scan (halo velocity integral, hadronic sets, target isotopes, efficiencies, window checks) and
 * owns, per detector, lazily built interpolation tables of the response kernel in m_chi
 * (physics/direct/kernel-table.ts), plus a bounded memo of exactly computed kernels for the one
 * case the tables do not cover (light mediators with a window starting at 0 keV).
 * `directObservables(point, prepared)` returns the per-nucleon SI/SD cross sections, the expected
 * events in each detector (spec order) and the flags.
 *
 * Method: N_det = K0 f_p^2 + K1 f_p f_n + K2 f_n^2 + K3 a_p^2 + K4 a_p a_n + K5 a_n^2 with the
 * nucleon amplitudes of physics/direct/nucleon.ts and the kernel K of physics/direct/rate.ts. The
 * kernel depends on m_chi only (contact limit) or on (m_chi, m_med) when the mediator is light
 * enough for the propagator to matter in that detector (rate.ts PROPAGATOR_CONTACT_TOL). It comes
 * from the interpolation tables (relative error below 1e-6 measured, 1e-4 tested; m_med enters
 * exactly through Chebyshev moments, no table dimension), so random or Latin-hypercube scans cost
 * a table look-up per point, not a quadrature. Table nodes are pure functions of their index, so
 * the result for a point does not depend on which points were evaluated before.
 *
 * Flags: those of nucleon.ts ('velocity_suppressed_dd', 'dd_suppressed_<ops>', 'leptophilic',
 * 'light_mediator'), plus 'sd_events_approximate' when SD scattering contributes to the events
 * (thin-shell form factor stand-in, rate.ts).
 * Validity and accuracy: see nucleon.ts, rate.ts, halo.ts, helm.ts.
 */
import { InvalidInputError } from '../issue.js';
import type { ModelPoint } from '../model.js';
import type { ScanPhysicsSetup } from '../setup.js';
import { scalarSet, spinSet } from './hadronic.js';
import { shmEta, type ShmEta } from './halo.js';
import { nucleonCouplings, type HadronicInputs } from './nucleon.js';
import { DetectorKernelTable } from './kernel-table.js';
import { KERNEL_SIZE, prepareDetector, responseKernel, type PreparedDetector } from './rate.js';

/** Exact kernels kept per detector (fallback path) before the oldest are evicted (~100 bytes each). */
export const KERNEL_MEMO_CAPACITY = 8192;

/** Bounded insertion-ordered memo of response kernels for one detector. */
class KernelMemo {
  private readonly map = new Map<string, Float64Array>();
  constructor(private readonly capacity: number) {}
  get(key: string): Float64Array | undefined {
    return this.map.get(key);
  }
  set(key: string, value: Float64Array): void {
    if (this.map.size >= this.capacity) {
      const oldest = this.map.keys().next().value;
      if (oldest !== undefined) this.map.delete(oldest);
    }
    this.map.set(key, value);
  }
  get size(): number {
    return this.map.size;
  }
}

interface DetectorSlot {
  readonly detector: PreparedDetector;
  readonly table: DetectorKernelTable;
  /** exact kernels for light mediators the table cannot represent */
  readonly memo: KernelMemo;
}

/** Per-scan direct-detection tables (opaque to callers; fields are read-only). */
export interface DirectPrepared {
  readonly detectors: readonly PreparedDetector[];
  readonly shm: ShmEta;
  readonly rhoGeVcm3: number;
  readonly hadronic: HadronicInputs;
  /** number of exactly computed kernels memoised per detector (fallback path; diagnostics, tests) */
  cachedKernels(): number[];
  /** number of interpolation-table nodes built so far per detector (diagnostics, tests) */
  tableNodes(): number[];
  /** response kernel of detector `index` (a fresh array) */
  kernel(index: number, mChiGeV: number, mMedGeV: number): Float64Array;
  /** response kernel of detector `index` written into out[offset .. offset + 6) */
  kernelInto(index: number, mChiGeV: number, mMedGeV: number, out: Float64Array, offset?: number): void;
}

export interface DirectResult {
  readonly sigmaSiPCm2: number;
  readonly sigmaSiNCm2: number;
  readonly sigmaSdPCm2: number;
  readonly sigmaSdNCm2: number;
  /** expected signal events per detector, same order as setup.detectors */
  readonly eventsByDetector: Float64Array;
  /** sorted flag names */
  readonly flags: readonly string[];
}

/** Prepares the direct-detection stage for a scan; throws InvalidInputError naming the spec field. */
export function prepareDirect(setup: ScanPhysicsSetup): DirectPrepared {
  const local = setup.halo.local;
  const rho = local.rhoLocalGeVcm3;
  if (!(Number.isFinite(rho) && rho > 0)) {
    throw new InvalidInputError([{
      code: 'out_of_range', path: 'halo.local.rhoLocalGeVcm3', message: 'local density must be a finite number > 0 (GeV/cm^3)',
      seen: String(rho), allowed: '> 0 GeV/cm^3',
    }]);
  }
  const shm = shmEta(local);
  const hadronic: HadronicInputs = Object.freeze({
    scalar: scalarSet(setup.hadronic.scalarSet),
    spin: spinSet(setup.hadronic.spinSet),
  });
  const slots: DetectorSlot[] = setup.detectors.map((d, i) => {
    const detector = prepareDetector(d, `detectors[${i}]`);
    return { detector, table: new DetectorKernelTable(detector, shm, rho), memo: new KernelMemo(KERNEL_MEMO_CAPACITY) };
  });
  const kernelInto = (index: number, mChiGeV: number, mMedGeV: number, out: Float64Array, offset = 0): void => {
    const slot = slots[index];
    if (!slot) throw new RangeError(`direct kernel: no detector with index ${index}`);
    const contact = slot.table.isContact(mMedGeV);
    if (contact || slot.table.chebyshevTerms > 0) {
      slot.table.kernel(mChiGeV, contact ? null : mMedGeV, out, offset);
      return;
    }
    const key = `${mChiGeV}|${mMedGeV}`;
    let k = slot.memo.get(key);
    if (!k) {
      k = new Float64Array(KERNEL_SIZE);
      responseKernel(slot.detector, shm, rho, mChiGeV, mMedGeV, k);
      slot.memo.set(key, k);
    }
    out.set(k, offset);
  };
  const kernel = (index: number, mChiGeV: number, mMedGeV: number): Float64Array => {
    const k = new Float64Array(KERNEL_SIZE);
    kernelInto(index, mChiGeV, mMedGeV, k);
    return k;
  };
  return Object.freeze({
    detectors: Object.freeze(slots.map((s) => s.detector)),
    shm,
    rhoGeVcm3: rho,
    hadronic,
    cachedKernels: () => slots.map((s) => s.memo.size),
    tableNodes: () => slots.map((s) => s.table.nodesBuilt()),
    kernel,
    kernelInto,
  });
}

/** Direct-detection observables of one model point. */
export function directObservables(point: ModelPoint, prepared: DirectPrepared): DirectResult {
  const c = nucleonCouplings(point, prepared.hadronic);
  const nDet = prepared.detectors.length;
  const events = new Float64Array(nDet);
  const fp = c.siAmpPGeV2;
  const fn = c.siAmpNGeV2;
  const ap = c.sdAmpPGeV2;
  const an = c.sdAmpNGeV2;
  const anySi = fp !== 0 || fn !== 0;
  const anySd = ap !== 0 || an !== 0;
  let sdInEvents = false;
  if (anySi || anySd) {
    const fpp = fp * fp;
    const fpn = fp * fn;
    const fnn = fn * fn;
    const app = ap * ap;
    const apn = ap * an;
    const ann = an * an;
    const k = new Float64Array(KERNEL_SIZE);
    for (let d = 0; d < nDet; d++) {
      prepared.kernelInto(d, point.m_chi, point.m_med, k);
      events[d] = k[0]! * fpp + k[1]! * fpn + k[2]! * fnn + k[3]! * app + k[4]! * apn + k[5]! * ann;
      if (anySd && prepared.detectors[d]!.hasSpin) sdInEvents = true;
    }
  }
  const flags = sdInEvents ? [...c.flags, 'sd_events_approximate'].sort() : c.flags;
  return Object.freeze({
    sigmaSiPCm2: c.sigmaSiPCm2,
    sigmaSiNCm2: c.sigmaSiNCm2,
    sigmaSdPCm2: c.sigmaSdPCm2,
    sigmaSdNCm2: c.sigmaSdNCm2,
    eventsByDetector: events,
    flags: Object.freeze(flags),
  });
}
