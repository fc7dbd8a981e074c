/**
 * User-written expressions (constraint cuts, `equals` axes, `survivors --where`), in mathjs syntax,
 * evaluated in a locked-down sandbox.
 *
 * Method:
 *  - one private mathjs instance (mathjs >= 15.2.0, which fixes two parser holes listed in its
 *    HISTORY.md). Risky functions (import, createUnit, reviver, evaluate, parse, simplify, derivative,
 *    resolve) are replaced by throwing stubs after a private reference to `parse` is kept, following
 *    mathjs docs/expressions/security.md;
 *  - every parsed tree is checked against an allow-list of node kinds, operators, functions and
 *    symbols before it is compiled. Property access, assignment, function definitions, matrices,
 *    ranges, strings, units and unknown names are refused with an issue naming the offending part;
 *  - an expression is parsed and compiled once, then evaluated per point.
 *
 * Comparisons are exact IEEE comparisons. mathjs defaults to relTol 1e-12 and absTol 1e-15, which makes
 * `1e-47 == 2e-46` true and `sigma < 1e-46 * (m_chi/100)` wrong for cross sections (stack.md §4). We set
 * absTol 0 and relTol to the smallest positive double (mathjs refuses 0), so `<`, `==`, ... behave as in
 * JavaScript and SQL, and a cut means the same thing wherever it is evaluated.
 * `predictable: true` makes sqrt/log/pow of negative numbers return NaN instead of complex numbers.
 *
 * A missing value (NULL in the ledger) is passed as NaN: every comparison with NaN is false, so a cut
 * on a missing value is not satisfied; `isNaN(x)` tests for it.
 */
import { createRequire } from 'node:module';
import type { MathNode, MathJsInstance } from 'mathjs';
import type { Issue } from '../physics/issue.js';

/** Values an expression can see: parameter and observable values by name. */
export type ExpressionScope = Readonly<Record<string, number>>;

export type ExpressionValue = number | boolean;

/** What a well-formed expression returns; 'mixed' when a conditional's branches differ. */
export type ResultType = 'number' | 'boolean' | 'mixed';

export interface CompiledExpression {
  /** every problem found; empty when the expression is usable */
  readonly issues: Issue[];
  /** present only when there are no issues */
  readonly evaluate?: (scope: ExpressionScope) => ExpressionValue;
  /** distinct variable names the expression reads, in order of first use */
  readonly symbols: string[];
  /** static result type (known from the tree: comparisons and logic give booleans) */
  readonly resultType?: ResultType;
}

export interface CompileOptions {
  /** demand this result type (an issue otherwise) */
  readonly expect?: 'number' | 'boolean';
}

/** Longest accepted expression text; longer input is almost certainly not a hand-written cut. */
export const MAX_EXPRESSION_LENGTH = 2000;
/** Deepest accepted tree, so hostile nesting cannot exhaust the stack during checks or evaluation. */
export const MAX_EXPRESSION_DEPTH = 64;

/**
 * The sandboxed parser, built on first use: loading mathjs costs about a second of CPU, which every
 * command that reads a spec would otherwise pay even when the spec holds no expression. It is loaded
 * through require (mathjs ships a CommonJS build) so compileExpression can stay synchronous.
 */
let sandboxParse: ((text: string) => MathNode) | undefined;

function parser(): (text: string) => MathNode {
  if (sandboxParse) return sandboxParse;
  const { all, create } = createRequire(import.meta.url)('mathjs') as typeof import('mathjs');
  const math: MathJsInstance = create(all!, { absTol: 0, relTol: Number.MIN_VALUE, predictable: true, number: 'number' });
  const privateParse = math.parse;
  const refuse = (name: string) => (): never => {
    throw new Error(`${name} is disabled in darksieve expressions`);
  };
  math.import(
    {
      import: refuse('import'),
      createUnit: refuse('createUnit'),
      reviver: refuse('reviver'),
      evaluate: refuse('evaluate'),
      parse: refuse('parse'),
      simplify: refuse('simplify'),
      derivative: refuse('derivative'),
      resolve: refuse('resolve'),
    },
    { override: true },
  );
  sandboxParse = (text: string) => privateParse(text);
  return sandboxParse;
}

/** Allowed functions with their accepted argument counts [min, max]. */
const FUNCTIONS: Readonly<Record<string, readonly [number, number]>> = Object.freeze({
  abs: [1, 1],
  sqrt: [1, 1],
  cbrt: [1, 1],
  exp: [1, 1],
  log: [1, 2],
  log10: [1, 1],
  log2: [1, 1],
  pow: [2, 2],
  min: [1, 16],
  max: [1, 16],
  floor: [1, 1],
  ceil: [1, 1],
  sign: [1, 1],
  isNaN: [1, 1],
});
const BOOLEAN_FUNCTIONS = new Set(['isNaN']);

/** Named mathematical constants that may appear next to the caller's symbols. */
const CONSTANTS = new Set(['pi', 'e', 'Infinity']);

const ARITHMETIC_OPERATORS = new Set(['add', 'subtract', 'multiply', 'divide', 'pow', 'mod', 'unaryMinus', 'unaryPlus']);
const BOOLEAN_OPERATORS = new Set(['smaller', 'larger', 'smallerEq', 'largerEq', 'equal', 'unequal', 'and', 'or', 'not', 'xor']);

const ALLOWED_TEXT =
  'numbers, true/false, + - * / ^ %, comparisons (< <= > >= == !=), and/or/not/xor, a ? b : c, ' +
  `functions ${Object.keys(FUNCTIONS).join(', ')}, constants pi, e, Infinity, and the names listed`;

interface Checker {
  readonly allowed: ReadonlySet<string>;
  readonly allowedList: string;
  readonly path: string;
  readonly text: string;
  readonly issues: Issue[];
  readonly symbols: string[];
}

function reject(c: Checker, code: string, message: string, seen: string, allowed = ALLOWED_TEXT): 'number' {
  c.issues.push({ code, path: c.path, message: `${message} in expression '${c.text}'`, seen, allowed });
  return 'number';
}

/** Walks the tree, records problems and returns the static result type of the node. */
function check(c: Checker, node: MathNode, depth: number): ResultType {
  if (depth > MAX_EXPRESSION_DEPTH) {
    return reject(c, 'expression_too_deep', `expression is nested deeper than ${MAX_EXPRESSION_DEPTH} levels`, node.toString().slice(0, 80));
  }
  const n = node as MathNode & Record<string, unknown>;
  switch (node.type) {
    case 'ConstantNode': {
      const value = n.value;
      if (typeof value === 'number') return 'number';
      if (typeof value === 'boolean') return 'boolean';
      return reject(c, 'expression_constant', `constant ${JSON.stringify(value)} is not a number or boolean`, String(value));
    }
    case 'SymbolNode': {
      const name = n.name as string;
      if (c.allowed.has(name)) {
        if (!c.symbols.includes(name)) c.symbols.push(name);
        return 'number';
      }
      if (CONSTANTS.has(name)) return 'number';
      return reject(c, 'expression_unknown_name', `unknown name '${name}'`, name, `${c.allowedList}; constants pi, e, Infinity`);
    }
    case 'ParenthesisNode':
      return check(c, n.content as MathNode, depth + 1);
    case 'OperatorNode': {
      const fn = n.fn as string;
      const args = n.args as MathNode[];
      for (const a of args) check(c, a, depth + 1);
      if (BOOLEAN_OPERATORS.has(fn)) return 'boolean';
      if (ARITHMETIC_OPERATORS.has(fn)) return 'number';
      return reject(c, 'expression_operator', `operator '${n.op as string}' (${fn}) is not allowed`, String(n.op));
    }
    case 'RelationalNode':
      for (const p of n.params as MathNode[]) check(c, p, depth + 1);
      return 'boolean';
    case 'ConditionalNode': {
      check(c, n.condition as MathNode, depth + 1);
      const a = check(c, n.trueExpr as MathNode, depth + 1);
      const b = check(c, n.falseExpr as MathNode, depth + 1);
      return a === b ? a : 'mixed';
    }
    case 'FunctionNode': {
      const fnNode = n.fn as MathNode & { name?: string };
      const args = n.args as MathNode[];
      if (fnNode.type !== 'SymbolNode' || fnNode.name === undefined) {
        return reject(c, 'expression_call', 'only calls of named functions are allowed', node.toString());
      }
      const name = fnNode.name;
      const arity = FUNCTIONS[name];
      if (arity === undefined) {
        return reject(c, 'expression_function', `function '${name}' is not allowed`, name, `functions ${Object.keys(FUNCTIONS).join(', ')}`);
      }
      for (const a of args) check(c, a, depth + 1);
      if (args.length < arity[0] || args.length > arity[1]) {
        const want = arity[0] === arity[1] ? `${arity[0]}` : `${arity[0]} to ${arity[1]}`;
        return reject(c, 'expression_arity', `function '${name}' takes ${want} argument(s), got ${args.length}`, node.toString(), `${want} arguments`);
      }
      return BOOLEAN_FUNCTIONS.has(name) ? 'boolean' : 'number';
    }
    case 'AccessorNode':
    case 'IndexNode':
      return reject(c, 'expression_property', 'property or element access is not allowed', node.toString());
    case 'AssignmentNode':
    case 'FunctionAssignmentNode':
      return reject(c, 'expression_assignment', 'assignments and function definitions are not allowed', node.toString());
    case 'BlockNode':
      return reject(c, 'expression_block', 'only one expression is allowed (no ; or newlines)', node.toString());
    case 'ArrayNode':
    case 'ObjectNode':
    case 'RangeNode':
      return reject(c, 'expression_collection', 'matrices, objects and ranges are not allowed', node.toString());
    default:
      return reject(c, 'expression_node', `${node.type} is not allowed`, node.toString());
  }
}

/**
 * Parses, checks and compiles one expression. `allowedSymbols` are the variable names the caller
 * will supply in the scope (parameters, observables, ...); `path` names the field the text came from
 * (e.g. `constraints[3].expr`) and is used in every issue.
 */
export function compileExpression(
  text: string,
  allowedSymbols: readonly string[],
  path: string,
  options: CompileOptions = {},
): CompiledExpression {
  const issues: Issue[] = [];
  const symbols: string[] = [];
  if (typeof text !== 'string' || text.trim() === '') {
    issues.push({ code: 'expression_empty', path, message: 'expression must be a non-empty string', seen: String(text), allowed: ALLOWED_TEXT });
    return { issues, symbols };
  }
  if (text.length > MAX_EXPRESSION_LENGTH) {
    issues.push({
      code: 'expression_too_long', path, message: `expression is longer than ${MAX_EXPRESSION_LENGTH} characters`,
      seen: `${text.length} characters`, allowed: `at most ${MAX_EXPRESSION_LENGTH} characters`,
    });
    return { issues, symbols };
  }
  let tree: MathNode;
  try {
    tree = parser()(text);
  } catch (err) {
    const message = err instanceof Error ? err.message : String(err);
    issues.push({ code: 'expression_syntax', path, message: `cannot parse expression '${text}': ${message}`, seen: text, allowed: ALLOWED_TEXT });
    return { issues, symbols };
  }
  const allowed = new Set(allowedSymbols);
  const checker: Checker = {
    allowed, allowedList: allowedSymbols.length > 0 ? allowedSymbols.join(', ') : '(no names)', path, text, issues, symbols,
  };
  const resultType = check(checker, tree, 0);
  if (issues.length === 0 && options.expect !== undefined && resultType !== options.expect) {
    const want = options.expect === 'boolean' ? 'a condition (true/false), e.g. a comparison' : 'a number';
    issues.push({ code: 'expression_type', path, message: `expression '${text}' must give ${want}, but gives ${resultType === 'mixed' ? 'a number or a boolean' : `a ${resultType}`}`, seen: text, allowed: want });
  }
  if (issues.length > 0) return { issues, symbols };
  const compiled = tree.compile();
  const evaluate = (scope: ExpressionScope): ExpressionValue => {
    const value: unknown = compiled.evaluate(scope);
    if (typeof value === 'number' || typeof value === 'boolean') return value;
    throw new Error(`expression '${text}' gave a ${typeof value}, expected a number or boolean`);
  };
  return { issues, evaluate, symbols, resultType };
}
