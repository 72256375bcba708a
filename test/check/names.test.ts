// Each name/structure diagnostic code with its exact range.
import { describe, expect, it } from 'vitest';
import { analyze } from '../../language/src/analysis';
import { marked } from '../helpers/marked';

/** Analyses a marked source and expects exactly one diagnostic `code` on the marked range. */
function expectCode(code: string, src: string) {
  const m = marked(src);
  const a = analyze(m.text);
  const hits = a.diagnostics.filter((d) => d.code === code);
  expect(hits.map((d) => [d.span.start, d.span.end]), `${code} in:\n${m.text}\n got ${JSON.stringify(a.diagnostics)}`).toEqual(
    m.spans.map((s) => [s.start, s.end]),
  );
  return hits;
}

const plantHead = 'plant P {\n  state x [m]\n  input u [m/s]\n';

describe('name checks', () => {
  it('LW201 undefined name, with a suggestion', () => {
    const [d] = expectCode('LW201', `${plantHead}  x' = u + ⟦xx⟧\n}`);
    expect(d.message).toContain("did you mean 'x'");
  });

  it('LW202 duplicate name in a scope', () => {
    expectCode('LW202', `${plantHead}  param k = 2\n  param ⟦k⟧ = 3\n  x' = k*u\n}`);
  });

  it('LW202 duplicate block name', () => {
    expectCode('LW202', `${plantHead}  x' = u\n}\ncontroller ⟦P⟧ {\n}`);
  });

  it('LW203 derivative of something that is not a state', () => {
    expectCode('LW203', `${plantHead}  x' = u\n  ⟦u⟧' = x\n}`);
  });

  it('LW204 state without an equation', () => {
    expectCode('LW204', `plant P {\n  state ⟦x⟧ [m]\n}`);
  });

  it('LW205 state with two equations', () => {
    expectCode('LW205', `${plantHead}  x' = u\n  ⟦x⟧' = 2*u\n}`);
  });

  it('LW206 output without an equation', () => {
    expectCode('LW206', `${plantHead}  output ⟦y⟧ [m]\n  x' = u\n}`);
  });

  it('LW207 output given a value twice', () => {
    expectCode('LW207', `controller C {\n  input e [m]\n  output v [m] = e\n  ⟦v⟧ / e = 2/(s+1)\n}`);
  });

  it('LW208 s outside a transfer relation', () => {
    expectCode('LW208', `${plantHead}  x' = ⟦s⟧*u\n}`);
  });

  it('LW209 a param named s is shadowed inside a transfer relation', () => {
    expectCode('LW209', `controller C {\n  param ⟦s⟧ = 2\n  input e [m]\n  output v [m]\n  v / e = 1/(s+1)\n}`);
  });

  it('LW210 arrow into an unknown system', () => {
    expectCode('LW210', `${plantHead}  x' = u\n}\nloop L {\n  1 [m/s] -> ⟦Q⟧.u\n  simulate 1 [s]\n}`);
  });

  it('LW211 unknown member of a known system in an arrow', () => {
    expectCode('LW211', `${plantHead}  x' = u\n}\nloop L {\n  1 [m/s] -> P.⟦v⟧\n  1 [m/s] -> P.u\n  simulate 1 [s]\n}`);
  });

  it('LW212 operating point entry that is not a state or input', () => {
    expectCode('LW212', `${plantHead}  param k = 1\n  x' = k*u\n  operating point rest { x = 0 [m], u = 0 [m/s], ⟦k⟧ = 1 }\n}`);
  });

  it('LW213 around/start/sweep targets that do not exist', () => {
    const body = `${plantHead}  x' = u\n  operating point rest { x = 0 [m], u = 0 [m/s] }\n}\n`;
    expectCode('LW213', `${body}loop L {\n  0 [m/s] -> P.u\n  around P.⟦calm⟧\n  simulate 1 [s]\n}`);
    expectCode('LW213', `${body}loop L {\n  0 [m/s] -> P.u\n  start P.⟦z⟧ = 1 [m]\n  simulate 1 [s]\n}`);
    expectCode('LW213', `${body}loop L {\n  0 [m/s] -> P.u\n  sweep start ⟦Q⟧.x over 1 [m], 2 [m]\n  simulate 1 [s]\n}`);
    expectCode('LW213', `${body}loop L {\n  0 [m/s] -> P.u\n  sweep ⟦P.u⟧ over 1 [m/s] .. 2 [m/s] steps 3\n  simulate 1 [s]\n}`);
  });

  it('LW401 input wired twice, reported on the second arrow', () => {
    expectCode('LW401', `${plantHead}  x' = u\n}\nloop L {\n  1 [m/s] -> P.u\n  2 [m/s] -> ⟦P.u⟧\n  simulate 1 [s]\n}`);
  });

  it('LW402 input never wired, reported on the loop name', () => {
    const [d] = expectCode('LW402', `${plantHead}  x' = u\n}\nloop ⟦L⟧ {\n  show P.x\n  simulate 1 [s]\n}`);
    expect(d.message).toContain('P.u');
  });

  it('LW403 arrow whose target is not an input', () => {
    expectCode('LW403', `${plantHead}  x' = u\n}\nloop L {\n  1 [m/s] -> P.u\n  1 [m] -> ⟦P.x⟧\n  simulate 1 [s]\n}`);
  });

  it('LW214 member in the wrong kind of block', () => {
    expectCode('LW214', `controller C {\n  input e [m]\n  output v [m] = e\n  ⟦operating point o { e = 0 [m] }⟧\n}`);
  });

  it('LW215 unknown function and wrong arity', () => {
    expectCode('LW215', `${plantHead}  x' = ⟦sine⟧(u)\n}`.replace('⟦sine⟧(u)', '⟦frob⟧(u)'));
    expectCode('LW215', `${plantHead}  x' = ⟦clamp(u, 1 [m/s])⟧\n}`);
  });

  it('LW216 transfer relation naming an input as its output', () => {
    expectCode('LW216', `controller C {\n  input e [m]\n  output v [m]\n  ⟦e⟧ / e = 1/(s+1)\n  v / e = 1/(s+1)\n}`);
  });

  it('LW405 time used inside a system', () => {
    expectCode('LW405', `${plantHead}  x' = u*⟦t⟧\n}`);
  });

  it('LW218 param used before its definition', () => {
    expectCode('LW218', `${plantHead}  param a = ⟦b⟧*2\n  param b = 1\n  x' = a*u\n}`);
  });

  it('LW221 operating point that leaves a state out', () => {
    expectCode('LW221', `${plantHead}  x' = u\n  operating point ⟦rest⟧ { u = 0 [m/s] }\n}`);
  });
});

describe('recovery', () => {
  it('a file with three broken members still yields every other block and its diagnostics', () => {
    const src = [
      'plant P {',
      '  state x [m]',
      '  param = 3',           // broken 1
      '  input u [m/s]',
      "  x' = u +",            // broken 2 (dangling operator, then next line)
      '  param k = (2',        // broken 3 (unclosed paren)
      '}',
      'controller C {',
      '  input e [m]',
      '  output v [m/s] = 2 [1/s] * e',
      '}',
      'loop L {',
      '  C.v -> P.u',
      '  0 [m] - P.x -> C.e',
      '  simulate 1 [s]',
      '}',
    ].join('\n');
    const a = analyze(src);
    expect(a.ast.blocks.map((b) => `${b.kind} ${b.name.name}`)).toEqual(['plant P', 'controller C', 'loop L']);
    expect(a.diagnostics.filter((d) => d.code === 'LW101').length).toBeGreaterThanOrEqual(2);
    const c = a.ast.blocks[1];
    expect(c.members.map((m) => m.kind)).toEqual(['input', 'output']);
    const loop = a.symbols.loops.get('L')!;
    expect([...loop.instances.keys()]).toEqual(['P', 'C']);
  });

  it('reports an unclosed unit bracket with a useful message', () => {
    const m = marked(`plant P {\n  param g = 9.8 ⟦[m/s^2⟧\n}`);
    const a = analyze(m.text);
    const d = a.diagnostics.find((x) => x.code === 'LW102')!;
    expect(d.message).toBe("expected ']' to close the unit");
    expect([d.span.start, d.span.end]).toEqual([m.spans[0].start, m.spans[0].end]);
  });

  it('reports a number whose exponent has no digits once, over the whole number (LW105)', () => {
    for (const bad of ['1e+', '2.5e', '3E-']) {
      const m = marked(`plant P {\n  param k = ⟦${bad}⟧\n  param j = 2 * k\n}`);
      const a = analyze(m.text);
      expect(a.diagnostics.map((d) => d.code)).toEqual(['LW105']);
      expect([a.diagnostics[0].span.start, a.diagnostics[0].span.end]).toEqual([m.spans[0].start, m.spans[0].end]);
    }
    // complete exponents, and a number run into a keyword, are not affected
    expect(analyze(`plant P {\n  param k = 1e3 * 2.5E-2 + .5e+1\n  param j = if k > 0 then 1else 2\n}`).diagnostics).toEqual([]);
  });

  it('explains a line that starts with an operator', () => {
    const a = analyze(`plant P {\n  state x [m]\n  input u [m/s]\n  x' = u\n    - u\n}`);
    const d = a.diagnostics.find((x) => x.code === 'LW101')!;
    expect(d.message).toMatch(/end the previous line with the operator/);
  });

  it('an expression continues over a line break when the operator ends the line', () => {
    const a = analyze(`plant P {\n  state x [m]\n  input u [m/s]\n  x' = u -\n    u\n}`);
    expect(a.diagnostics).toEqual([]);
  });

  it('never throws on arbitrary text', () => {
    for (const t of ['', '}', '{{{{', 'plant', 'plant P { x\' = ', 'loop L { -> }', '"', '[[[', 'plant P { state x [', '\u0000\uffff', 'plant θ { state ω [rad/s] ω\' = -ω }']) {
      expect(() => analyze(t)).not.toThrow();
    }
  });
});
