/**
 * The model point: a fermionic dark-matter particle chi (Dirac or Majorana) coupled to the Standard
 * Model through one s-channel mediator (scalar, pseudoscalar, vector or axial-vector).
 *
 * Names follow the contract in the project design (they are also ledger column names). Masses and
 * widths are in GeV. Couplings follow the Lagrangians of the shared notes (indirect.md A0):
 *  - spin-1: g_q and g_l are universal couplings to every quark / charged lepton;
 *  - spin-0: the coupling to fermion f is c_f = g * m_f / v (Yukawa-like, v = 246.22 GeV);
 *  - Majorana: L contains (g_chi/2) chibar Gamma chi, so Majorana and Dirac cross sections agree at
 *    equal g_chi, and the vector current vanishes (indirect.md A6).
 *
 * Allowed ranges are product decisions: wide enough for any phenomenological scan, narrow enough
 * that the numerics stay inside their tested domain. Couplings above sqrt(4 pi) are accepted but
 * flagged `nonperturbative` by the evaluation.
 */
import type { Issue } from './issue.js';

export const DM_KINDS = ['dirac', 'majorana'] as const;
export const MEDIATOR_KINDS = ['scalar', 'pseudoscalar', 'vector', 'axial'] as const;
export type DmKind = (typeof DM_KINDS)[number];
export type MediatorKind = (typeof MEDIATOR_KINDS)[number];

export interface ModelPoint {
  /** dark-matter kind */
  readonly dm: DmKind;
  /** mediator spin and parity */
  readonly mediator: MediatorKind;
  /** dark-matter mass, GeV */
  readonly m_chi: number;
  /** mediator mass, GeV */
  readonly m_med: number;
  /** mediator coupling to dark matter (dimensionless) */
  readonly g_chi: number;
  /** mediator coupling to quarks (universal for spin-1, times sqrt2 m_q/v Yukawa factor for spin-0) */
  readonly g_q: number;
  /** mediator coupling to charged leptons, same convention as g_q */
  readonly g_l: number;
  /** mediator total width in GeV; null means: the minimal width computed from all open decays */
  readonly width_med: number | null;
}

interface NumberParameter {
  readonly name: 'm_chi' | 'm_med' | 'g_chi' | 'g_q' | 'g_l' | 'width_med';
  readonly kind: 'number';
  readonly unit: string;
  readonly doc: string;
  readonly min: number;
  readonly minInclusive: boolean;
  readonly max: number;
  /** undefined: the parameter must be given; null: computed by the physics (width_med) */
  readonly default: number | null | undefined;
}

interface EnumParameter {
  readonly name: 'dm' | 'mediator';
  readonly kind: 'enum';
  readonly unit: '';
  readonly doc: string;
  readonly values: readonly string[];
  readonly default: string;
}

export type ParameterSpec = NumberParameter | EnumParameter;

/** Every model parameter with its unit, documentation, allowed range and default. */
export const PARAMETERS: readonly ParameterSpec[] = Object.freeze([
  { name: 'dm', kind: 'enum', unit: '', doc: 'dark-matter kind', values: DM_KINDS, default: 'dirac' },
  { name: 'mediator', kind: 'enum', unit: '', doc: 'mediator type', values: MEDIATOR_KINDS, default: 'vector' },
  {
    name: 'm_chi', kind: 'number', unit: 'GeV', doc: 'dark-matter mass',
    min: 0.01, minInclusive: true, max: 1e5, default: 100,
  },
  {
    name: 'm_med', kind: 'number', unit: 'GeV', doc: 'mediator mass',
    min: 1e-3, minInclusive: true, max: 1e5, default: 1000,
  },
  {
    name: 'g_chi', kind: 'number', unit: '', doc: 'coupling to dark matter',
    min: 0, minInclusive: false, max: 4 * Math.PI, default: 1,
  },
  {
    name: 'g_q', kind: 'number', unit: '', doc: 'coupling to quarks',
    min: 0, minInclusive: true, max: 4 * Math.PI, default: 0.25,
  },
  {
    name: 'g_l', kind: 'number', unit: '', doc: 'coupling to charged leptons',
    min: 0, minInclusive: true, max: 4 * Math.PI, default: 0,
  },
  {
    name: 'width_med', kind: 'number', unit: 'GeV', doc: 'mediator total width (default: minimal width from open decays)',
    min: 0, minInclusive: false, max: 1e5, default: null,
  },
]);

export const PARAMETER_NAMES: readonly string[] = PARAMETERS.map((p) => p.name);

/** Text of the allowed range of a parameter, for messages. */
export function allowedText(p: ParameterSpec): string {
  if (p.kind === 'enum') return `one of ${p.values.join(', ')}`;
  const lo = p.minInclusive ? `${p.min} <= ${p.name}` : `${p.min} < ${p.name}`;
  return `${lo} <= ${p.max}${p.unit ? ` ${p.unit}` : ''}`;
}

/** Checks one numeric value against its parameter; returns an issue or null. */
export function checkNumber(p: NumberParameter, value: number, path: string): Issue | null {
  const ok =
    Number.isFinite(value) && (p.minInclusive ? value >= p.min : value > p.min) && value <= p.max;
  if (ok) return null;
  return {
    code: 'out_of_range',
    path,
    message: `${p.name} (${p.doc}) must be a finite number with ${allowedText(p)}`,
    seen: String(value),
    allowed: allowedText(p),
  };
}

/**
 * Builds a model point from loosely typed input (CLI `name=value` pairs or JSON), applying the
 * documented defaults. Returns every problem at once; `point` is set only when there are none.
 */
export function parsePoint(raw: Readonly<Record<string, unknown>>, pathPrefix = ''): { point?: ModelPoint; issues: Issue[] } {
  const issues: Issue[] = [];
  const out: Record<string, unknown> = {};
  for (const key of Object.keys(raw)) {
    if (!PARAMETER_NAMES.includes(key)) {
      issues.push({
        code: 'unknown_parameter',
        path: pathPrefix + key,
        message: `unknown parameter '${key}'`,
        seen: key,
        allowed: PARAMETER_NAMES.join(', '),
      });
    }
  }
  for (const p of PARAMETERS) {
    const path = pathPrefix + p.name;
    const given = raw[p.name];
    if (given === undefined || given === null || given === '') {
      if (p.default === undefined) {
        issues.push({ code: 'missing', path, message: `${p.name} is required`, allowed: allowedText(p) });
      } else {
        out[p.name] = p.default;
      }
      continue;
    }
    if (p.kind === 'enum') {
      const v = String(given).toLowerCase();
      if (!p.values.includes(v)) {
        issues.push({
          code: 'invalid_choice', path, message: `${p.name} must be ${allowedText(p)}`,
          seen: String(given), allowed: allowedText(p),
        });
      } else out[p.name] = v;
      continue;
    }
    const value = typeof given === 'number' ? given : typeof given === 'string' && given.trim() !== '' ? Number(given) : NaN;
    const issue = checkNumber(p, value, path);
    if (issue) issues.push({ ...issue, seen: String(given) });
    else out[p.name] = value;
  }
  if (issues.length > 0) return { issues };
  return { point: Object.freeze(out as unknown as ModelPoint), issues };
}
