// Algebraic loops found from the structure of the file (check/wiring.ts): every arrow of the
// cycle gets LW404 naming the others; states, strictly proper relations, integral-only PID laws
// and sampled controllers break a cycle; `solve algebraic` accepts it.
import { describe, expect, it } from 'vitest';
import { analyze } from '../../language/src/analysis';

const plant = `plant P {
  state x [m]
  input u [m/s]
  output y [m] = x
  x' = u
}
`;

function loopCodes(controllers: string, arrows: string, extra = ''): { spans: string[]; related: number[] } {
  const text = `${plant}${controllers}\nloop L {\n${arrows}\n  simulate 1 [s]\n${extra}}\n`;
  const a = analyze(text);
  const hits = a.diagnostics.filter((d) => d.code === 'LW404');
  return { spans: hits.map((d) => text.slice(d.span.start, d.span.end)), related: hits.map((d) => d.related?.length ?? 0) };
}

const twoGains = `controller A {
  input e [m]
  output v [m/s] = e * 2 [1/s]
}
controller B {
  input w [m/s]
  output z [m] = w * 1 [s]
}`;

describe('structural algebraic loops', () => {
  it('two feedthrough controllers wired into each other: LW404 on both arrows, each naming the other', () => {
    const r = loopCodes(twoGains, '  B.z -> A.e\n  A.v -> B.w\n  A.v -> P.u');
    expect(r.spans).toEqual(['B.z -> A.e', 'A.v -> B.w']);
    expect(r.related).toEqual([1, 1]);
  });

  it('a loop through the plant state is not algebraic', () => {
    expect(loopCodes(twoGains, '  P.y - B.z -> A.e\n  0 [m/s] -> B.w\n  A.v -> P.u').spans).toEqual([]);
    expect(loopCodes(twoGains, '  0 [m] - P.y -> A.e\n  A.v -> B.w\n  A.v -> P.u').spans).toEqual([]);
  });

  it('an arrow that feeds itself through a feedthrough output', () => {
    const self = `controller A {
  input e [m]
  output v [m] = e / 2
}`;
    expect(loopCodes(self, '  1 [m] - A.v -> A.e\n  0 [m/s] -> P.u').spans).toEqual(['1 [m] - A.v -> A.e']);
  });

  it('biproper transfer relations feed through; strictly proper ones do not', () => {
    const tf = (rel: string) => `controller A {
  input e [m]
  output v [m]
  v / e = ${rel}
}`;
    expect(loopCodes(tf('2 + 1/(s*1 [s] + 1)'), '  A.v -> A.e\n  0 [m/s] -> P.u').spans).toHaveLength(1);
    expect(loopCodes(tf('1 [s]*s/(1 + s*0.1 [s])'), '  A.v -> A.e\n  0 [m/s] -> P.u').spans).toHaveLength(1);
    expect(loopCodes(tf('1/(s*1 [s] + 1)'), '  A.v -> A.e\n  0 [m/s] -> P.u').spans).toEqual([]);
  });

  it('a PID law feeds through with kp or kd, not with ki alone', () => {
    const pid = (gains: string) => `controller A {
  input e [m]
  output v [m]
  pid v from e { ${gains} }
}`;
    expect(loopCodes(pid('kp = 2, ki = 1 [1/s]'), '  A.v -> A.e\n  0 [m/s] -> P.u').spans).toHaveLength(1);
    expect(loopCodes(pid('ki = 1 [1/s]'), '  A.v -> A.e\n  0 [m/s] -> P.u').spans).toEqual([]);
  });

  it('a sampled controller holds its output: no algebraic loop', () => {
    const sampled = `controller A {
  input e [m]
  output v [m] = e / 2
  sample every 10 [ms]
}`;
    expect(loopCodes(sampled, '  1 [m] - A.v -> A.e\n  0 [m/s] -> P.u').spans).toEqual([]);
  });

  it("'solve algebraic' accepts the cycle", () => {
    expect(loopCodes(twoGains, '  B.z -> A.e\n  A.v -> B.w\n  A.v -> P.u', '  solve algebraic\n').spans).toEqual([]);
  });
});
