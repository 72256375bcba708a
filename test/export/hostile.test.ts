// Names and descriptions that would break or subvert C if copied as written: keywords, names of
// <math.h> macros, the generated code's own names, non-ASCII letters, and a description that
// tries to end its comment and include a header. The file must compile cleanly and the text
// must stay inside comments, with the numbers still those of the simulator.

import { describe, expect, it } from 'vitest';
import { exportController } from '../../language/src/export/index';
import { cIdent, commentText, NameScope } from '../../language/src/export/mangle';
import { compileOnly, runC, simulatorSequence, worstRelative } from './harness';

const HOSTILE = String.raw`
controller int "evil */ #include <stdlib.h> /* ??/ \ int main(void) { return 1; }" {
  param main = 2 [1/s]
  param NAN = 0.5
  input double [m]
  input θ [rad]
  output y_ [m/s]
  state x [m]
  state in [m]
  limit double within -1 [m] .. 1 [m]
  x' = main * (double - x) + NAN * θ * 1 [m/s]
  in' = main * (x - in)
  output return [m/s] = main * x
  y_ / double = 3 [1/s] / (1 + s / 10 [rad/s])
  sample every 1 [ms]
}
loop Drive {
  signal a = 2 [m] * sin(2 * pi * 3 [1/s] * t)
  signal b = 0.3 [rad] * cos(2 * pi * 5 [1/s] * t)
  a -> int.double
  b -> int.θ
  simulate 1 [s]
}
`;

/** The code with every comment removed: what the compiler actually reads. */
const codeOnly = (c: string) => c.replace(/\/\*[\s\S]*?\*\//g, ' ');

describe('hostile identifiers and descriptions', () => {
  it('compile, stay in comments and keep the numbers', () => {
    const r = exportController(HOSTILE, { controller: 'int', lang: 'c' });
    if (!r.ok) throw new Error(r.message);
    compileOnly(r.code, 'hostile', ['-Wextra', '-pedantic']);
    const code = codeOnly(r.code);
    expect(code).not.toContain('stdlib');
    expect(code).not.toMatch(/int main/);
    expect(code).not.toContain('θ');
    expect(code.match(/#include/g)).toHaveLength(1);
    // every comment is closed where it opened: no '*/' inside one, no '/*' nested
    for (const m of r.code.matchAll(/\/\*([\s\S]*?)\*\//g)) expect(m[1]).not.toContain('/*');
    expect(r.code).not.toContain('??');
    expect(r.names.inputFields).toEqual(['double_', 'x3b8']);
    expect(r.names.stateFields.slice(0, 2)).toEqual(['x_', 'in_']);
    expect(r.names.step).toBe('int_step');
    const ref = simulatorSequence(HOSTILE, 'int', 400);
    const got = runC(r.code, r.names, ref.inputs, 'hostile_run');
    expect(worstRelative(got, ref.outputs)).toBeLessThan(1e-9);
  });

  it('mangling keeps identifiers ASCII, unreserved and unique', () => {
    expect(cIdent('int')).toBe('int_');
    expect(cIdent('_Bool')).toBe('Bool');
    expect(cIdent('heat:integral')).toBe('heat_integral');
    expect(cIdent('y/e#1')).toBe('y_e_1');
    expect(cIdent('ω')).toBe('x3c9');
    expect(cIdent('2x')).toBe('n2x');
    expect(cIdent('uint8_t')).toBe('uint8_t_');
    expect(cIdent('__LINE__')).toBe('LINE');
    const scope = new NameScope();
    expect([scope.take('a b'), scope.take('a_b'), scope.take('a:b')]).toEqual(['a_b', 'a_b_2', 'a_b_3']);
  });

  it('comment text loses what could end or bend a comment', () => {
    expect(commentText('a */ b /* c ??/ d \\ e\nf\u2028g\u0000h')).toBe('a * / b / * c ? ?/ d / e f g h');
  });
});
