/**
 * The chunk evaluator shared by every worker kind (embedded worker thread, BullMQ worker): a resolved
 * spec is turned into prepared physics once per worker, then each chunk (a contiguous id range) is
 * evaluated point by point into a columnar result.
 *
 * Result layout (also the ledger's `points` columns after scan_id and point_id): the model parameters
 * in physics/model.ts order, the numeric observables in Prepared.observableNames order, then `flags`.
 * Numbers travel as Float64Array (NaN means NULL), text as string arrays.
 *
 * A point whose parameters cannot be formed or whose physics throws is kept: its observables are NaN
 * and its flags read `error=<message>` (commas in the message become semicolons so flags stay a
 * comma-separated list). Nothing here touches the ledger; the scheduler alone writes it.
 */
import type { ModelPoint } from '../physics/model.js';
import type { Observables } from '../physics/observables.js';
import type { ScanPhysicsSetup } from '../physics/setup.js';
import { PARAMETERS } from '../physics/model.js';
import { InvalidInputError, type Issue } from '../physics/issue.js';
import { PARAMETER_COLUMNS, Plan, decodeResolvedSpec, pointFromParams, type ChunkRange, type CompiledEquals, type ParamValue, type ScanSpec } from './plan.js';

/** What prepare() returns, as far as the scheduler needs to know. */
export interface PreparedPhysics {
  /** numeric observable names in ledger order (numericObservableNames of the spec's detectors/targets) */
  readonly observableNames: readonly string[];
  /** numerical knobs used, stored with the scan for provenance */
  readonly knobs: unknown;
  /** the real physics' indirect stage: each target's J-factor over its region (check prints them) */
  readonly indirect?: { readonly targets: readonly { readonly name: string; readonly jGeV2cm5: number }[] };
}

/** The physics entry point (physics/evaluate.ts), injectable for tests of the mechanics. */
export interface PhysicsEngine {
  prepare(setup: ScanPhysicsSetup): PreparedPhysics;
  evaluate(point: ModelPoint, prepared: PreparedPhysics): Observables;
}

export type ColumnKind = 'real' | 'text';
export type Column = Float64Array | (string | null)[];

export interface ColumnLayout {
  readonly names: readonly string[];
  readonly kinds: readonly ColumnKind[];
}

/** One evaluated chunk, columnar, in ColumnLayout order. */
export interface ChunkResult {
  readonly chunk: number;
  readonly firstId: number;
  readonly n: number;
  readonly columns: readonly Column[];
  /** wall time spent evaluating this chunk in the worker, ms */
  readonly evalMs: number;
}

/**
 * Rows already evaluated for some ids of a scan (calibration blocks), packed so that a message carries
 * one array per column whatever the number of blocks (structured cloning costs per array: 600 blocks
 * of 24 columns took ~19 ms to clone, packed well under 1 ms). Block k holds the ids firstIds[k] ..
 * firstIds[k] + counts[k] - 1 in the rows starts[k] .. of `columns` (ChunkResult column order).
 */
export interface KnownRows {
  readonly firstIds: readonly number[];
  readonly counts: readonly number[];
  readonly starts: readonly number[];
  readonly columns: readonly Column[];
}

export const NO_KNOWN_ROWS: KnownRows = Object.freeze({ firstIds: [], counts: [], starts: [], columns: [] });

/** A block of known rows: ids firstId .. firstId + n - 1 at row `start` of `rows`. */
export interface KnownBlock {
  readonly firstId: number;
  readonly n: number;
  readonly rows: KnownRows | ChunkResult;
  readonly start: number;
}

/** The blocks of packed rows (or of one chunk result), for re-packing. */
export function knownBlocks(rows: KnownRows): KnownBlock[] {
  return rows.firstIds.map((firstId, k) => ({ firstId, n: rows.counts[k]!, rows, start: rows.starts[k]! }));
}

/** Copies the rows of `blocks`, in the order given, into one packed KnownRows. */
export function packKnownRows(blocks: readonly KnownBlock[]): KnownRows {
  if (blocks.length === 0) return NO_KNOWN_ROWS;
  const total = blocks.reduce((a, b) => a + b.n, 0);
  const columns: Column[] = blocks[0]!.rows.columns.map((c) => (c instanceof Float64Array ? new Float64Array(total) : new Array<string | null>(total)));
  const firstIds: number[] = [];
  const counts: number[] = [];
  const starts: number[] = [];
  let at = 0;
  for (const b of blocks) {
    firstIds.push(b.firstId);
    counts.push(b.n);
    starts.push(at);
    b.rows.columns.forEach((src, c) => {
      const dst = columns[c]!;
      if (dst instanceof Float64Array) dst.set((src as Float64Array).subarray(b.start, b.start + b.n), at);
      else for (let i = 0; i < b.n; i++) dst[at + i] = (src as (string | null)[])[b.start + i]!;
    });
    at += b.n;
  }
  return { firstIds, counts, starts, columns };
}

/** Ledger column layout for a scan with these observables. */
export function columnLayout(observableNames: readonly string[]): ColumnLayout {
  return {
    names: [...PARAMETER_COLUMNS, ...observableNames, 'flags'],
    kinds: [...PARAMETERS.map((p): ColumnKind => (p.kind === 'enum' ? 'text' : 'real')), ...observableNames.map((): ColumnKind => 'real'), 'text'],
  };
}

/** The default physics module; tests of the mechanics pass another module URL. */
export const DEFAULT_PHYSICS_MODULE = new URL('../physics/evaluate.ts', import.meta.url).href;

/** Loads a module exporting `prepare` and `evaluate` with the PhysicsEngine signatures. */
export async function loadPhysicsEngine(moduleUrl: string = DEFAULT_PHYSICS_MODULE): Promise<PhysicsEngine> {
  // the default by a literal specifier, so that a bundle of this module contains the physics
  const mod = (moduleUrl === DEFAULT_PHYSICS_MODULE ? await import('../physics/evaluate.js') : await import(moduleUrl)) as Partial<PhysicsEngine>;
  if (typeof mod.prepare !== 'function' || typeof mod.evaluate !== 'function')
    throw new Error(`physics module ${moduleUrl} must export prepare(setup) and evaluate(point, prepared)`);
  return { prepare: mod.prepare, evaluate: mod.evaluate };
}

/** Why prepare() refused a scan's setup, as input issues (the CLI exits 2 with them). */
export function setupIssues(err: unknown): readonly Issue[] {
  if (err instanceof InvalidInputError) return err.issues;
  const message = err instanceof Error ? err.message : String(err);
  return [{ code: 'physics_setup', path: 'detectors/targets/halo', message: `the physics cannot prepare this scan: ${message}`, allowed: 'detectors, targets and halo the physics supports' }];
}

export interface Calibration {
  readonly points: number;
  /** mean cost per point over every timed point, ms (includes the cold start) */
  readonly msPerPoint: number;
  /** points timed in the later half of the calibration time */
  readonly latePoints: number;
  /**
   * cost per point over those, ms: nearer the steady cost, which a cold start overstates several
   * times over (compiled code and per-scan caches fill during the first second or two: measured on
   * the bench scan, 4 ms per point in the first 100 ms, 0.27 after 1.5 s, 0.25 over a whole run)
   */
  readonly lateMsPerPoint: number;
  readonly errors: number;
}

/** Most calibration rounds; each places one block of ids in each of the scan's `blocks` equal parts. */
export const CALIBRATION_ROUNDS = 256;
/**
 * Round r puts its blocks at offset frac(1/2 + r g) within the parts, g the golden ratio's fraction
 * (an additive recurrence: every prefix of rounds, however short the budget, is spread evenly;
 * common practice, no source).
 */
const GOLDEN_FRACTION = 0.6180339887498949;

/**
 * Times real evaluations: after a short warm-up (first-call compilation), blocks of consecutive ids
 * spread over the scan, as chunks see them (per-scan caches fill as in a run), until the budget is
 * spent. About `budgetMs` of compute. Threads calibrating together take interleaved rounds
 * (`firstRound`, `roundStep`), so that between them they sample different ids. The evaluated blocks
 * are appended to `evaluated` when given (a run hands them back with the chunks that hold their ids,
 * so that their points are not evaluated twice); otherwise they are thrown away.
 */
export function calibrateEvaluator(
  evaluator: ChunkEvaluator, budgetMs: number, blocks = 6, blockSize = 8, firstRound = 0, roundStep = 1, evaluated?: ChunkResult[],
): Calibration {
  const total = evaluator.totalPoints;
  const n = Math.min(blockSize, total);
  const warmUp = evaluator.evaluate({ chunk: 0, firstId: 0, n: Math.min(3, total) });
  evaluated?.push(warmUp);
  const times: number[] = [];
  let errors = 0;
  let ms = 0;
  for (let round = firstRound; ms < budgetMs && round < CALIBRATION_ROUNDS; round += roundStep) {
    const offset = (0.5 + round * GOLDEN_FRACTION) % 1;
    for (let b = 0; b < blocks && ms < budgetMs; b++) {
      const first = Math.min(total - n, Math.floor(((b + offset) * total) / blocks));
      const r = evaluator.evaluate({ chunk: 0, firstId: first, n });
      evaluated?.push(r);
      ms += r.evalMs;
      times.push(r.evalMs);
      const flags = r.columns[r.columns.length - 1] as (string | null)[];
      errors += flags.filter((f) => f?.startsWith('error=')).length;
    }
  }
  // the blocks that started in the later half of the time spent (at least the last one)
  let lateMs = 0;
  let lateBlocks = 0;
  for (let k = times.length - 1, elapsed = ms; k >= 0; k--) {
    elapsed -= times[k]!;
    if (lateBlocks > 0 && elapsed < ms / 2) break;
    lateMs += times[k]!;
    lateBlocks++;
  }
  const points = times.length * n;
  return { points, msPerPoint: ms / points, latePoints: lateBlocks * n, lateMsPerPoint: lateMs / (lateBlocks * n), errors };
}

/** Calibrations of several threads as one: all their points, the costs per point over all of them. */
export function mergeCalibrations(parts: readonly Calibration[]): Calibration {
  const sum = (f: (c: Calibration) => number): number => parts.reduce((a, c) => a + f(c), 0);
  const points = sum((c) => c.points);
  const latePoints = sum((c) => c.latePoints);
  return {
    points,
    msPerPoint: points > 0 ? sum((c) => c.msPerPoint * c.points) / points : NaN,
    latePoints,
    lateMsPerPoint: latePoints > 0 ? sum((c) => c.lateMsPerPoint * c.latePoints) / latePoints : NaN,
    errors: sum((c) => c.errors),
  };
}

/**
 * Estimated wall time of evaluating `total` points on `workers` threads, seconds: each thread pays
 * the cold start once (what the calibration spent beyond its points' late cost) and the points go
 * at the late cost per point, the workers perfectly in parallel (on the bench scan, 1 worker: 7 s
 * estimated, 6.4 s measured; 2 workers on a busy 2-core machine: 3 s estimated, 4.5-4.9 s measured).
 */
export function estimateRunSeconds(c: Calibration, total: number, workers: number): number {
  const coldMs = Math.max(0, c.points * (c.msPerPoint - c.lateMsPerPoint));
  return (coldMs + (total * c.lateMsPerPoint) / workers) / 1000;
}

/** Text stored in flags for a point that could not be evaluated. */
export function errorFlag(message: string): string {
  const clean = message.replace(/[,\n\r]+/g, ';').replace(/\s+/g, ' ').trim().slice(0, 300);
  return `error=${clean}`;
}

export class ChunkEvaluator {
  readonly spec: ScanSpec;
  readonly prepared: PreparedPhysics;
  readonly layout: ColumnLayout;
  private readonly plan: Plan;
  private readonly engine: PhysicsEngine;

  private constructor(spec: ScanSpec, equals: readonly CompiledEquals[], engine: PhysicsEngine) {
    this.spec = spec;
    this.plan = new Plan(spec, 1, equals);
    this.engine = engine;
    this.prepared = engine.prepare(spec.setup);
    this.layout = columnLayout(this.prepared.observableNames);
  }

  /**
   * Prepares the physics of a scan once (throws when prepare() rejects the setup). The expression
   * sandbox (mathjs, slow to load) is loaded only when the spec has equals axes.
   */
  static async create(resolvedSpecJson: string, engine: PhysicsEngine): Promise<ChunkEvaluator> {
    const spec = decodeResolvedSpec(resolvedSpecJson);
    const equals = spec.axes.some((a) => a.kind === 'equals') ? (await import('./spec.js')).planEquals(spec) : [];
    return new ChunkEvaluator(spec, equals, engine);
  }

  get totalPoints(): number {
    return this.plan.total;
  }

  /**
   * Evaluates a chunk's points in id order. Points held by `known` (earlier results of this scan's
   * physics, e.g. calibration blocks, in ascending firstId order) are copied from them instead of being
   * evaluated again: a point's row is a pure function of (spec, id), so the copy is the same bits.
   */
  evaluate(range: ChunkRange, known: KnownRows = NO_KNOWN_ROWS): ChunkResult {
    const started = performance.now();
    const { n, firstId } = range;
    const nParams = PARAMETER_COLUMNS.length;
    const observableNames = this.prepared.observableNames;
    const columns: Column[] = this.layout.kinds.map((k) => (k === 'real' ? new Float64Array(n) : new Array<string | null>(n).fill(null)));
    const params: ParamValue[] = new Array(nParams);
    const flags = columns[columns.length - 1] as (string | null)[];
    let k = 0;
    for (let i = 0; i < n; i++) {
      const id = firstId + i;
      while (k < known.firstIds.length && known.firstIds[k]! + known.counts[k]! <= id) k++;
      if (k < known.firstIds.length && known.firstIds[k]! <= id) {
        const row = known.starts[k]! + id - known.firstIds[k]!;
        for (let c = 0; c < columns.length; c++) (columns[c] as unknown[])[i] = (known.columns[c] as readonly unknown[])[row];
        continue;
      }
      const paramError = this.plan.paramsInto(id, params);
      for (let c = 0; c < nParams; c++) {
        const v = params[c];
        const col = columns[c]!;
        if (col instanceof Float64Array) col[i] = typeof v === 'number' ? v : NaN;
        else col[i] = typeof v === 'string' ? v : null;
      }
      let obs: Observables | null = null;
      let error = paramError;
      if (error === null) {
        try {
          obs = this.engine.evaluate(pointFromParams(params), this.prepared);
        } catch (err) {
          error = err instanceof Error ? err.message : String(err);
        }
      }
      for (let o = 0; o < observableNames.length; o++) {
        const v = obs?.values[observableNames[o]!];
        (columns[nParams + o] as Float64Array)[i] = typeof v === 'number' ? v : NaN;
      }
      flags[i] = error !== null ? errorFlag(error) : obs!.flags;
    }
    return { chunk: range.chunk, firstId, n, columns, evalMs: performance.now() - started };
  }
}
