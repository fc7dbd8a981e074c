/**
 * The shape of constraints: the spec's `constraints` list and a standalone constraints file
 * (`darksieve judge DB --constraints FILE`). Only the shape is checked here (zod); whether names
 * exist in a scan (observables, detectors, targets), whether curve files read and whether expressions
 * compile is checked by compile.ts against the scan they are applied to.
 *
 * Every constraint has `kind` and an optional `name` (its verdict column; default `<kind>_<index>`,
 * index counted from 0 in the list). Kinds, fields, units and defaults:
 *
 *  - `relic`: the relic abundance omega_h2.
 *      `bound`: "upper" (default; passes when omega_h2 <= max) or "band" (passes when
 *      |omega_h2 - central| <= nSigma * sigma).
 *      `central` 0.120 and `sigma` 0.001: Planck 2018 VI (A&A 641, A6) Omega_c h^2 = 0.120 +- 0.001.
 *      `nSigma` 2. `max` (upper only): default central + nSigma * sigma.
 *      `rescale` (default false): when true, points with omega_h2 < central make up only the fraction
 *      xi = omega_h2 / central of the dark matter; every other constraint of the set then scales
 *      direct-detection signals (sigma_*_cm2, events_*) by xi and annihilation signals today
 *      (sigv0_cm3s, flux_*) by xi^2. At most one relic constraint may rescale.
 *  - `limit_curve`: an upper limit on `observable` as a function of the parameter `versus`
 *      (default m_chi), read from the CSV `file` (path relative to the spec or constraints file; format
 *      in curve-file.ts). Interpolated linearly in (ln versus, ln limit). Passes when the (rescaled)
 *      prediction <= limit. `outOfRange` (required) says what happens outside the table, one policy for
 *      both sides or `{below, above}`: "pass" (no constraint), "fail", "clamp" (the nearest table
 *      limit) or "proportional" (limit proportional to `versus` from the nearest table point, the
 *      heavy-dark-matter scaling of direct-detection limits; shared notes direct.md §6.1).
 *      `rhoCurveGeVcm3`: the local density the curve assumed (direct-detection cross sections only,
 *      default 0.3 GeV/cm^3, the value most published limits use); the prediction is scaled by
 *      rho_scan / rho_curve before comparison (direct.md §6.2).
 *      `target` (optional, spin-independent cross sections only): the element the curve was measured
 *      on (`Xe`, `Ar`, `Ge`, `Si`, ...). Published SI limits assume f_n = f_p; with a target the
 *      point's sigma_si_p and sigma_si_n are combined into the per-nucleon cross section that gives
 *      the same rate on that element's isotopes (direct.md §6.3, isospin.ts), and that is compared
 *      whichever of sigma_si_p_cm2 / sigma_si_n_cm2 is the `observable`. Without a target the
 *      observable itself is compared (right for f_n = f_p).
 *  - `sd_limit_pair`: spin-dependent proton-only and neutron-only limits applied together to
 *      sigma_sd_p_cm2 and sigma_sd_n_cm2. `proton` and `neutron` are curve files (format and
 *      interpolation as for limit_curve, both against `versus`, default m_chi); `outOfRange` and
 *      `rhoCurveGeVcm3` as for limit_curve, applied to both curves. `combine`:
 *      "sum_rule" (default) passes when x + y + 2 sign(a_p a_n) rho sqrt(x y) <= 1 with
 *      x = sigma_p / lim_p, y = sigma_n / lim_n and rho from the spin content of `target` (required
 *      then; one spin isotope: the (sqrt x +- sqrt y)^2 <= 1 rule of Tovey et al. 2000, direct.md
 *      §6.4); "separate" passes when x <= 1 and y <= 1 (no target), which never excludes more than
 *      the sum rule when the two terms add (a_p a_n <S_p><S_n> > 0, e.g. xenon and germanium for this
 *      model) and is at most 4 times weaker there.
 *  - `events_limit`: expected signal events `events_<detector>` of a spec detector against the upper
 *      limit from `observed` events (integer >= 0) over a known `background` (expected events, default
 *      0) at confidence level `cl` (default 0.9), `method` "poisson" (classical, default) or
 *      "feldman_cousins". Passes when events <= limit.
 *  - `flux_limit`: photon flux `flux_<target>_cm2s` of a spec target; passes when flux <= `maxCm2s`
 *      (photons cm^-2 s^-1).
 *  - `expression`: a free condition `expr` over parameters, observables and `xi` (the rescaling
 *      fraction, 1 when no relic constraint rescales), in the sandbox of scheduler/expressions.ts.
 *
 * A missing value (NULL in the ledger) never passes a constraint that reads it, except a limit
 * curve outside its range under policy "pass".
 */
import { z } from 'zod';
import { COLUMN_SAFE_NAME } from '../../physics/observables.js';
import { BASE } from '../../physics/constants.js';
import { MAX_EXPRESSION_LENGTH } from '../expressions.js';

/** Verdict-table columns that a constraint name may not take. */
export const RESERVED_COLUMNS: readonly string[] = Object.freeze(['scan_id', 'constraint_set', 'point_id', 'survives']);

/** Most constraints in one set: each is a verdict column, and the judge packs a point's verdicts into the 52-bit integer range of a double. */
export const MAX_CONSTRAINTS = 50;

export const CONSTRAINT_KINDS = ['relic', 'limit_curve', 'sd_limit_pair', 'events_limit', 'flux_limit', 'expression'] as const;
export type ConstraintKind = (typeof CONSTRAINT_KINDS)[number];

export const OUT_OF_RANGE_POLICIES = ['pass', 'fail', 'clamp', 'proportional'] as const;
export type OutOfRangePolicy = (typeof OUT_OF_RANGE_POLICIES)[number];

/** How an sd_limit_pair combines its proton and neutron curves. */
export const SD_COMBINE_RULES = ['sum_rule', 'separate'] as const;

/** Local density most published direct-detection limits assume (Baxter et al. 2021, EPJC 81, 907). */
export const DEFAULT_RHO_CURVE_GEVCM3 = 0.3;

const positive = z.number().positive().finite();

const constraintName = z
  .string()
  .regex(COLUMN_SAFE_NAME, { message: 'must be a column-safe name: a lower-case letter, then up to 39 lower-case letters, digits or _' })
  .refine((n) => !RESERVED_COLUMNS.includes(n), { message: `must not be one of ${RESERVED_COLUMNS.join(', ')}`, params: { allowed: `a column-safe name other than ${RESERVED_COLUMNS.join(', ')}` } })
  .optional();

const relicSchema = z
  .strictObject({
    kind: z.literal('relic'),
    name: constraintName,
    bound: z.enum(['upper', 'band']).default('upper'),
    central: positive.default(BASE.omegaCh2.value),
    sigma: positive.default(BASE.omegaCh2Sigma.value),
    nSigma: positive.default(2),
    max: positive.optional(),
    rescale: z.boolean().default(false),
  })
  .superRefine((c, ctx) => {
    if (c.bound === 'band' && c.max !== undefined) {
      ctx.addIssue({ code: 'custom', path: ['max'], message: 'max is only used with bound "upper"; a band is central +- nSigma * sigma', input: c.max, params: { allowed: 'absent when bound is "band"' } });
    }
  });

const policySchema = z.enum(OUT_OF_RANGE_POLICIES, { message: `out-of-range policy must be one of ${OUT_OF_RANGE_POLICIES.join(', ')}` });

const outOfRangeSchema = z.union([policySchema, z.strictObject({ below: policySchema, above: policySchema })], {
  message: `outOfRange is required: one of ${OUT_OF_RANGE_POLICIES.join(', ')}, or {below, above} with those values`,
});

const curveFile = z.string().min(1).max(4096);

/** An element symbol; whether isotope data exist for it is checked by compile.ts. */
const targetElement = z.string().min(1).max(8);

const limitCurveSchema = z.strictObject({
  kind: z.literal('limit_curve'),
  name: constraintName,
  observable: z.string().min(1),
  versus: z.string().min(1).default('m_chi'),
  file: curveFile,
  outOfRange: outOfRangeSchema,
  rhoCurveGeVcm3: positive.optional(),
  target: targetElement.optional(),
});

const sdLimitPairSchema = z
  .strictObject({
    kind: z.literal('sd_limit_pair'),
    name: constraintName,
    versus: z.string().min(1).default('m_chi'),
    proton: curveFile,
    neutron: curveFile,
    outOfRange: outOfRangeSchema,
    combine: z.enum(SD_COMBINE_RULES, { message: `combine must be one of ${SD_COMBINE_RULES.join(', ')}` }).default('sum_rule'),
    target: targetElement.optional(),
    rhoCurveGeVcm3: positive.optional(),
  })
  .superRefine((c, ctx) => {
    if (c.combine === 'sum_rule' && c.target === undefined) {
      ctx.addIssue({ code: 'custom', path: ['target'], message: 'combine "sum_rule" needs the target element of the curves (its spin content sets the interference term); or use combine "separate"', input: '(missing)', params: { allowed: 'an element symbol such as Xe, Ge, F' } });
    }
    if (c.combine === 'separate' && c.target !== undefined) {
      ctx.addIssue({ code: 'custom', path: ['target'], message: 'target is only used by combine "sum_rule"', input: c.target, params: { allowed: 'absent when combine is "separate"' } });
    }
  });

const eventsLimitSchema = z.strictObject({
  kind: z.literal('events_limit'),
  name: constraintName,
  detector: z.string().min(1),
  observed: z.number().int().min(0),
  background: z.number().min(0).finite().default(0),
  cl: z.number().gt(0).lt(1).default(0.9),
  method: z.enum(['poisson', 'feldman_cousins']).default('poisson'),
});

const fluxLimitSchema = z.strictObject({
  kind: z.literal('flux_limit'),
  name: constraintName,
  target: z.string().min(1),
  maxCm2s: positive,
});

const expressionSchema = z.strictObject({
  kind: z.literal('expression'),
  name: constraintName,
  expr: z.string().min(1).max(MAX_EXPRESSION_LENGTH),
});

export const constraintSchema = z.discriminatedUnion('kind', [relicSchema, limitCurveSchema, sdLimitPairSchema, eventsLimitSchema, fluxLimitSchema, expressionSchema], {
  message: `kind must be one of ${CONSTRAINT_KINDS.join(', ')}`,
});

/** The spec's `constraints` list (the spec schema adds `.default([])`). */
export const constraintsSchema = z.array(constraintSchema).max(MAX_CONSTRAINTS);

/** A constraint set name (stored in verdicts.constraint_set). */
export const SET_NAME = /^[A-Za-z0-9_.-]{1,64}$/;

/** A standalone constraints file: `{ "set"?: NAME, "constraints": [...] }`. */
export const constraintsFileSchema = z.strictObject({
  set: z.string().regex(SET_NAME, { message: 'must be 1-64 letters, digits, _, - or .' }).optional(),
  constraints: constraintsSchema.min(1),
});

export type ConstraintInput = z.input<typeof constraintSchema>;
export type Constraint = z.output<typeof constraintSchema>;
export type RelicConstraint = z.output<typeof relicSchema>;
export type LimitCurveConstraint = z.output<typeof limitCurveSchema>;
export type SdLimitPairConstraint = z.output<typeof sdLimitPairSchema>;
export type EventsLimitConstraint = z.output<typeof eventsLimitSchema>;
export type FluxLimitConstraint = z.output<typeof fluxLimitSchema>;
export type ExpressionConstraint = z.output<typeof expressionSchema>;

/** Keys accepted per kind, for the `allowed` text of unknown-key issues. */
export const CONSTRAINT_KEYS: Readonly<Record<ConstraintKind, readonly string[]>> = Object.freeze({
  relic: Object.keys(relicSchema.shape),
  limit_curve: Object.keys(limitCurveSchema.shape),
  sd_limit_pair: Object.keys(sdLimitPairSchema.shape),
  events_limit: Object.keys(eventsLimitSchema.shape),
  flux_limit: Object.keys(fluxLimitSchema.shape),
  expression: Object.keys(expressionSchema.shape),
});

/** The verdict column of constraint `index`: its name, or `<kind>_<index>`. */
export function constraintColumn(c: Constraint, index: number): string {
  return c.name ?? `${c.kind}_${index}`;
}
