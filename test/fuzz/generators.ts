// Document generators for fuzzing: documents built from the grammar, and mutations of the
// samples (deleted, duplicated, swapped tokens and lines; random bytes; long lines; deep nesting).

import fc from 'fast-check';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';

const root = join(__dirname, '..', '..');

/** Every .loop file under samples/, read once. */
export function sampleTexts(): Array<{ name: string; text: string }> {
  const out: Array<{ name: string; text: string }> = [];
  const walk = (dir: string) => {
    for (const f of readdirSync(dir)) {
      const p = join(dir, f);
      if (statSync(p).isDirectory()) walk(p);
      else if (f.endsWith('.loop')) out.push({ name: p.slice(root.length + 1), text: readFileSync(p, 'utf8') });
    }
  };
  walk(join(root, 'samples'));
  return out;
}

const ident = fc.constantFrom('x', 'v', 'u', 'y', 'k', 'tilt', 'rate', 'drive', 'θ', 's', 't', 'pi', 'e', 'P', 'C', 'L', 'Boom', 'seen');
const unit = fc.constantFrom('m', 'kg', 's', 'N*m', 'rad/s', 'm/s^2', '1/s', 'V/(rad/s)', '%', 'degC', 'Hz', 'K', 'bar', 'rpm', '1', 'N*m*s/rad', 'Nm', '', 'm/', '(');
const num = fc.oneof(fc.integer({ min: -50, max: 50 }).map(String), fc.double({ min: -1e6, max: 1e6, noNaN: true }).map((d) => Math.abs(d).toPrecision(4)), fc.constantFrom('0', '.5', '1e-3', '2.5E+2'));

const expr: fc.Arbitrary<string> = fc.letrec((tie) => ({
  e: fc.oneof(
    { depthSize: 'small', withCrossShrink: true },
    num,
    fc.tuple(num, unit).map(([n, u]) => `${n} [${u}]`),
    ident,
    fc.tuple(ident, ident).map(([a, b]) => `${a}.${b}`),
    fc.tuple(ident, ident, ident).map(([a, b, c]) => `${a}.${b}.${c}`),
    fc.tuple(tie('e'), fc.constantFrom('+', '-', '*', '/', '^', '<', '>=', '==', 'and', 'or'), tie('e')).map(([a, o, b]) => `${a} ${o} ${b}`),
    tie('e').map((a) => `(${a})`),
    tie('e').map((a) => `-${a}`),
    fc.tuple(fc.constantFrom('sin', 'sqrt', 'abs', 'min', 'clamp', 'lookup', 'step', 'settling', 'frob'), fc.array(tie('e'), { maxLength: 3 })).map(([f, as]) => `${f}(${as.join(', ')})`),
    fc.tuple(tie('e'), tie('e'), tie('e')).map(([c, a, b]) => `if ${c} then ${a} else ${b}`),
    fc.array(tie('e'), { maxLength: 3 }).map((as) => `[${as.join(', ')}]`),
  ),
})).e;

const systemMember = fc.oneof(
  fc.tuple(ident, expr).map(([n, e]) => `param ${n} = ${e}`),
  fc.tuple(ident, expr).map(([n, e]) => `let ${n} = ${e}`),
  fc.tuple(ident, unit).map(([n, u]) => `state ${n} [${u}]`),
  fc.tuple(ident, unit).map(([n, u]) => `input ${n} [${u}]`),
  fc.tuple(ident, unit, fc.option(expr)).map(([n, u, e]) => `output ${n} [${u}]${e ? ` = ${e}` : ''}`),
  fc.tuple(ident, expr).map(([n, e]) => `${n}' = ${e}`),
  fc.tuple(ident, ident, expr).map(([o, i, e]) => `${o} / ${i} = ${e}`),
  fc.tuple(expr, expr).map(([a, b]) => `linear { A = [[${a}]], B = [[${b}]], C = [[1]], D = [[0]] }`),
  fc.tuple(ident, ident, expr).map(([o, i, e]) => `pid ${o} from ${i} { kp = ${e}, ki = 1, rolloff = 10 [rad/s] }`),
  fc.tuple(ident, expr, expr).map(([n, a, b]) => `limit ${n} within ${a} .. ${b}`),
  fc.tuple(ident, ident, expr).map(([p, n, e]) => `operating point ${p} { ${n} = ${e} }`),
  fc.tuple(expr, fc.constantFrom('tustin', 'hold', 'forward', 'zzz')).map(([e, m]) => `sample every ${e} by ${m}`),
);

const loopMember = fc.oneof(
  fc.tuple(ident, expr).map(([n, e]) => `signal ${n} = ${e}`),
  fc.tuple(expr, ident, ident).map(([e, a, b]) => `${e} -> ${a}.${b}`),
  fc.tuple(ident, ident, ident, expr).map(([n, s, p, e]) => `use ${n} = ${s}(${p} = ${e})`),
  fc.tuple(ident, ident).map(([a, b]) => `around ${a}.${b}`),
  fc.tuple(ident, ident, expr).map(([a, b, e]) => `start ${a}.${b} = ${e}`),
  fc.tuple(expr, fc.constantFrom('', ' { tolerance = 1e-6, method = stiff, points = 50 }', ' { method = bogus }')).map(([e, o]) => `simulate ${e}${o}`),
  fc.constant('compare linear'),
  fc.tuple(ident, ident, fc.array(expr, { minLength: 1, maxLength: 3 })).map(([a, b, vs]) => `sweep start ${a}.${b} over ${vs.join(', ')}`),
  fc.tuple(ident, ident, expr, expr).map(([a, b, lo, hi]) => `sweep ${a}.${b} over ${lo} .. ${hi} steps 3`),
  fc.array(fc.tuple(ident, ident).map(([a, b]) => `${a}.${b}`), { minLength: 1, maxLength: 3 }).map((xs) => `show ${xs.join(', ')}`),
  fc.tuple(expr, expr).map(([a, b]) => `expect ${a} < ${b}`),
  fc.constant('solve algebraic'),
);

const block = fc.oneof(
  fc.tuple(fc.constantFrom('plant', 'controller'), ident, fc.option(fc.string({ maxLength: 12 })), fc.array(systemMember, { maxLength: 8 })).map(
    ([k, n, d, ms]) => `${k} ${n}${d !== null ? ` "${d.replace(/["\\\n]/g, '')}"` : ''} {\n${ms.map((m) => '  ' + m).join('\n')}\n}`,
  ),
  fc.tuple(ident, fc.array(loopMember, { maxLength: 8 })).map(([n, ms]) => `loop ${n} {\n${ms.map((m) => '  ' + m).join('\n')}\n}`),
);

/** Documents from the grammar (mostly well-formed, often ill-typed). */
export const grammarDocument = fc.array(block, { minLength: 1, maxLength: 4 }).map((bs) => bs.join('\n\n'));

/** A mutation of a text: token/line deletion, duplication, swaps, random bytes, long lines, nesting. */
export function mutated(text: string): fc.Arbitrary<string> {
  const lines = text.split('\n');
  const tokens = text.split(/(\s+)/);
  const n = Math.max(1, lines.length);
  const m = Math.max(1, tokens.length);
  return fc.oneof(
    fc.nat(n - 1).map((i) => lines.filter((_, k) => k !== i).join('\n')),
    fc.nat(n - 1).map((i) => [...lines.slice(0, i + 1), lines[i], ...lines.slice(i + 1)].join('\n')),
    fc.tuple(fc.nat(n - 1), fc.nat(n - 1)).map(([i, j]) => {
      const c = lines.slice();
      [c[i], c[j]] = [c[j], c[i]];
      return c.join('\n');
    }),
    fc.nat(m - 1).map((i) => tokens.filter((_, k) => k !== i).join('')),
    fc.tuple(fc.nat(m - 1), fc.nat(m - 1)).map(([i, j]) => {
      const c = tokens.slice();
      [c[i], c[j]] = [c[j], c[i]];
      return c.join('');
    }),
    fc.tuple(fc.nat(m - 1), fc.nat(m - 1)).map(([i, j]) => [...tokens.slice(0, j), tokens[i], ...tokens.slice(j)].join('')),
    fc.tuple(fc.nat(text.length), fc.uint8Array({ minLength: 1, maxLength: 8 })).map(([at, bytes]) => text.slice(0, at) + String.fromCharCode(...bytes) + text.slice(at)),
    fc.tuple(fc.nat(text.length), fc.string({ unit: 'grapheme', maxLength: 6 })).map(([at, s]) => text.slice(0, at) + s + text.slice(at)),
    fc.nat(text.length).map((at) => text.slice(0, at)),
    fc.nat(n - 1).map((i) => lines.map((l, k) => (k === i ? l + ' + x'.repeat(3000) : l)).join('\n')),
    fc.tuple(fc.nat(text.length), fc.integer({ min: 50, max: 400 })).map(([at, d]) => text.slice(0, at) + '('.repeat(d) + '1' + ')'.repeat(d) + text.slice(at)),
    fc.tuple(fc.nat(text.length), fc.integer({ min: 50, max: 400 })).map(([at, d]) => text.slice(0, at) + '['.repeat(d) + text.slice(at)),
  );
}
