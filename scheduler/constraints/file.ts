/**
 * A standalone constraints file for `darksieve judge DB --constraints FILE`: JSON
 * `{ "set"?: "name", "constraints": [ ... ] }` with the constraint kinds of schema.ts. Curve-file
 * paths inside it are relative to the file's own directory.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { InvalidInputError, type Issue } from '../../physics/issue.js';
import { issuesFromZod } from '../spec.js';
import { CONSTRAINT_KEYS, CONSTRAINT_KINDS, constraintsFileSchema, type Constraint, type ConstraintKind } from './schema.js';

export interface ConstraintsFile {
  /** set name given in the file, if any */
  readonly set?: string;
  readonly constraints: readonly Constraint[];
  /** directory relative curve paths start from */
  readonly baseDir: string;
}

/** Most bytes read from a constraints file. */
const MAX_FILE_BYTES = 1024 * 1024;

/**
 * Makes zod issues of a constraints list specific: the allowed keys of the constraint's kind for
 * unknown keys, and the kind itself as the value seen for an unknown kind.
 */
function refineConstraintIssues(issues: Issue[], rawConstraints: unknown): Issue[] {
  const list = Array.isArray(rawConstraints) ? rawConstraints : [];
  return issues.map((issue) => {
    const m = /^constraints\[(\d+)\]\.(\w+)$/.exec(issue.path);
    if (!m) return issue;
    const item = list[Number(m[1])] as Record<string, unknown> | undefined;
    const kind = item && typeof item === 'object' ? item.kind : undefined;
    if (issue.code === 'unknown_key' && typeof kind === 'string' && (CONSTRAINT_KINDS as readonly string[]).includes(kind)) {
      return { ...issue, message: `unknown key '${m[2]}' for a constraint of kind '${kind}'`, allowed: CONSTRAINT_KEYS[kind as ConstraintKind].join(', ') };
    }
    if (m[2] === 'kind' && issue.code === 'invalid_union') {
      return { ...issue, seen: kind === undefined ? '(missing)' : JSON.stringify(kind), allowed: CONSTRAINT_KINDS.join(', ') };
    }
    return issue;
  });
}

/** Reads and validates a constraints file; throws InvalidInputError listing every problem. */
export function loadConstraintsFile(file: string): ConstraintsFile {
  const fail = (code: string, message: string, allowed: string): never => {
    throw new InvalidInputError([{ code, path: '--constraints', message, seen: file, allowed }]);
  };
  let text = '';
  try {
    text = readFileSync(file, 'utf8');
  } catch (err) {
    fail('unreadable', `cannot read the constraints file: ${(err as Error).message}`, 'a readable JSON file');
  }
  if (text.length > MAX_FILE_BYTES) fail('too_big', `the constraints file is larger than ${MAX_FILE_BYTES} bytes`, `at most ${MAX_FILE_BYTES} bytes`);
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (err) {
    fail('invalid_json', `the constraints file is not valid JSON: ${(err as Error).message}`, '{"constraints": [...]}');
  }
  const r = constraintsFileSchema.safeParse(raw, { reportInput: true });
  if (!r.success) {
    const rawList = raw && typeof raw === 'object' ? (raw as Record<string, unknown>).constraints : undefined;
    const issues = issuesFromZod(r.error).map((i) => {
      if (i.path === '') return { ...i, path: '--constraints', allowed: '{"set"?: NAME, "constraints": [...]}' };
      if (i.code === 'unknown_key' && !i.path.includes('.') && !i.path.includes('[')) return { ...i, allowed: 'set, constraints' };
      return i;
    });
    throw new InvalidInputError(refineConstraintIssues(issues, rawList));
  }
  return { ...(r.data.set !== undefined ? { set: r.data.set } : {}), constraints: r.data.constraints, baseDir: path.dirname(path.resolve(file)) };
}
