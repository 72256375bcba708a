// The number and unit matchers read by character code; these check them against the regular
// expression that defines a number, and the tokens the lexer gives for numbers and units.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { NUMBER_PATTERN, lexLoop, matchNumber } from '../../language/src/syntax/tokens';

const byRegex = (text: string, offset: number): string | null => {
  NUMBER_PATTERN.lastIndex = offset;
  const m = NUMBER_PATTERN.exec(text);
  return m && m[0].length > 0 ? m[0] : null;
};

describe('number matcher', () => {
  it('reads exactly what the number pattern reads, at every offset of random text', () => {
    const chars = fc.constantFrom(...'0123456789.eE+-_xa [] \n'.split(''));
    fc.assert(
      fc.property(fc.array(chars, { maxLength: 24 }).map((a) => a.join('')), (text) => {
        for (let o = 0; o <= text.length; o++) expect(matchNumber(text, o)?.[0] ?? null).toBe(byRegex(text, o));
      }),
      { numRuns: 3000 },
    );
  });

  it('reads the forms of the language as one number each', () => {
    const cases: Array<[string, string]> = [
      ['12', '12'], ['0.6', '0.6'], ['.5', '.5'], ['1e3', '1e3'], ['2.5E-7', '2.5E-7'], ['1e+', '1e+'],
      ['2.5e', '2.5e'], ['1else', '1'], ['1..2', '1'], ['3.x', '3'], ['7e_', '7'],
    ];
    for (const [text, want] of cases) expect(matchNumber(text, 0)?.[0]).toBe(want);
    expect(matchNumber('x1', 0)).toBeNull();
    expect(matchNumber('.', 0)).toBeNull();
  });

  it('the lexer gives numbers and bracketed units as tokens with their text', () => {
    const r = lexLoop('param arm = 0.6 [m]\nparam k = 1e-3 [N*m/rad]\n');
    const shown = r.tokens.map((t) => `${t.tokenType.name}:${t.image}`);
    expect(shown).toContain('NumberLit:0.6');
    expect(shown).toContain('UnitLit:[m]');
    expect(shown).toContain('NumberLit:1e-3');
    expect(shown).toContain('UnitLit:[N*m/rad]');
    expect(r.errors).toEqual([]);
  });
});
