/**
 * The scheduler: starts or resumes a scan, dispatches pending chunks through a Transport, and is the
 * only writer of the ledger.
 *
 * Order of operations, so that bad input never writes anything:
 *   1. validate the spec;
 *   2. look at an existing ledger readonly and decide: resume the scan with the same name and the
 *      same spec hash, create a new one (fresh ledger, or `--new`), or refuse (same name, different
 *      spec, different constants edition);
 *   2b. prepare the physics where it will run: the embedded pool's threads start now (they report
 *      the knobs; together they calibrate a new scan's chunk size, each warming its own compiled code),
 *      so this thread never loads the physics; for workers elsewhere (Redis) it is prepared here.
 *      A setup the physics refuses, or other knobs than a resumed scan's, is refused here;
 *   3. only then open the ledger for writing.
 * Resume is the same command again: chunks with a 'done' row are skipped, everything else runs.
 * SIGINT/SIGTERM stop dispatching and finish the chunks in flight (a second signal abandons them);
 * SIGKILL loses at most the chunks in flight, because each chunk commits with its 'done' mark.
 */
import { execFileSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { CONSTANTS_EDITION } from '../physics/constants.js';
import { InvalidInputError, type Issue } from '../physics/issue.js';
import { ChunkEvaluator, calibrateEvaluator, columnLayout, loadPhysicsEngine, setupIssues, type Calibration, type PhysicsEngine, type PreparedPhysics } from './chunk.js';
import { EmbeddedPool } from './embedded-pool.js';
import { Ledger, LedgerReader, type ScanRecord, type ScanStatus } from './ledger.js';
import type { ChunkRange, Plan } from './plan.js';
import { createProgress, formatDuration, progressMode, type ProgressReporter } from './progress.js';
import { canonicalJson, loadSpecFile, makePlan, resolvedSpecJson, specHash, type ScanSpec } from './spec.js';
import type { Transport } from './transport.js';
import { numericObservableNames } from '../physics/observables.js';
import { compileConstraints, type CompiledConstraints } from './constraints/compile.js';
import { formatSummary, judgeScan, type JudgeSummary } from './constraints/judge.js';
import { contextFromSpec } from './constraints/scan-context.js';
import { ledgerScanKey } from './redis/keys.js';

/** The constraint set name under which a run judges its spec's own constraints. */
export const SPEC_CONSTRAINT_SET = 'spec';

export interface RunOptions {
  readonly specPath: string;
  /** ledger file; default `<spec name>.db` in the current directory */
  readonly dbPath?: string;
  /** worker threads of the embedded pool; default: cores */
  readonly workers?: number;
  /** points per chunk for a new scan; default: about CHUNK_TARGET_MS of compute from a calibration */
  readonly chunkSize?: number;
  readonly quiet?: boolean;
  /** start a new scan id even when a scan of the same name exists */
  readonly newScan?: boolean;
  /** module exporting prepare/evaluate (default physics/evaluate.ts); tests of the mechanics inject one */
  readonly physicsModule?: string;
  /** a transport other than the embedded pool (e.g. Redis); it receives `work` in open() */
  readonly transport?: Transport;
  /** evaluate on the workers of this Redis (redis:// or rediss://) instead of the embedded pool; probed first */
  readonly redisUrl?: string;
  /** install SIGINT/SIGTERM handlers (the CLI does) */
  readonly handleSignals?: boolean;
  /** where messages go; default process.stderr */
  readonly log?: (line: string) => void;
}

export interface RunSummary {
  readonly dbPath: string;
  readonly scanId: number;
  readonly scanName: string;
  readonly status: ScanStatus;
  readonly resumed: boolean;
  readonly pointsTotal: number;
  readonly pointsDone: number;
  readonly pointsThisRun: number;
  readonly chunksFailed: number;
  readonly erroredPoints: number;
  readonly elapsedMs: number;
  /** wall time from the workers being ready to the last chunk stored, ms (the steady-state part of elapsedMs) */
  readonly computeMs: number;
  /** the command that resumes this scan */
  readonly resumeCommand: string;
  /** verdicts of the spec's constraints (set SPEC_CONSTRAINT_SET), when the scan is done and has any */
  readonly judged: JudgeSummary | null;
  /** why the constraints were not judged, when they were not */
  readonly judgeNote: string | null;
}

/** Target compute per chunk: long enough that dispatch overhead is negligible, short enough that a crash loses little. */
export const CHUNK_TARGET_MS = 1500;
export const MIN_CHUNK = 8;
export const MAX_CHUNK = 20_000;
/** Compute timed to choose a new scan's chunk size: only its order of magnitude matters. */
export const CALIBRATION_MS = 200;
/**
 * Compute timed by `check` for its run-time estimate: long enough for the cost per point to come
 * near its steady value (compiled code and per-scan caches warm up over the first second or two).
 */
export const CHECK_CALIBRATION_MS = 1500;

/** Package version plus the git commit of the sources, when they are in a git work tree. */
export function codeVersion(root: URL = new URL('..', import.meta.url)): string {
  const pkg = JSON.parse(readFileSync(new URL('package.json', root), 'utf8')) as { version: string };
  try {
    // safe.directory: a checkout mounted into a container belongs to another user, and git would
    // refuse to read it; workers there must report the same version as the scheduler on the host
    const commit = execFileSync('git', ['-c', 'safe.directory=*', 'rev-parse', '--short=12', 'HEAD'], { cwd: root, stdio: ['ignore', 'pipe', 'ignore'], timeout: 3000 })
      .toString()
      .trim();
    return `${pkg.version}+${commit}`;
  } catch {
    return pkg.version;
  }
}

/** Prepares the physics of a spec in this process; a refusal becomes an input issue. */
export function preparePhysics(spec: ScanSpec, engine: PhysicsEngine): PreparedPhysics {
  try {
    return engine.prepare(spec.setup);
  } catch (err) {
    throw new InvalidInputError(setupIssues(err));
  }
}

export type { Calibration };

/** Calibrates in this process (see calibrateEvaluator); `check` uses it, `run` calibrates in its worker threads. */
export async function calibrate(spec: ScanSpec, engine: PhysicsEngine, budgetMs = CHECK_CALIBRATION_MS, blocks = 6, blockSize = 8): Promise<Calibration> {
  return calibrateEvaluator(await ChunkEvaluator.create(resolvedSpecJson(spec), engine), budgetMs, blocks, blockSize);
}

/**
 * Compiles the spec's constraints against the scan's columns (curve files relative to the spec file);
 * null when the spec has none. Throws InvalidInputError with every issue.
 */
export function compileSpecConstraints(spec: ScanSpec, specPath: string): CompiledConstraints | null {
  if (spec.constraints.length === 0) return null;
  const { compiled, issues } = compileConstraints(spec.constraints, contextFromSpec(spec, path.dirname(path.resolve(specPath))));
  if (!compiled) throw new InvalidInputError(issues);
  return compiled;
}

/**
 * Chunks per worker at least, when the scan is short: at the end of a scan a thread idles while
 * another finishes its last chunk (the pool hands over chunks that have not started, not a running
 * one), so the last chunks must be short next to the whole.
 */
export const MIN_CHUNKS_PER_WORKER = 8;

/** Chunk size giving about CHUNK_TARGET_MS per chunk, and at least MIN_CHUNKS_PER_WORKER chunks per worker when possible. */
export function chooseChunkSize(msPerPoint: number, totalPoints: number, workers: number): number {
  const byTime = Math.round(CHUNK_TARGET_MS / Math.max(msPerPoint, 1e-3));
  const bySpread = Math.ceil(totalPoints / (MIN_CHUNKS_PER_WORKER * workers));
  return Math.max(MIN_CHUNK, Math.min(MAX_CHUNK, byTime, bySpread));
}

function refuse(issue: Issue): never {
  throw new InvalidInputError([issue]);
}

interface Decision {
  readonly existing: ScanRecord | null;
  readonly warnings: string[];
}

/** Step 2: decides on a readonly view whether to resume, create, or refuse (the knobs are checked by checkKnobs). */
function decide(dbPath: string, spec: ScanSpec, hash: string, version: string, newScan: boolean): Decision {
  if (!existsSync(dbPath)) return { existing: null, warnings: [] };
  let reader: LedgerReader;
  try {
    reader = LedgerReader.openReadonly(dbPath);
  } catch (err) {
    refuse({ code: 'ledger_unreadable', path: '--db', message: `cannot open ${dbPath} as a ledger: ${(err as Error).message}`, seen: dbPath, allowed: 'a darksieve ledger or a new file name' });
  }
  try {
    let named: ScanRecord[];
    try {
      named = reader.scansNamed(spec.name);
    } catch (err) {
      refuse({ code: 'ledger_unreadable', path: '--db', message: `${dbPath} is not a darksieve ledger: ${(err as Error).message}`, seen: dbPath, allowed: 'a darksieve ledger or a new file name' });
    }
    if (newScan) return { existing: null, warnings: [] };
    const match = [...named].reverse().find((s) => s.specHash === hash);
    if (!match) {
      if (named.length === 0) return { existing: null, warnings: [] };
      const last = named[named.length - 1]!;
      refuse({
        code: 'spec_changed', path: 'name',
        message: `${dbPath} already holds scan '${spec.name}' (id ${last.id}) made from a different spec (hash ${last.specHash.slice(0, 12)}, this spec ${hash.slice(0, 12)}); results are never mixed. Use --new to start another scan under this name, or another --db or name`,
        seen: spec.name, allowed: 'the same spec as before, --new, another --db, or another name',
      });
    }
    if (match.constantsEdition !== CONSTANTS_EDITION)
      refuse({ code: 'constants_changed', path: '--db', message: `scan '${spec.name}' (id ${match.id}) was computed with constants ${match.constantsEdition}, this code has ${CONSTANTS_EDITION}; resuming would mix them. Use --new or another --db`, seen: CONSTANTS_EDITION, allowed: match.constantsEdition });
    const warnings = match.codeVersion !== version ? [`note: scan ${match.id} was started by code ${match.codeVersion}; resuming with ${version}`] : [];
    return { existing: match, warnings };
  } finally {
    reader.close();
  }
}

/** Pending chunks in id order: every chunk without a 'done' row, read page by page (bounded memory). */
export function* pendingChunks(reader: LedgerReader, scanId: number, plan: Plan, pageSize = 4096): Generator<ChunkRange> {
  let page: number[] = [];
  let at = 0;
  let exhausted = false;
  for (let c = 0; c < plan.chunkCount; c++) {
    for (;;) {
      while (at < page.length && page[at]! < c) at++;
      if (at < page.length || exhausted) break;
      page = reader.doneChunks(scanId, c, pageSize);
      at = 0;
      exhausted = page.length < pageSize;
    }
    if (at < page.length && page[at] === c) continue;
    yield plan.chunkRange(c);
  }
}

/** A resumed scan must have been computed with the same numerical knobs as this code's prepare() gives. */
function checkKnobs(existing: ScanRecord | null, knobsJson: string): void {
  if (existing && canonicalJson(JSON.parse(existing.knobsJson)) !== knobsJson)
    refuse({ code: 'knobs_changed', path: '--db', message: `scan '${existing.name}' (id ${existing.id}) was computed with other numerical knobs; resuming would mix them. Use --new or another --db`, seen: knobsJson, allowed: existing.knobsJson });
}

function shellQuote(arg: string): string {
  return /^[A-Za-z0-9_./=:-]+$/.test(arg) ? arg : `'${arg.replace(/'/g, `'\\''`)}'`;
}

/**
 * The command that resumes a scan: the same spec, ledger and worker count, and the same Redis when
 * one was used (resuming without it would finish on the embedded pool and leave the queue paused).
 * `redactedRedisUrl` is the Redis URL with any password shown as *** (passwords are never printed);
 * describeRun then says to give the password as before.
 */
export function resumeCommandFor(options: Pick<RunOptions, 'specPath' | 'workers'>, dbPath: string, redactedRedisUrl?: string): string {
  const args = ['darksieve', 'run', options.specPath, '--db', dbPath, ...(options.workers ? ['--workers', String(options.workers)] : []), ...(redactedRedisUrl ? ['--redis', redactedRedisUrl] : [])];
  return args.map(shellQuote).join(' ');
}

export async function runScan(options: RunOptions): Promise<RunSummary> {
  const started = performance.now();
  const log = options.log ?? ((line: string) => process.stderr.write(`${line}\n`));
  if (options.chunkSize !== undefined && (!Number.isInteger(options.chunkSize) || options.chunkSize < 1 || options.chunkSize > 1e7))
    refuse({ code: 'out_of_range', path: '--chunk', message: 'chunk size must be an integer from 1 to 10000000', seen: String(options.chunkSize), allowed: '1 to 10000000' });
  if (options.workers !== undefined && (!Number.isInteger(options.workers) || options.workers < 1 || options.workers > 1024))
    refuse({ code: 'out_of_range', path: '--workers', message: 'workers must be an integer from 1 to 1024', seen: String(options.workers), allowed: '1 to 1024' });

  // 1. validate (nothing written yet)
  const spec = loadSpecFile(options.specPath);
  const constraints = compileSpecConstraints(spec, options.specPath);
  const resolved = resolvedSpecJson(spec);
  const hash = specHash(resolved);
  const version = codeVersion();
  const dbPath = path.resolve(options.dbPath ?? `${spec.name}.db`);

  // 2. decide on a readonly view
  const decision = decide(dbPath, spec, hash, version, options.newScan ?? false);
  decision.warnings.forEach(log);
  const calibrating = !decision.existing && options.chunkSize === undefined;

  // the physics is prepared where it runs: by the pool's threads (which also calibrate, warming
  // their own compiled code rather than this thread's), or here for workers elsewhere
  let transport: Transport;
  let observableNames: readonly string[];
  let knobsJson: string;
  let calibration: Calibration | null = null;
  let opened = false;
  if (!options.transport && !options.redisUrl) {
    observableNames = numericObservableNames(spec.setup.detectors.map((d) => d.name), spec.setup.targets.map((t) => t.name));
    const pool = new EmbeddedPool({ workers: options.workers, physicsModule: options.physicsModule, calibrateMs: calibrating ? CALIBRATION_MS : 0 });
    // the embedded pool serves this one scan: the spec hash names it well enough
    await pool.open({ scanKey: `h${hash.slice(0, 12)}`, resolvedSpecJson: resolved, observableNames });
    opened = true;
    transport = pool;
    knobsJson = canonicalJson(JSON.parse(pool.started!.knobsJson));
    calibration = pool.started!.calibration;
    try {
      checkKnobs(decision.existing, knobsJson);
    } catch (err) {
      await pool.close();
      throw err;
    }
  } else {
    const engine = await loadPhysicsEngine(options.physicsModule);
    const prepared = preparePhysics(spec, engine);
    observableNames = prepared.observableNames;
    knobsJson = canonicalJson(prepared.knobs ?? {});
    checkKnobs(decision.existing, knobsJson);
    transport =
      options.transport ??
      (await (await import('./redis/transport.js')).createRedisTransport({ url: options.redisUrl!, dbPath, codeVersion: version, log }));
    if (calibrating) calibration = await calibrate(spec, engine, CALIBRATION_MS);
  }
  const workers = transport instanceof EmbeddedPool ? transport.workers : 1;
  let chunkSize: number;
  if (decision.existing) {
    chunkSize = decision.existing.chunkSize;
    if (options.chunkSize !== undefined && options.chunkSize !== chunkSize)
      log(`note: scan ${decision.existing.id} was planned with ${chunkSize} points per chunk; resuming keeps that (--chunk ${options.chunkSize} ignored)`);
  } else if (options.chunkSize !== undefined) {
    chunkSize = options.chunkSize;
  } else {
    // the late cost: the mean over a cold calibration overstates the steady cost several times over
    chunkSize = chooseChunkSize(calibration!.lateMsPerPoint, makePlan(spec, 1).total, workers);
  }
  const plan = makePlan(spec, chunkSize);

  // 3. write
  let ledger: Ledger;
  try {
    ledger = Ledger.open(dbPath);
  } catch (err) {
    await transport.close();
    throw err;
  }
  let progress: ProgressReporter | null = null;
  const removeSignals: (() => void)[] = [];
  try {
    const scan =
      decision.existing ??
      ledger.createScan({
        name: spec.name, specJson: resolved, specHash: hash, codeVersion: version, constantsEdition: CONSTANTS_EDITION,
        knobsJson, observables: observableNames, nPoints: plan.total, chunkSize, nChunks: plan.chunkCount,
      });
    ledger.setStatus(scan.id, 'running');
    const write = ledger.chunkWriter(scan.id, columnLayout(observableNames));
    const before = ledger.progress(scan.id);
    const resumeCommand = resumeCommandFor(options, dbPath, options.redisUrl ? (await import('./redis/connection.js')).redactRedisUrl(options.redisUrl) : undefined);
    log(
      `${decision.existing ? 'resuming' : 'starting'} scan '${spec.name}' (id ${scan.id}) in ${dbPath}: ${plan.total} points in ${plan.chunkCount} chunks of ${chunkSize}` +
        `${before.chunksDone > 0 ? `, ${before.chunksDone} chunks already done` : ''}; ${transport.description}`,
    );

    // signals: first = finish in-flight chunks, second = abandon them
    let stopping = false;
    let abandon: () => void = () => {};
    const abandoned = new Promise<'abandon'>((resolve) => {
      abandon = () => resolve('abandon');
    });
    if (options.handleSignals) {
      const onSignal = (sig: NodeJS.Signals): void => {
        if (!stopping) {
          stopping = true;
          progress?.note(`${sig}: finishing the chunks in flight, then stopping (again to abandon them)`);
        } else abandon();
      };
      for (const sig of ['SIGINT', 'SIGTERM'] as const) {
        process.on(sig, onSignal);
        removeSignals.push(() => process.off(sig, onSignal));
      }
    }

    try {
      if (!opened) await transport.open({ scanKey: ledgerScanKey(scan.id, hash), resolvedSpecJson: resolved, observableNames });
    } catch (err) {
      // the scan row stays (a rerun resumes it) but must not claim to be running
      ledger.setStatus(scan.id, 'interrupted');
      await transport.close();
      throw err;
    }
    const computeStarted = performance.now();
    progress = createProgress(progressMode(options.quiet ?? false));
    progress.start(plan.total, before.pointsDone);
    let pointsDone = before.pointsDone;
    let pointsThisRun = 0;
    let wasAbandoned = false;
    try {
      const pending = pendingChunks(ledger, scan.id, plan);
      let inFlight = 0;
      const fill = (): void => {
        while (!stopping && inFlight < transport.window) {
          const next = pending.next();
          if (next.done) break;
          transport.dispatch(next.value);
          inFlight++;
        }
      };
      fill();
      while (inFlight > 0) {
        const outcome = await Promise.race([transport.next(), abandoned]);
        if (outcome === 'abandon') {
          wasAbandoned = true;
          break;
        }
        inFlight--;
        if (outcome.kind === 'result') {
          write(outcome.result);
          pointsDone += outcome.result.n;
          pointsThisRun += outcome.result.n;
          progress.update(pointsDone);
        } else {
          ledger.markChunkFailed(scan.id, outcome.range.chunk, outcome.range.firstId, outcome.range.n, outcome.attempts, outcome.error);
          progress.note(`chunk ${outcome.range.chunk} failed after ${outcome.attempts} attempts: ${outcome.error}`);
        }
        fill();
      }
    } finally {
      progress.stop();
      await transport.close();
    }

    const computeMs = performance.now() - computeStarted;
    const after = ledger.progress(scan.id);
    const complete = after.chunksDone === plan.chunkCount;
    const status: ScanStatus = complete ? 'done' : stopping || wasAbandoned ? 'interrupted' : 'incomplete';
    ledger.setStatus(scan.id, status);
    let judged: JudgeSummary | null = null;
    let judgeNote: string | null = null;
    if (constraints && status === 'done') {
      try {
        constraints.warnings.forEach((w) => log(`warning: ${w}`));
        judged = judgeScan(ledger.connection, scan.id, SPEC_CONSTRAINT_SET, constraints);
      } catch (err) {
        if (!(err instanceof InvalidInputError)) throw err;
        judgeNote = `the spec's constraints were not judged: ${err.message}; use darksieve judge with a constraints file and another --set`;
      }
    } else if (constraints) {
      judgeNote = 'the spec\'s constraints are judged when the scan is complete';
    }
    const summary: RunSummary = {
      dbPath, scanId: scan.id, scanName: spec.name, status, resumed: decision.existing !== null,
      pointsTotal: plan.total, pointsDone: after.pointsDone, pointsThisRun, chunksFailed: after.chunksFailed,
      erroredPoints: ledger.erroredPoints(scan.id), elapsedMs: performance.now() - started, computeMs, resumeCommand, judged, judgeNote,
    };
    ledger.checkpoint();
    return summary;
  } catch (err) {
    await transport.close();
    throw err;
  } finally {
    removeSignals.forEach((f) => f());
    ledger.close();
  }
}

/** Human summary of a run (the run and demo commands print it). */
export function describeRun(s: RunSummary): string[] {
  const lines = [
    `scan '${s.scanName}' (id ${s.scanId}): ${s.status}; ${s.pointsDone}/${s.pointsTotal} points stored, ${s.pointsThisRun} this run in ${formatDuration(s.elapsedMs / 1000)}`,
  ];
  if (s.erroredPoints > 0) lines.push(`${s.erroredPoints} points could not be evaluated; their flags hold the error`);
  if (s.chunksFailed > 0) lines.push(`${s.chunksFailed} chunks failed; run the same command again to retry them`);
  if (s.status !== 'done') {
    lines.push(`resume with: ${s.resumeCommand}`);
    if (s.resumeCommand.includes(':***@')) lines.push('(the Redis password is shown as ***: give the URL with its password, or set REDIS_URL and leave out --redis)');
  }
  if (s.judged) lines.push(formatSummary(s.judged, `${s.scanId} (${s.scanName})`).trimEnd());
  if (s.judgeNote) lines.push(s.judgeNote);
  lines.push(`ledger: ${s.dbPath}`);
  return lines;
}
