/**
 * The scan spec: JSON in, a validated and fully resolved `ScanSpec` out.
 *
 * Validation collects every problem at once (zod for the shape, then the model-parameter ranges of
 * physics/model.ts, the column-safe names of physics/observables.ts and the cross-field rules), each
 * as an Issue with its path (`axes.m_chi.from`, `detectors[1].name`), what was seen and what is
 * allowed. Nothing here does I/O except `loadSpecFile`, which only reads the file.
 *
 * The resolved form (`resolvedSpecJson`) has every default filled in and a canonical key order; it is
 * what the ledger stores, what the spec hash covers and what workers receive, so a scan can be
 * re-created from the ledger alone (`specFromResolvedJson` is its exact inverse).
 *
 * Spec shape (every option, its unit and default):
 *  - `name`: scan name, 1-80 characters of letters, digits, `_`, `-`, `.`.
 *  - `model`: fixed parameter values (names, units and ranges: physics/model.ts PARAMETERS); a
 *    parameter neither in `model` nor in `axes` takes its documented default.
 *  - `axes`: object keyed by parameter, in scan order (grid: the last axis varies fastest). Each is
 *    `{from, to, steps, spacing: "lin"|"log"}` (steps only with grid sampling; spacing default "lin"),
 *    `{values: [...]}` (numbers, or choices for `dm` / `mediator`), or `{equals: "expression"}` of
 *    other parameters (mathjs syntax in the sandbox of scheduler/expressions.ts).
 *  - `sampling`: `{kind: "grid"}` (default), `{kind: "random", count, seed}` or
 *    `{kind: "latin_hypercube", count, seed}`; seed is an integer in [0, 2^53).
 *  - `halo`: partial override of physics/setup.ts DEFAULT_HALO (same field names and units).
 *  - `hadronic`: partial override of DEFAULT_HADRONIC.
 *  - `indirect`: `{sommerfeld: "off"|"hulthen", yieldTables: {<final state>: rows or CSV file}}`:
 *    the Sommerfeld factor of physics/indirect/sommerfeld.ts on the s-wave part of sigma v today
 *    (default "off"), and photon-yield tables that replace the built-in fits (files are read by
 *    loadSpecFile, relative to the spec, and carried inline in the resolved spec).
 *  - `detectors`, `targets`: lists of physics/setup.ts Detector / Target; a target's energy band
 *    upper edge may be `null` for "no upper edge" (Infinity).
 *  - `constraints`: list validated by the constraints schema (scheduler/constraints).
 */
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { z } from 'zod';
import type { Issue } from '../physics/issue.js';
import { InvalidInputError } from '../physics/issue.js';
import { PARAMETERS, allowedText, checkNumber, type ParameterSpec } from '../physics/model.js';
import { COLUMN_SAFE_NAME } from '../physics/observables.js';
import {
  DEFAULT_HADRONIC,
  DEFAULT_HALO,
  type Detector,
  type Halo,
  type Hadronic,
  type Profile,
  type ScanPhysicsSetup,
  type Target,
} from '../physics/setup.js';
import { compileExpression } from './expressions.js';
import { axisSize, Plan, type Axis, type CompiledEquals, type EqualsAxis, type ParamValue, type Sampling, type ScanSpec } from './plan.js';
import { constraintsSchema } from './constraints/schema.js';
import { MAX_CURVE_ROWS, parseCurve } from './constraints/curve-file.js';
import { checkYieldTables } from '../physics/indirect/yields.js';

export type { Axis, EqualsAxis, ParamValue, RangeAxis, Sampling, ScanSpec, ValuesAxis } from './plan.js';

/** Most points one scan may have: ids stay exact integers in JS and SQLite with room to spare. */
export const MAX_POINTS = 1e12;

// ------------------------------------------------------------------ zod shapes

const positive = z.number().positive().finite();
const nonNegative = z.number().nonnegative().finite();

const profileSchema = z
  .strictObject({
    kind: z.enum(['nfw', 'einasto', 'burkert']),
    rsKpc: positive,
    alpha: positive.optional(),
    rhoSGeVcm3: positive.optional(),
    rTruncKpc: positive.optional(),
  })
  .superRefine((p, ctx) => {
    if (p.kind === 'einasto' && p.alpha === undefined)
      ctx.addIssue({ code: 'custom', path: ['alpha'], message: 'an einasto profile needs its shape parameter alpha', input: undefined, params: { allowed: 'a number > 0' } });
    if (p.kind !== 'einasto' && p.alpha !== undefined)
      ctx.addIssue({ code: 'custom', path: ['alpha'], message: `alpha is only used by einasto profiles, not ${p.kind}`, input: p.alpha, params: { allowed: 'absent' } });
  });

const haloSchema = z.strictObject({
  local: z
    .strictObject({
      rhoLocalGeVcm3: positive.optional(),
      v0KmS: positive.optional(),
      vEscKmS: positive.optional(),
      vEarthKmS: nonNegative.optional(),
    })
    .optional(),
  galactic: z
    .strictObject({
      profile: profileSchema.optional(),
      r0Kpc: positive.optional(),
      rhoLocalGeVcm3: positive.optional(),
      sigmaVKmS: positive.optional(),
    })
    .optional(),
});

const columnName = z.string().regex(COLUMN_SAFE_NAME, {
  message: 'must be a column-safe name: a lower-case letter, then up to 39 lower-case letters, digits or _',
});

/** Element symbol ('Xe') or compound formula ('CaWO4', 'C3F8'). */
const FORMULA = /^(?:[A-Z][a-z]?\d*)+$/;

const efficiencySchema = z.union([
  z.number().min(0).max(1),
  z
    .array(z.tuple([nonNegative, z.number().min(0).max(1)]))
    .min(2)
    .refine((pts) => pts.every((p, i) => i === 0 || p[0] > pts[i - 1]![0]), { message: 'recoil energies must increase strictly' }),
]);

const detectorSchema = z
  .strictObject({
    name: columnName,
    target: z.string().regex(FORMULA, { message: "must be an element symbol or formula such as 'Xe', 'Ar', 'CaWO4'" }),
    windowKeV: z.tuple([nonNegative, positive]),
    efficiency: efficiencySchema,
    exposureKgDay: positive,
  })
  .superRefine((d, ctx) => {
    if (!(d.windowKeV[1] > d.windowKeV[0]))
      ctx.addIssue({ code: 'custom', path: ['windowKeV'], message: 'the upper edge must exceed the lower edge', input: d.windowKeV, params: { allowed: '[lo, hi] with 0 <= lo < hi keVnr' } });
  });

const targetSchema = z
  .strictObject({
    name: columnName,
    kind: z.enum(['galactic_centre', 'satellite']),
    coneDeg: z.number().positive().max(180),
    innerDeg: z.number().min(0).max(180).optional(),
    offsetDeg: z.number().min(0).max(180).optional(),
    maskLatDeg: z.number().min(0).lt(90).optional(),
    distanceKpc: positive.optional(),
    profile: profileSchema.optional(),
    velocityDispersionKmS: positive.lt(3000).optional(),
    energyGeV: z.tuple([positive, positive.nullable()]),
  })
  .superRefine((t, ctx) => {
    if (t.maskLatDeg !== undefined && (t.kind !== 'galactic_centre' || t.offsetDeg !== undefined))
      ctx.addIssue({ code: 'custom', path: ['maskLatDeg'], message: 'the Galactic plane is masked only in a cone or ring around the Galactic Centre (not a satellite, not with offsetDeg)', input: t.maskLatDeg, params: { allowed: 'absent, or a galactic_centre target without offsetDeg' } });
    if (t.offsetDeg !== undefined && t.innerDeg !== undefined)
      ctx.addIssue({ code: 'custom', path: ['offsetDeg'], message: 'an offset cone cannot also be a ring: give offsetDeg or innerDeg, not both', input: t.offsetDeg, params: { allowed: 'one of offsetDeg, innerDeg' } });
    if (t.innerDeg !== undefined && !(t.innerDeg < t.coneDeg))
      ctx.addIssue({ code: 'custom', path: ['innerDeg'], message: 'the inner half-angle must be below coneDeg', input: t.innerDeg, params: { allowed: `0 <= innerDeg < ${t.coneDeg}` } });
    if (t.kind === 'galactic_centre' && t.velocityDispersionKmS !== undefined)
      ctx.addIssue({ code: 'custom', path: ['velocityDispersionKmS'], message: 'velocityDispersionKmS is only used by satellite targets (the galactic centre uses halo.galactic.sigmaVKmS)', input: t.velocityDispersionKmS, params: { allowed: 'absent' } });
    if (t.energyGeV[1] !== null && !(t.energyGeV[1] > t.energyGeV[0]))
      ctx.addIssue({ code: 'custom', path: ['energyGeV'], message: 'the upper edge must exceed the lower edge', input: t.energyGeV, params: { allowed: '[lo, hi] GeV with 0 < lo < hi, or [lo, null]' } });
    for (const key of ['distanceKpc', 'profile'] as const) {
      if (t.kind === 'satellite' && t[key] === undefined)
        ctx.addIssue({ code: 'custom', path: [key], message: `a satellite target needs ${key}`, input: undefined, params: { allowed: key === 'profile' ? 'a profile object' : 'a number > 0 (kpc)' } });
      if (t.kind === 'galactic_centre' && t[key] !== undefined)
        ctx.addIssue({ code: 'custom', path: [key], message: `${key} is only used by satellite targets (the galactic centre uses halo.galactic)`, input: t[key], params: { allowed: 'absent' } });
    }
  });

const samplingSchema = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('grid') }),
  z.strictObject({
    kind: z.enum(['random', 'latin_hypercube']),
    count: z.int().min(1).max(MAX_POINTS),
    seed: z.int().min(0).max(Number.MAX_SAFE_INTEGER),
  }),
]);

const rangeAxisSchema = z.strictObject({
  from: z.number().finite(),
  to: z.number().finite(),
  steps: z.int().min(1).max(MAX_POINTS).optional(),
  spacing: z.enum(['lin', 'log']).default('lin'),
});
const valuesAxisSchema = z.strictObject({
  values: z.array(z.union([z.number().finite(), z.string()])).min(1).max(1_000_000),
});
const equalsAxisSchema = z.strictObject({ equals: z.string().min(1).max(2000) });

const topSchema = z.strictObject({
  name: z.string().regex(/^[A-Za-z0-9_.-]{1,80}$/, { message: 'must be 1-80 letters, digits, _, - or .' }),
  model: z.record(z.string(), z.union([z.number(), z.string(), z.null()])).default({}),
  axes: z.record(z.string(), z.unknown()).default({}),
  sampling: samplingSchema.default({ kind: 'grid' }),
  halo: haloSchema.default({}),
  hadronic: z.strictObject({ scalarSet: z.enum(['A', 'B']).optional(), spinSet: z.string().min(1).optional() }).default({}),
  indirect: z
    .strictObject({
      sommerfeld: z.enum(['off', 'hulthen']).default('off'),
      // per final state: rows [x, dN/dx] inline, or (in a spec file) a CSV file read by loadSpecFile
      yieldTables: z.record(z.string(), z.union([z.string().min(1), z.array(z.tuple([z.number(), z.number()])).max(MAX_CURVE_ROWS)])).optional(),
    })
    .default({ sommerfeld: 'off' }),
  detectors: z.array(detectorSchema).max(50).default([]),
  targets: z.array(targetSchema).max(50).default([]),
  constraints: constraintsSchema.default([]),
});

/** Keys accepted at each level, for the `allowed` text of unknown-key issues. */
const KNOWN_KEYS: Record<string, readonly string[]> = {
  '': Object.keys(topSchema.shape),
  halo: ['local', 'galactic'],
  local: ['rhoLocalGeVcm3', 'v0KmS', 'vEscKmS', 'vEarthKmS'],
  galactic: ['profile', 'r0Kpc', 'rhoLocalGeVcm3', 'sigmaVKmS'],
  profile: ['kind', 'rsKpc', 'alpha', 'rhoSGeVcm3', 'rTruncKpc'],
  detectors: ['name', 'target', 'windowKeV', 'efficiency', 'exposureKgDay'],
  targets: ['name', 'kind', 'coneDeg', 'innerDeg', 'offsetDeg', 'maskLatDeg', 'distanceKpc', 'profile', 'velocityDispersionKmS', 'energyGeV'],
  sampling: ['kind', 'count', 'seed'],
  hadronic: ['scalarSet', 'spinSet'],
  indirect: ['sommerfeld', 'yieldTables'],
};

// ------------------------------------------------------------------ issue helpers

/** `['constraints', 2, 'file']` -> `constraints[2].file` */
function formatPath(path: readonly PropertyKey[]): string {
  let out = '';
  for (const seg of path) {
    if (typeof seg === 'number') out += `[${seg}]`;
    else out += out === '' ? String(seg) : `.${String(seg)}`;
  }
  return out;
}

function seenText(value: unknown): string {
  if (value === undefined) return '(missing)';
  const text = typeof value === 'string' ? JSON.stringify(value) : JSON.stringify(value) ?? String(value);
  return text.length > 80 ? `${text.slice(0, 77)}...` : text;
}

function allowedFromZod(issue: z.core.$ZodIssue): string | undefined {
  switch (issue.code) {
    case 'invalid_type':
      return `a value of type ${issue.expected}`;
    case 'too_small':
      return issue.origin === 'array' || issue.origin === 'string'
        ? `at least ${String(issue.minimum)} ${issue.origin === 'array' ? 'items' : 'characters'}`
        : `${issue.inclusive ? '>=' : '>'} ${String(issue.minimum)}`;
    case 'too_big':
      return issue.origin === 'array' || issue.origin === 'string'
        ? `at most ${String(issue.maximum)} ${issue.origin === 'array' ? 'items' : 'characters'}`
        : `${issue.inclusive ? '<=' : '<'} ${String(issue.maximum)}`;
    case 'invalid_value':
      return `one of ${issue.values.map((v) => JSON.stringify(v)).join(', ')}`;
    case 'invalid_format':
      return issue.format === 'regex' ? issue.message : `format ${issue.format}`;
    case 'invalid_union':
      return issue.message;
    case 'custom':
      return typeof issue.params?.allowed === 'string' ? issue.params.allowed : undefined;
    default:
      return undefined;
  }
}

/** Converts zod issues to project Issues, one per unknown key, paths prefixed. */
export function issuesFromZod(error: z.ZodError, prefix: readonly PropertyKey[] = []): Issue[] {
  const out: Issue[] = [];
  for (const zi of error.issues) {
    const path = [...prefix, ...zi.path];
    if (zi.code === 'unrecognized_keys') {
      const level = [...path].reverse().find((s) => typeof s === 'string') ?? '';
      const known = KNOWN_KEYS[String(level)];
      for (const key of zi.keys) {
        out.push({
          code: 'unknown_key',
          path: formatPath([...path, key]),
          message: `unknown key '${key}'`,
          seen: key,
          ...(known ? { allowed: known.join(', ') } : {}),
        });
      }
      continue;
    }
    const allowed = allowedFromZod(zi);
    out.push({
      code: zi.code === 'custom' ? 'invalid' : zi.code,
      path: formatPath(path),
      message: zi.message,
      seen: seenText((zi as { input?: unknown }).input),
      ...(allowed !== undefined ? { allowed } : {}),
    });
  }
  return out;
}

// ------------------------------------------------------------------ parameter checks

const PARAM_BY_NAME = new Map<string, ParameterSpec>(PARAMETERS.map((p) => [p.name, p]));
const PARAM_LIST = PARAMETERS.map((p) => p.name).join(', ');

function checkParamValue(p: ParameterSpec, value: unknown, path: string): Issue | null {
  if (p.kind === 'enum') {
    if (typeof value === 'string' && p.values.includes(value)) return null;
    return { code: 'invalid_choice', path, message: `${p.name} (${p.doc}) must be ${allowedText(p)}`, seen: seenText(value), allowed: allowedText(p) };
  }
  if (value === null && p.default === null) return null;
  if (typeof value !== 'number') {
    return { code: 'invalid_type', path, message: `${p.name} (${p.doc}) must be a number`, seen: seenText(value), allowed: allowedText(p) };
  }
  return checkNumber(p, value, path);
}

function unknownParam(name: string, path: string): Issue {
  return { code: 'unknown_parameter', path, message: `unknown parameter '${name}'`, seen: name, allowed: PARAM_LIST };
}

/** Records the shape issues of an axis; the axis is then unusable. */
function shapeIssues(error: z.ZodError, base: readonly PropertyKey[], issues: Issue[]): null {
  issues.push(...issuesFromZod(error, base));
  return null;
}

function resolveAxis(param: string, raw: unknown, sampling: Sampling, issues: Issue[]): Axis | null {
  const base = ['axes', param];
  const p = PARAM_BY_NAME.get(param);
  if (!p) {
    issues.push(unknownParam(param, formatPath(base)));
    return null;
  }
  if (raw === null || typeof raw !== 'object' || Array.isArray(raw)) {
    issues.push({
      code: 'invalid_type', path: formatPath(base), message: 'an axis must be an object',
      seen: seenText(raw), allowed: '{from, to, steps, spacing}, {values: [...]} or {equals: "expression"}',
    });
    return null;
  }
  const obj = raw as Record<string, unknown>;
  if ('equals' in obj) {
    const r = equalsAxisSchema.safeParse(obj, { reportInput: true });
    if (!r.success) return shapeIssues(r.error, base, issues);
    if (p.kind === 'enum') {
      issues.push({ code: 'invalid', path: formatPath([...base, 'equals']), message: `${param} is a choice; it cannot be computed`, seen: seenText(obj.equals), allowed: '{values: [...]} or a fixed model value' });
      return null;
    }
    return { kind: 'equals', param, expression: r.data.equals };
  }
  if ('values' in obj) {
    const r = valuesAxisSchema.safeParse(obj, { reportInput: true });
    if (!r.success) return shapeIssues(r.error, base, issues);
    const before = issues.length;
    r.data.values.forEach((v, i) => {
      const issue = checkParamValue(p, v, formatPath([...base, 'values', i]));
      if (issue) issues.push(issue);
    });
    return issues.length === before ? { kind: 'values', param, values: r.data.values } : null;
  }
  const r = rangeAxisSchema.safeParse(obj, { reportInput: true });
  if (!r.success) return shapeIssues(r.error, base, issues);
  const a = r.data;
  const before = issues.length;
  if (p.kind === 'enum') {
    issues.push({ code: 'invalid', path: formatPath(base), message: `${param} is a choice; list the choices with {values: [...]}`, seen: seenText(obj), allowed: `{values: [...]} with ${allowedText(p)}` });
    return null;
  }
  for (const end of ['from', 'to'] as const) {
    const issue = checkNumber(p, a[end], formatPath([...base, end]));
    if (issue) issues.push(issue);
  }
  if (a.spacing === 'log' && !(a.from > 0 && a.to > 0)) {
    issues.push({ code: 'invalid', path: formatPath([...base, 'spacing']), message: 'log spacing needs from > 0 and to > 0', seen: `from ${a.from}, to ${a.to}`, allowed: 'lin, or positive ends' });
  }
  if (sampling.kind === 'grid' && a.steps === undefined) {
    issues.push({ code: 'missing', path: formatPath([...base, 'steps']), message: 'grid sampling needs the number of steps of every range axis', seen: '(missing)', allowed: `an integer from 1 to ${MAX_POINTS}` });
  }
  if (sampling.kind !== 'grid' && a.steps !== undefined) {
    issues.push({ code: 'invalid', path: formatPath([...base, 'steps']), message: `steps only applies to grid sampling; ${sampling.kind} sampling draws sampling.count points from the continuous range`, seen: String(a.steps), allowed: 'absent' });
  }
  if (a.steps !== undefined && a.steps > 1 && a.from === a.to) {
    issues.push({ code: 'invalid', path: formatPath([...base, 'to']), message: 'a range with several steps needs to != from', seen: String(a.to), allowed: `a value other than ${a.from}` });
  }
  if (issues.length !== before) return null;
  return { kind: 'range', param, from: a.from, to: a.to, steps: a.steps ?? null, spacing: a.spacing };
}

/**
 * Compiles the `equals` axes in dependency order. Each may use fixed model parameters, sampled axes
 * and other equals axes; cycles are reported with their members.
 */
function compileEqualsAxes(
  axes: readonly Axis[],
  model: Readonly<Record<string, ParamValue>>,
  issues: Issue[],
): CompiledEquals[] {
  const equals = axes.filter((a): a is EqualsAxis => a.kind === 'equals');
  const numericSymbols = PARAMETERS.filter((p) => p.kind === 'number').map((p) => p.name);
  const compiled = new Map<string, ReturnType<typeof compileExpression>>();
  for (const a of equals) {
    const symbols = numericSymbols.filter((s) => s !== a.param);
    const c = compileExpression(a.expression, symbols, formatPath(['axes', a.param, 'equals']), { expect: 'number' });
    if (c.issues.length > 0) issues.push(...c.issues);
    else compiled.set(a.param, c);
  }
  const order: string[] = [];
  const state = new Map<string, 'visiting' | 'done'>();
  const visit = (param: string, chain: string[]): void => {
    if (state.get(param) === 'done') return;
    if (state.get(param) === 'visiting') {
      const cycle = [...chain.slice(chain.indexOf(param)), param];
      issues.push({ code: 'cycle', path: formatPath(['axes', param, 'equals']), message: `equals expressions depend on each other in a cycle: ${cycle.join(' -> ')}`, seen: cycle.join(' -> '), allowed: 'expressions of fixed or sampled parameters, without cycles' });
      return;
    }
    state.set(param, 'visiting');
    for (const dep of compiled.get(param)?.symbols ?? []) {
      if (compiled.has(dep)) visit(dep, [...chain, param]);
      else if (dep in model && model[dep] === null)
        issues.push({ code: 'invalid', path: formatPath(['axes', param, 'equals']), message: `'${dep}' has no value to compute with (its default is computed by the physics)`, seen: dep, allowed: 'parameters with a numeric value' });
    }
    state.set(param, 'done');
    order.push(param);
  };
  for (const a of equals) if (compiled.has(a.param)) visit(a.param, []);
  return order.map((param) => ({
    param,
    expression: equals.find((a) => a.param === param)!.expression,
    evaluate: compiled.get(param)!.evaluate!,
  }));
}

/** The compiled equals axes of a valid spec; throws InvalidInputError otherwise. */
export function planEquals(spec: ScanSpec): CompiledEquals[] {
  const issues: Issue[] = [];
  const equals = compileEqualsAxes(spec.axes, spec.model, issues);
  if (issues.length > 0) throw new InvalidInputError(issues);
  return equals;
}

/** The plan of a valid spec with this chunk size. */
export function makePlan(spec: ScanSpec, chunkSize: number): Plan {
  return new Plan(spec, chunkSize, planEquals(spec));
}

// ------------------------------------------------------------------ parse

function resolveHalo(h: z.infer<typeof haloSchema>): Halo {
  const d = DEFAULT_HALO;
  const profile: Profile = h.galactic?.profile ? dropUndefined({ ...h.galactic.profile }) : d.galactic.profile;
  return {
    local: { ...d.local, ...dropUndefined(h.local ?? {}) },
    galactic: { ...d.galactic, ...dropUndefined(h.galactic ?? {}), profile },
  };
}

function dropUndefined<T extends object>(o: T): T {
  return Object.fromEntries(Object.entries(o).filter(([, v]) => v !== undefined)) as T;
}

function totalPoints(axes: readonly Axis[], sampling: Sampling): number {
  if (sampling.kind !== 'grid') return sampling.count;
  return axes.reduce((n, a) => n * axisSize(a), 1);
}

/** Validates raw JSON into a ScanSpec; returns every issue found (spec set only when there are none). */
export function parseSpec(raw: unknown): { spec?: ScanSpec; issues: Issue[] } {
  const r = topSchema.safeParse(raw, { reportInput: true });
  if (!r.success) {
    const issues = issuesFromZod(r.error);
    // still check parameters and axes so one run reports as much as possible
    if (raw && typeof raw === 'object' && !Array.isArray(raw)) {
      const top = raw as Record<string, unknown>;
      const axes = isPlainObject(top.axes) ? top.axes : {};
      const sampling = samplingSchema.safeParse(top.sampling ?? { kind: 'grid' });
      for (const [param, def] of Object.entries(axes)) resolveAxis(param, def, sampling.success ? sampling.data : { kind: 'grid' }, issues);
      if (isPlainObject(top.model)) checkModel(top.model, new Set(Object.keys(axes)), issues);
    }
    return { issues: dedupe(issues) };
  }
  const input = r.data;
  const issues: Issue[] = [];
  const axes: Axis[] = [];
  for (const [param, def] of Object.entries(input.axes)) {
    const axis = resolveAxis(param, def, input.sampling, issues);
    if (axis) axes.push(axis);
  }
  const axisParams = new Set(Object.keys(input.axes));
  const model = checkModel(input.model, axisParams, issues);
  for (const param of Object.keys(input.model)) {
    if (axisParams.has(param))
      issues.push({ code: 'duplicate', path: formatPath(['model', param]), message: `${param} is both fixed in model and scanned in axes`, seen: param, allowed: 'either model or axes' });
  }
  if (issues.length === 0) compileEqualsAxes(axes, model, issues);
  const sampled = axes.filter((a) => a.kind !== 'equals');
  if (input.sampling.kind === 'grid' && issues.length === 0) {
    const n = totalPoints(axes, input.sampling);
    if (n > MAX_POINTS)
      issues.push({ code: 'too_big', path: 'axes', message: 'the grid has too many points', seen: String(n), allowed: `at most ${MAX_POINTS} points` });
  }
  if (input.sampling.kind !== 'grid' && sampled.length === 0)
    issues.push({ code: 'invalid', path: 'sampling.kind', message: `${input.sampling.kind} sampling needs at least one range or values axis`, seen: input.sampling.kind, allowed: 'grid, or add an axis' });
  const yieldTables = resolveYieldTables(input.indirect.yieldTables, issues);
  const seenNames = new Map<string, string>();
  input.detectors.forEach((d, i) => noteName(d.name, formatPath(['detectors', i, 'name']), seenNames, issues));
  input.targets.forEach((t, i) => noteName(t.name, formatPath(['targets', i, 'name']), seenNames, issues));
  if (issues.length > 0) return { issues };
  const setup: ScanPhysicsSetup = {
    halo: resolveHalo(input.halo),
    hadronic: { ...DEFAULT_HADRONIC, ...dropUndefined(input.hadronic) } as Hadronic,
    detectors: input.detectors.map((d): Detector => ({ ...d })),
    targets: input.targets.map((t): Target => dropUndefined({ ...t, energyGeV: [t.energyGeV[0], t.energyGeV[1] ?? Infinity] as const })),
    ...(input.indirect.sommerfeld === 'hulthen' ? { sommerfeld: 'hulthen' as const } : {}),
    ...(yieldTables ? { yieldTables } : {}),
  };
  return {
    spec: { name: input.name, model, axes, sampling: input.sampling, setup, constraints: input.constraints },
    issues,
  };
}

/**
 * The user's photon-yield tables, checked as the physics will use them (final state, x = E/m_chi
 * increasing in (0, 1], dN/dx >= 0); a file name left here was not read (only loadSpecFile reads them).
 */
function resolveYieldTables(
  tables: Readonly<Record<string, string | readonly (readonly [number, number])[]>> | undefined, issues: Issue[],
): Readonly<Record<string, readonly (readonly [number, number])[]>> | undefined {
  if (tables === undefined) return undefined;
  const rows: Record<string, readonly (readonly [number, number])[]> = {};
  for (const [channel, table] of Object.entries(tables)) {
    if (typeof table === 'string') {
      issues.push({ code: 'unread_file', path: `indirect.yieldTables.${channel}`, message: 'a yield-table file is read only when the spec is loaded from its file', seen: table, allowed: 'inline [[x, dN/dx], ...] rows, or a spec file' });
    } else rows[channel] = table;
  }
  issues.push(...checkYieldTables(rows, 'indirect.yieldTables'));
  return rows;
}

/**
 * Reads the yield-table files a spec names (CSV, `x [], dN/dx []` header, relative to the spec's
 * folder) into inline rows, so that the resolved spec carries the data itself (workers elsewhere get
 * nothing else, and the spec hash covers the numbers). Problems become issues naming the field.
 */
function inlineYieldTableFiles(raw: unknown, specDir: string, issues: Issue[]): unknown {
  if (!isPlainObject(raw) || !isPlainObject(raw.indirect) || !isPlainObject(raw.indirect.yieldTables)) return raw;
  const tables: Record<string, unknown> = { ...raw.indirect.yieldTables };
  for (const [channel, value] of Object.entries(tables)) {
    if (typeof value !== 'string') continue;
    const field = `indirect.yieldTables.${channel}`;
    let text: string;
    try {
      text = readFileSync(path.resolve(specDir, value), 'utf8');
    } catch (err) {
      issues.push({ code: 'unreadable', path: field, message: `cannot read the yield table: ${(err as Error).message}`, seen: value, allowed: 'a readable CSV file, relative to the spec' });
      delete tables[channel];
      continue;
    }
    const { curve, issues: found } = parseCurve(text, '', '', field, { zeroY: true });
    issues.push(...found);
    if (curve) tables[channel] = curve.x.map((x, i) => [x, curve.y[i]!]);
    else delete tables[channel];
  }
  return { ...raw, indirect: { ...raw.indirect, yieldTables: tables } };
}

function isPlainObject(v: unknown): v is Record<string, unknown> {
  return v !== null && typeof v === 'object' && !Array.isArray(v);
}

function noteName(name: string, path: string, seen: Map<string, string>, issues: Issue[]): void {
  const first = seen.get(name);
  if (first !== undefined)
    issues.push({ code: 'duplicate', path, message: `name '${name}' is already used at ${first}`, seen: name, allowed: 'a name unique among detectors and targets' });
  else seen.set(name, path);
}

function checkModel(raw: Readonly<Record<string, unknown>>, axisParams: ReadonlySet<string>, issues: Issue[]): Record<string, ParamValue> {
  const model: Record<string, ParamValue> = {};
  for (const [name, value] of Object.entries(raw)) {
    const p = PARAM_BY_NAME.get(name);
    const path = formatPath(['model', name]);
    if (!p) {
      issues.push(unknownParam(name, path));
      continue;
    }
    const issue = checkParamValue(p, value, path);
    if (issue) issues.push(issue);
  }
  for (const p of PARAMETERS) {
    if (axisParams.has(p.name)) continue;
    const given = raw[p.name];
    model[p.name] = given === undefined ? (p.default ?? null) : (given as ParamValue);
  }
  return model;
}

function dedupe(issues: Issue[]): Issue[] {
  const seen = new Set<string>();
  return issues.filter((i) => {
    const key = `${i.path}\u0000${i.message}`;
    if (seen.has(key)) return false;
    seen.add(key);
    return true;
  });
}

/** Reads and validates a spec file; throws InvalidInputError with every issue. */
export function loadSpecFile(file: string): ScanSpec {
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (err) {
    throw new InvalidInputError([{ code: 'unreadable', path: 'SPEC', message: `cannot read the spec file: ${(err as Error).message}`, seen: file, allowed: 'a readable JSON file' }]);
  }
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (err) {
    throw new InvalidInputError([{ code: 'invalid_json', path: 'SPEC', message: `the spec is not valid JSON: ${(err as Error).message}`, seen: file, allowed: 'a JSON object' }]);
  }
  const fileIssues: Issue[] = [];
  const inlined = inlineYieldTableFiles(raw, path.dirname(path.resolve(file)), fileIssues);
  const { spec, issues } = parseSpec(inlined);
  if (!spec || fileIssues.length > 0) throw new InvalidInputError([...fileIssues, ...issues]);
  return spec;
}

/** The scan-level physics inputs of a spec file (used by `point --spec`). */
export async function loadSpecSetup(file: string): Promise<ScanPhysicsSetup> {
  return loadSpecFile(file).setup;
}

// ------------------------------------------------------------------ resolved form

function axisJson(a: Axis): Record<string, unknown> {
  if (a.kind === 'range') return { from: a.from, to: a.to, ...(a.steps !== null ? { steps: a.steps } : {}), spacing: a.spacing };
  if (a.kind === 'values') return { values: a.values };
  return { equals: a.expression };
}

/** The resolved spec as spec-shaped JSON (defaults filled, canonical key order, Infinity -> null). */
export function resolvedSpecJson(spec: ScanSpec): string {
  const doc = {
    name: spec.name,
    model: spec.model,
    axes: Object.fromEntries(spec.axes.map((a) => [a.param, axisJson(a)])),
    sampling: spec.sampling,
    halo: spec.setup.halo,
    hadronic: spec.setup.hadronic,
    detectors: spec.setup.detectors,
    targets: spec.setup.targets.map((t) => ({ ...t, energyGeV: [t.energyGeV[0], Number.isFinite(t.energyGeV[1]) ? t.energyGeV[1] : null] })),
    constraints: spec.constraints,
    // only when given: the resolved form (and hash) of every spec without them stays as before
    ...(spec.setup.sommerfeld || spec.setup.yieldTables
      ? { indirect: { ...(spec.setup.sommerfeld ? { sommerfeld: spec.setup.sommerfeld } : {}), ...(spec.setup.yieldTables ? { yieldTables: spec.setup.yieldTables } : {}) } }
      : {}),
  };
  return canonicalJson(doc);
}

/** Exact inverse of resolvedSpecJson (used by workers and when reading a scan back). */
export function specFromResolvedJson(text: string): ScanSpec {
  const { spec, issues } = parseSpec(JSON.parse(text));
  if (!spec) throw new InvalidInputError(issues);
  return spec;
}

/** JSON with object keys sorted (arrays keep their order) except `axes`, whose order is meaningful. */
export function canonicalJson(value: unknown): string {
  const walk = (v: unknown, keepOrder: boolean): unknown => {
    if (Array.isArray(v)) return v.map((x) => walk(x, false));
    if (v && typeof v === 'object') {
      const keys = Object.keys(v);
      if (!keepOrder) keys.sort();
      return Object.fromEntries(keys.map((k) => [k, walk((v as Record<string, unknown>)[k], k === 'axes')]));
    }
    return v;
  };
  return JSON.stringify(walk(value, false));
}

/** sha256 of the resolved spec: two specs with the same hash produce the same points. */
export function specHash(resolvedJson: string): string {
  return createHash('sha256').update(resolvedJson).digest('hex');
}
