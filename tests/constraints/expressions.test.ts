/**
 * The expression sandbox: what it refuses, and that comparisons of tiny cross sections are exact.
 * Expected values are plain IEEE arithmetic (common practice, no source); the refusals follow the
 * allow-list recommended by mathjs docs/expressions/security.md.
 */
import { describe, expect, it } from 'vitest';
import { compileExpression } from '../../scheduler/expressions.js';

const NAMES = ['m_chi', 'm_med', 'sigma_si', 'omega_h2'];

function codes(text: string): string[] {
  return compileExpression(text, NAMES, 'constraints[0].expr').issues.map((i) => i.code);
}

function value(text: string, scope: Record<string, number>): number | boolean {
  const c = compileExpression(text, NAMES, 'x');
  expect(c.issues, `issues for '${text}'`).toEqual([]);
  return c.evaluate!(scope);
}

describe('sandbox refuses', () => {
  const refused: [string, string, string][] = [
    ['property access', 'm_chi.constructor', 'expression_property'],
    ['bracket access', 'm_chi["constructor"]', 'expression_property'],
    ['assignment', 'm_chi = 3', 'expression_assignment'],
    ['function definition', 'f(x) = x^2', 'expression_assignment'],
    ['import', 'import({x: 1})', 'expression_function'],
    ['createUnit', 'createUnit("foo")', 'expression_function'],
    ['evaluate inside', 'evaluate("1+1")', 'expression_function'],
    ['parse inside', 'parse("1")', 'expression_function'],
    ['unknown symbol', 'm_chii > 3', 'expression_unknown_name'],
    ['unit', '2 cm', 'expression_unknown_name'],
    ['matrix', '[1, 2] * m_chi', 'expression_collection'],
    ['object', '{a: 1}', 'expression_collection'],
    ['range', '1:3', 'expression_collection'],
    ['string', '"abc"', 'expression_constant'],
    ['two statements', 'm_chi; m_med', 'expression_block'],
    ['unit conversion', 'm_chi to cm', 'expression_operator'],
    ['bitwise operator', 'm_chi | 1', 'expression_operator'],
    ['transpose', "m_chi'", 'expression_operator'],
    ['function not on the list', 'cos(m_chi)', 'expression_function'],
    ['wrong argument count', 'pow(m_chi)', 'expression_arity'],
    ['syntax error', 'm_chi >', 'expression_syntax'],
    ['empty text', '   ', 'expression_empty'],
    ['too long', `m_chi${' + 1'.repeat(600)}`, 'expression_too_long'],
    ['too deep', `${'('.repeat(80)}m_chi${')'.repeat(80)}`, 'expression_too_deep'],
  ];
  for (const [what, text, code] of refused) {
    it(`${what}: ${text.slice(0, 40)}`, () => {
      expect(codes(text), `input ${text}`).toContain(code);
    });
  }

  it('names the path, what was seen and what is allowed', () => {
    const [issue] = compileExpression('m_chii > 3', NAMES, 'constraints[2].expr').issues;
    expect(issue).toMatchObject({ path: 'constraints[2].expr', seen: 'm_chii' });
    expect(issue!.allowed).toContain('m_chi');
  });

  it('reports every problem at once', () => {
    expect(codes('foo + bar.baz + cos(1)')).toEqual(['expression_unknown_name', 'expression_property', 'expression_function']);
  });
});

describe('tiny numbers compare exactly (mathjs default tolerances would get these wrong, stack.md §4)', () => {
  it('1e-47 == 2e-46 is false', () => expect(value('1e-47 == 2e-46', {})).toBe(false));
  it('1e-47 < 2e-46 is true', () => expect(value('1e-47 < 2e-46', {})).toBe(true));
  it('3e-16 > 1e-16 is true', () => expect(value('3e-16 > 1e-16', {})).toBe(true));
  it('sigma_si < 1e-46*(m_chi/100) with sigma 1e-47 and m_chi 200 is true', () => {
    expect(value('sigma_si < 1e-46*(m_chi/100)', { sigma_si: 1e-47, m_chi: 200 })).toBe(true);
  });
  it('the same cut fails for sigma 3e-46', () => {
    expect(value('sigma_si < 1e-46*(m_chi/100)', { sigma_si: 3e-46, m_chi: 200 })).toBe(false);
  });
  it('1 + 1e-13 > 1 is true (no relative tolerance either)', () => expect(value('1 + 1e-13 > 1', {})).toBe(true));
  it('equality of identical tiny values holds', () => expect(value('sigma_si == 1e-47', { sigma_si: 1e-47 })).toBe(true));
});

describe('evaluation', () => {
  it('compiles once and evaluates per point', () => {
    const c = compileExpression('max(m_chi, m_med) / 2 + log10(sigma_si)', NAMES, 'x');
    expect(c.symbols).toEqual(['m_chi', 'm_med', 'sigma_si']);
    expect(c.evaluate!({ m_chi: 10, m_med: 30, sigma_si: 1e-40 })).toBeCloseTo(15 - 40, 12);
    expect(c.evaluate!({ m_chi: 50, m_med: 30, sigma_si: 1e-30 })).toBeCloseTo(25 - 30, 12);
  });
  it('chained comparisons and conditionals', () => {
    expect(value('10 < m_chi <= 200', { m_chi: 200 })).toBe(true);
    expect(value('10 < m_chi <= 200', { m_chi: 201 })).toBe(false);
    expect(value('m_chi > 100 ? m_med : 2 * m_med', { m_chi: 50, m_med: 3 })).toBe(6);
  });
  it('missing values (NaN) fail comparisons and are seen by isNaN', () => {
    expect(value('omega_h2 < 0.12', { omega_h2: NaN })).toBe(false);
    expect(value('omega_h2 >= 0.12', { omega_h2: NaN })).toBe(false);
    expect(value('isNaN(omega_h2)', { omega_h2: NaN })).toBe(true);
  });
  it('square root of a negative number is NaN, not a complex number', () => {
    expect(value('sqrt(m_chi)', { m_chi: -4 })).toBeNaN();
    expect(value('log(m_chi)', { m_chi: -4 })).toBeNaN();
  });
  it('result types are known before evaluation', () => {
    expect(compileExpression('m_chi < 3 and m_med > 2', NAMES, 'x').resultType).toBe('boolean');
    expect(compileExpression('2 * m_chi', NAMES, 'x').resultType).toBe('number');
    expect(compileExpression('m_chi > 1 ? 2 : true', NAMES, 'x').resultType).toBe('mixed');
  });
  it('expect: boolean refuses a number-valued expression, and the reverse', () => {
    expect(compileExpression('2 * m_chi', NAMES, 'c', { expect: 'boolean' }).issues[0]?.code).toBe('expression_type');
    expect(compileExpression('m_chi > 2', NAMES, 'a', { expect: 'number' }).issues[0]?.code).toBe('expression_type');
    expect(compileExpression('2 * m_chi', NAMES, 'a', { expect: 'number' }).issues).toEqual([]);
  });
  it('the scope supplies values; constants pi and e are available', () => {
    expect(value('pi * m_chi', { m_chi: 2 })).toBe(2 * Math.PI);
    expect(value('e', {})).toBe(Math.E);
  });
});
