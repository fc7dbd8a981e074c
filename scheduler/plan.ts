/**
 * The plan: which model point each point id stands for, and how ids are cut into chunks.
 *
 * A point's parameters are a pure function of (spec, id), so any worker can evaluate any id with no
 * state from other ids, and the plan is never materialised (a 1e8-point scan plans in constant
 * memory):
 *  - grid: the id is a mixed-radix number whose digits index the axes; the last axis varies fastest;
 *  - random: each coordinate is u = H(seed, id, axis) in [0, 1), a counter-based hash (MurmurHash3
 *    32-bit block mixing, Appleby 2011, public domain) turned into a 53-bit double;
 *  - latin_hypercube: for each axis a keyed pseudo-random permutation pi_axis of 0..count-1 (a 4-round
 *    Feistel network on the next even power of two with cycle walking, Black & Rogaway 2002, CT-RSA,
 *    "Ciphers with arbitrary finite domains") picks the stratum, jittered inside it:
 *    u = (pi_axis(id) + H(seed, id, axis)) / count. Every stratum of every axis holds exactly one point.
 * Range axes map u (or the grid index) linearly or logarithmically onto [from, to]; values axes pick
 * values[floor(u n)]; equals axes are computed last, in dependency order, and range-checked.
 *
 * Chunks are contiguous id ranges [chunk * chunkSize, ...). Integer arithmetic only on ids
 * (< 1e12 < 2^53), so every platform gives the same points.
 */
import { PARAMETERS, checkNumber, type ModelPoint, type ParameterSpec } from '../physics/model.js';
import type { ScanPhysicsSetup, Target } from '../physics/setup.js';
import type { Constraint } from './constraints/schema.js';

// ------------------------------------------------------------------ the resolved spec (types)
// Validation lives in spec.ts (zod, mathjs); these types and the plan stay free of those imports so
// a worker thread that only evaluates chunks starts quickly.

export type ParamValue = number | string | null;

export interface RangeAxis {
  readonly kind: 'range';
  readonly param: string;
  readonly from: number;
  readonly to: number;
  /** number of grid values including both ends; null for random / Latin-hypercube sampling */
  readonly steps: number | null;
  readonly spacing: 'lin' | 'log';
}
export interface ValuesAxis {
  readonly kind: 'values';
  readonly param: string;
  readonly values: readonly (number | string)[];
}
export interface EqualsAxis {
  readonly kind: 'equals';
  readonly param: string;
  readonly expression: string;
}
export type Axis = RangeAxis | ValuesAxis | EqualsAxis;

export type Sampling =
  | { readonly kind: 'grid' }
  | { readonly kind: 'random' | 'latin_hypercube'; readonly count: number; readonly seed: number };

export interface ScanSpec {
  readonly name: string;
  /** every parameter that is not on an axis, with its value (defaults filled in) */
  readonly model: Readonly<Record<string, ParamValue>>;
  /** in spec order */
  readonly axes: readonly Axis[];
  readonly sampling: Sampling;
  readonly setup: ScanPhysicsSetup;
  /** shape-checked by spec.ts; names, files and expressions are checked against the scan by the judge */
  readonly constraints: readonly Constraint[];
}

/** An equals axis compiled by spec.ts (mathjs sandbox of scheduler/expressions.ts). */
export interface CompiledEquals {
  readonly param: string;
  readonly expression: string;
  readonly evaluate: (scope: Readonly<Record<string, number>>) => number | boolean;
}

/** Number of distinct values an axis contributes to a grid (equals axes contribute none). */
export function axisSize(axis: Axis): number {
  if (axis.kind === 'range') return axis.steps ?? 1;
  if (axis.kind === 'values') return axis.values.length;
  return 1;
}

/**
 * Rebuilds a ScanSpec from the resolved JSON that spec.ts wrote after validating it (the scheduler
 * sends nothing else to workers), without loading the validators.
 */
export function decodeResolvedSpec(json: string): ScanSpec {
  const doc = JSON.parse(json) as {
    name: string; model: Record<string, ParamValue>; axes: Record<string, Record<string, unknown>>; sampling: Sampling;
    halo: ScanPhysicsSetup['halo']; hadronic: ScanPhysicsSetup['hadronic']; detectors: ScanPhysicsSetup['detectors'];
    targets: (Omit<Target, 'energyGeV'> & { energyGeV: [number, number | null] })[]; constraints: Constraint[];
    indirect?: { sommerfeld?: ScanPhysicsSetup['sommerfeld']; yieldTables?: ScanPhysicsSetup['yieldTables'] };
  };
  const axes = Object.entries(doc.axes).map(([param, a]): Axis => {
    if ('equals' in a) return { kind: 'equals', param, expression: a.equals as string };
    if ('values' in a) return { kind: 'values', param, values: a.values as (number | string)[] };
    return { kind: 'range', param, from: a.from as number, to: a.to as number, steps: (a.steps as number | undefined) ?? null, spacing: a.spacing as 'lin' | 'log' };
  });
  return {
    name: doc.name, model: doc.model, axes, sampling: doc.sampling, constraints: doc.constraints,
    setup: {
      halo: doc.halo, hadronic: doc.hadronic, detectors: doc.detectors,
      targets: doc.targets.map((t) => ({ ...t, energyGeV: [t.energyGeV[0], t.energyGeV[1] ?? Infinity] as const })),
      ...(doc.indirect?.sommerfeld ? { sommerfeld: doc.indirect.sommerfeld } : {}),
      ...(doc.indirect?.yieldTables ? { yieldTables: doc.indirect.yieldTables } : {}),
    },
  };
}

// ------------------------------------------------------------------ plan

export interface ChunkRange {
  readonly chunk: number;
  readonly firstId: number;
  readonly n: number;
}

/** A point whose parameters cannot be formed (an equals axis out of range); stored as a flagged row. */
export class PointParameterError extends Error {
  override readonly name = 'PointParameterError';
}

/** Ledger parameter columns, in this order (physics/model.ts PARAMETERS order). */
export const PARAMETER_COLUMNS: readonly string[] = PARAMETERS.map((p) => p.name);
const PARAM_BY_NAME = new Map<string, ParameterSpec>(PARAMETERS.map((p) => [p.name, p]));

// ------------------------------------------------------------------ counter-based hashing

const TWO32 = 4294967296;

function rotl(x: number, r: number): number {
  return (x << r) | (x >>> (32 - r));
}

/** MurmurHash3 x86_32 over a list of 32-bit words (Appleby 2011). */
function murmurWords(w0: number, w1: number, w2: number, w3: number, w4: number, w5: number): number {
  let h = 0x2545f491;
  const words = [w0, w1, w2, w3, w4, w5];
  for (const w of words) {
    let k = Math.imul(w | 0, 0xcc9e2d51);
    k = rotl(k, 15);
    k = Math.imul(k, 0x1b873593);
    h ^= k;
    h = rotl(h, 13);
    h = (Math.imul(h, 5) + 0xe6546b64) | 0;
  }
  h ^= 24;
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return h >>> 0;
}

const lo32 = (x: number): number => x >>> 0;
const hi32 = (x: number): number => Math.floor(x / TWO32) >>> 0;

/** Uniform double in [0, 1) from (seed, id, axis): 53 random bits, no state. */
export function uniform01(seed: number, id: number, axis: number): number {
  const a = murmurWords(lo32(seed), hi32(seed), lo32(id), hi32(id), axis, 0x55) >>> 5; // 27 bits
  const b = murmurWords(lo32(seed), hi32(seed), lo32(id), hi32(id), axis, 0xaa) >>> 6; // 26 bits
  return (a * 67108864 + b) / 9007199254740992;
}

/** A keyed bijection of [0, n) (Feistel network with cycle walking). */
export function permuteIndex(index: number, n: number, seed: number, axis: number): number {
  let bits = 2;
  while (2 ** bits < n) bits += 2;
  const half = bits / 2;
  const size = 2 ** half;
  let x = index;
  do {
    let left = Math.floor(x / size);
    let right = x % size;
    for (let round = 0; round < 4; round++) {
      const f = murmurWords(lo32(seed), hi32(seed), axis, round, right, 0x4c48) % size;
      const next = (left + f) % size;
      left = right;
      right = next;
    }
    x = left * size + right;
  } while (x >= n);
  return x;
}

function rangeValue(axis: Extract<Axis, { kind: 'range' }>, t: number): number {
  if (axis.spacing === 'lin') return axis.from + (axis.to - axis.from) * t;
  return axis.from * Math.pow(axis.to / axis.from, t);
}

function gridValue(axis: Axis, index: number): number | string {
  if (axis.kind === 'values') return axis.values[index]!;
  if (axis.kind !== 'range') throw new Error('equals axes have no grid values');
  const steps = axis.steps ?? 1;
  if (index === 0 || steps === 1) return axis.from;
  if (index === steps - 1) return axis.to;
  return rangeValue(axis, index / (steps - 1));
}

function sampledValue(axis: Axis, u: number): number | string {
  if (axis.kind === 'values') return axis.values[Math.min(axis.values.length - 1, Math.floor(u * axis.values.length))]!;
  if (axis.kind !== 'range') throw new Error('equals axes are not sampled');
  return rangeValue(axis, u);
}

export class Plan {
  readonly spec: ScanSpec;
  readonly total: number;
  readonly chunkSize: number;
  readonly chunkCount: number;
  private readonly sampled: readonly Axis[];
  private readonly sizes: readonly number[];
  private readonly equals: readonly CompiledEquals[];
  /** the model's fixed values in PARAMETER_COLUMNS order (null where not set) */
  private readonly fixedColumns: readonly ParamValue[];
  /** PARAMETER_COLUMNS index of each sampled axis's parameter */
  private readonly sampledColumns: readonly number[];
  /** the columns equals expressions see: the model's parameters and the sampled ones */
  private readonly scopeColumns: readonly number[];

  /** `equals`: the spec's equals axes compiled in dependency order (spec.ts planEquals). */
  constructor(spec: ScanSpec, chunkSize: number, equals: readonly CompiledEquals[]) {
    if (!Number.isInteger(chunkSize) || chunkSize < 1) throw new RangeError(`chunk size must be a positive integer, got ${chunkSize}`);
    this.spec = spec;
    this.sampled = spec.axes.filter((a) => a.kind !== 'equals');
    this.sizes = this.sampled.map(axisSize);
    this.total = spec.sampling.kind === 'grid' ? this.sizes.reduce((n, s) => n * s, 1) : spec.sampling.count;
    this.chunkSize = chunkSize;
    this.chunkCount = Math.ceil(this.total / chunkSize);
    const missing = spec.axes.filter((a) => a.kind === 'equals' && !equals.some((e) => e.param === a.param));
    if (missing.length > 0) throw new Error(`equals axes not compiled: ${missing.map((a) => a.param).join(', ')}`);
    this.equals = equals;
    const model = spec.model as Record<string, ParamValue | undefined>;
    this.fixedColumns = PARAMETER_COLUMNS.map((c) => model[c] ?? null);
    this.sampledColumns = this.sampled.map((a) => PARAMETER_COLUMNS.indexOf(a.param));
    this.scopeColumns = PARAMETER_COLUMNS.flatMap((c, i) => (c in model || this.sampledColumns.includes(i) ? [i] : []));
  }

  chunkRange(chunk: number): ChunkRange {
    const firstId = chunk * this.chunkSize;
    return { chunk, firstId, n: Math.min(this.chunkSize, this.total - firstId) };
  }

  /** Every chunk in id order from `fromChunk` on, generated lazily. */
  *chunks(fromChunk = 0): Generator<ChunkRange> {
    for (let c = fromChunk; c < this.chunkCount; c++) yield this.chunkRange(c);
  }

  /**
   * Parameter values of point `id` in PARAMETER_COLUMNS order, written into `out`. Returns null, or
   * the reason the point has no valid parameters (an equals axis outside its parameter's range; that
   * parameter is then NaN and the others are still filled in).
   */
  paramsInto(id: number, out: ParamValue[]): string | null {
    // values go straight into their columns: a few array writes per point instead of an object per
    // point (5-7 us per point before, on the bench scan)
    for (let c = 0; c < PARAMETER_COLUMNS.length; c++) out[c] = this.fixedColumns[c] ?? null;
    const sampling = this.spec.sampling;
    if (sampling.kind === 'grid') {
      let rest = id;
      for (let i = this.sampled.length - 1; i >= 0; i--) {
        const size = this.sizes[i]!;
        const digit = rest % size;
        rest = (rest - digit) / size;
        out[this.sampledColumns[i]!] = gridValue(this.sampled[i]!, digit);
      }
    } else {
      for (let i = 0; i < this.sampled.length; i++) {
        let u = uniform01(sampling.seed, id, i);
        if (sampling.kind === 'latin_hypercube') u = (permuteIndex(id, sampling.count, sampling.seed, i) + u) / sampling.count;
        out[this.sampledColumns[i]!] = sampledValue(this.sampled[i]!, u);
      }
    }
    if (this.equals.length === 0) return null;
    // equals axes see the model's and the sampled parameters (text and unset ones as NaN)
    const scope: Record<string, number> = {};
    for (const c of this.scopeColumns) {
      const v = out[c];
      scope[PARAMETER_COLUMNS[c]!] = typeof v === 'number' ? v : NaN;
    }
    let error: string | null = null;
    for (const { param, evaluate, expression } of this.equals) {
      const v = evaluate(scope);
      let value = typeof v === 'number' ? v : NaN;
      const issue = checkNumber(PARAM_BY_NAME.get(param) as Parameters<typeof checkNumber>[0], value, `axes.${param}.equals`);
      if (issue) {
        error ??= `${param} = ${String(v)} from '${expression}' is outside ${issue.allowed ?? 'its range'}`;
        value = NaN;
      }
      out[PARAMETER_COLUMNS.indexOf(param)] = value;
      scope[param] = value;
    }
    return error;
  }

  /** The model point of id `id`; throws PointParameterError when paramsInto reports a problem. */
  point(id: number): ModelPoint {
    const out: ParamValue[] = new Array(PARAMETER_COLUMNS.length);
    const error = this.paramsInto(id, out);
    if (error !== null) throw new PointParameterError(error);
    return pointFromParams(out);
  }
}

/** A frozen ModelPoint from values in PARAMETER_COLUMNS order. */
export function pointFromParams(values: readonly ParamValue[]): ModelPoint {
  const o: Record<string, ParamValue> = {};
  for (let i = 0; i < PARAMETER_COLUMNS.length; i++) o[PARAMETER_COLUMNS[i]!] = values[i] ?? null;
  return Object.freeze(o) as unknown as ModelPoint;
}

/** Lowest and highest value each sampled axis can take, for the `check` summary. */
export function axisSummary(axis: Axis): string {
  if (axis.kind === 'range')
    return `${axis.param}: ${axis.from} .. ${axis.to} (${axis.spacing}${axis.steps !== null ? `, ${axis.steps} steps` : ''})`;
  if (axis.kind === 'values') return `${axis.param}: ${axis.values.length} values (${axis.values.slice(0, 6).join(', ')}${axis.values.length > 6 ? ', ...' : ''})`;
  return `${axis.param} = ${axis.expression}`;
}
