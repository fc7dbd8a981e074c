/**
 * `darksieve check SPEC [--workers N] [--chunk N] [--json]`: validates a spec (every problem at once,
 * exit 2), then prints the plan (points, chunks, parameter ranges, each target's J-factor,
 * observables, constraints) and an estimated run time from timing a few real points. Writes nothing.
 */
import { availableParallelism } from 'node:os';
import type { Command } from 'commander';
import { InvalidInputError } from '../../physics/issue.js';
import { loadPhysicsEngine } from '../chunk.js';
import { axisSummary } from '../plan.js';
import { formatDuration } from '../progress.js';
import { calibrate, chooseChunkSize, compileSpecConstraints, preparePhysics } from '../run.js';
import { estimateRunSeconds } from '../chunk.js';
import { loadSpecFile, makePlan, resolvedSpecJson, specHash } from '../spec.js';

interface CheckOptions {
  readonly workers?: string;
  readonly chunk?: string;
  readonly json?: boolean;
}

function positiveInt(text: string | undefined, flag: string, fallback: number): number {
  if (text === undefined) return fallback;
  const n = Number(text);
  if (!Number.isInteger(n) || n < 1 || n > 1e7)
    throw new InvalidInputError([{ code: 'out_of_range', path: flag, message: `${flag} must be a positive integer`, seen: text, allowed: '1 to 10000000' }]);
  return n;
}

export function registerCheck(program: Command): void {
  program
    .command('check')
    .description('Validate a scan spec and print its plan with an estimated run time (nothing is written)')
    .argument('<spec>', 'scan spec (JSON)')
    .option('--workers <n>', 'workers to estimate for (default: number of cores)')
    .option('--chunk <n>', 'points per chunk (default: about 1.5 s of compute)')
    .option('--json', 'print the plan as one JSON object')
    .action(async (specPath: string, opts: CheckOptions) => {
      const workers = positiveInt(opts.workers, '--workers', availableParallelism());
      const chunkOpt = opts.chunk === undefined ? undefined : positiveInt(opts.chunk, '--chunk', 1);
      const spec = loadSpecFile(specPath);
      const engine = await loadPhysicsEngine();
      const prepared = preparePhysics(spec, engine);
      const constraints = compileSpecConstraints(spec, specPath);
      const total = makePlan(spec, 1).total;
      const cal = await calibrate(spec, engine);
      const chunkSize = chunkOpt ?? chooseChunkSize(cal.lateMsPerPoint, total, workers);
      const plan = makePlan(spec, chunkSize);
      const estimateS = estimateRunSeconds(cal, plan.total, workers);
      const fixed = Object.entries(spec.model).map(([k, v]) => `${k}=${v ?? 'computed'}`);
      const report = {
        name: spec.name,
        spec_hash: specHash(resolvedSpecJson(spec)),
        sampling: spec.sampling,
        points: plan.total,
        chunk_size: chunkSize,
        chunks: plan.chunkCount,
        axes: spec.axes.map(axisSummary),
        fixed,
        detectors: spec.setup.detectors.map((d) => d.name),
        targets: spec.setup.targets.map((t) => t.name),
        /** J-factor of each target's region (cone, ring, offset cone, masked plane), GeV^2 cm^-5 */
        j_factors_gev2_cm5: Object.fromEntries((prepared.indirect?.targets ?? []).map((t) => [t.name, t.jGeV2cm5])),
        observables: prepared.observableNames,
        constraints: constraints?.columns ?? [],
        calibration: { points: cal.points, ms_per_point: cal.msPerPoint, late_points: cal.latePoints, late_ms_per_point: cal.lateMsPerPoint, errors: cal.errors },
        workers,
        estimated_s: estimateS,
      };
      if (opts.json) {
        process.stdout.write(`${JSON.stringify(report, null, 2)}\n`);
        return;
      }
      const s = spec.sampling;
      const lines = [
        `spec '${spec.name}' is valid (hash ${report.spec_hash.slice(0, 12)})`,
        `sampling: ${s.kind === 'grid' ? 'grid' : `${s.kind}, ${s.count} points, seed ${s.seed}`}`,
        `points: ${plan.total} in ${plan.chunkCount} chunks of ${chunkSize}`,
        'axes:',
        ...report.axes.map((a) => `  ${a}`),
        `fixed: ${fixed.join(', ')}`,
        `detectors: ${report.detectors.join(', ') || '(none)'}`,
        `targets: ${report.targets.map((name) => (name in report.j_factors_gev2_cm5 ? `${name} (J = ${report.j_factors_gev2_cm5[name]!.toExponential(3)} GeV^2 cm^-5)` : name)).join(', ') || '(none)'}`,
        `observables: ${prepared.observableNames.length} numeric columns + flags`,
        `constraints: ${report.constraints.join(', ') || '(none)'}`,
        ...(constraints?.warnings ?? []).map((w) => `warning: ${w}`),
        `calibration: ${cal.points} points evaluated, ${cal.msPerPoint.toFixed(2)} ms/point on average, ${cal.lateMsPerPoint.toFixed(2)} ms/point in its later half (cold start: compiled code and caches warming up)${cal.errors > 0 ? `, ${cal.errors} flagged with errors` : ''}`,
        `estimated run time: ${formatDuration(estimateS)} on ${workers} worker${workers === 1 ? '' : 's'} (one cold start per worker, then the later cost per point, workers in parallel: more where they share busy cores)`,
      ];
      process.stdout.write(`${lines.join('\n')}\n`);
    });
}
