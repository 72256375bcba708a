// The formatter: canonical layout, idempotence, comments kept, and refusal instead of damage.

import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { format } from '../../language/src/format/format';
import { lexLoop } from '../../language/src/syntax/tokens';

const ROOT = join(__dirname, '..', '..');

function samples(dir = join(ROOT, 'samples')): string[] {
  const out: string[] = [];
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    if (e.isDirectory()) out.push(...samples(join(dir, e.name)));
    else if (e.name.endsWith('.loop')) out.push(join(dir, e.name));
  }
  return out;
}

/** Every token and comment, in order: what formatting must keep. */
function content(text: string): string[] {
  const r = lexLoop(text);
  return [...r.tokens, ...((r.groups.comments ?? []) as typeof r.tokens)].sort((a, b) => a.startOffset - b.startOffset).map((t) => t.image);
}

function fmt(src: string): string {
  const r = format(src);
  if (!r.ok) throw new Error(`refused: ${r.reason}`);
  return r.text;
}

describe('canonical layout', () => {
  it('indents, spaces operators and keeps one member per line', () => {
    const src = 'plant P "a plant" {\nparam  k=2[N/m]\n    state x [m]   # where\n  state v [m/s]\nx\'=v\n v\'=-k/(1[kg])*x+0*v^2\n}\n';
    expect(fmt(src)).toBe('plant P "a plant" {\n  param k = 2 [N/m]\n  state x [m]  # where\n  state v [m/s]\n  x\' = v\n  v\' = -k / (1 [kg]) * x + 0 * v^2\n}\n');
  });

  it('one blank line between blocks, none after { or before }, at most one between members', () => {
    const src = 'plant P {\n\n\n  state x [m]\n\n\n\n  x\' = 0 [m/s]\n\n}\nloop L {\n  simulate 1 [s]\n}';
    expect(fmt(src)).toBe('plant P {\n  state x [m]\n\n  x\' = 0 [m/s]\n}\n\nloop L {\n  simulate 1 [s]\n}\n');
  });

  it('brace groups on one line stay inline; groups over several lines get one entry per line', () => {
    const src = 'plant P {\n  state x [m]\n  input u [m]\n  x\' = u / (1 [s])\n  operating point a {x=0 [m],u=0 [m]}\n  operating point b { x = 1 [m],\n u = 0 [m] }\n}\n';
    expect(fmt(src)).toBe('plant P {\n  state x [m]\n  input u [m]\n  x\' = u / (1 [s])\n  operating point a { x = 0 [m], u = 0 [m] }\n  operating point b {\n    x = 1 [m],\n    u = 0 [m]\n  }\n}\n');
  });

  it('arrows, dotted names, ranges, calls and unary signs', () => {
    const src = 'loop L {\n  signal r=step(1[s],  0.5[rad])\n  r-Boom.seen->Ctl.err\n  sweep Boom.arm over 0.5 [m]..1 [m] steps 3\n  simulate 5[s]{tolerance=1e-8,method=stiff}\n}\n';
    expect(fmt(src)).toBe('loop L {\n  signal r = step(1 [s], 0.5 [rad])\n  r - Boom.seen -> Ctl.err\n  sweep Boom.arm over 0.5 [m] .. 1 [m] steps 3\n  simulate 5 [s] { tolerance = 1e-8, method = stiff }\n}\n');
  });

  it('a continued line stays continued, indented one more level', () => {
    const src = "plant P {\n  state x [m]\n  x' = 1 [m/s] +\n2 [m/s]\n}\n";
    expect(fmt(src)).toBe("plant P {\n  state x [m]\n  x' = 1 [m/s] +\n    2 [m/s]\n}\n");
  });

  it('whole-line comments at the indent of what follows; a header comment stays on top', () => {
    const src = '# header\n\n   # about P\nplant P {\n      # the state\n  state x [m]\n  x\' = 0 [m/s]\n# last words\n}\n';
    expect(fmt(src)).toBe('# header\n\n# about P\nplant P {\n  # the state\n  state x [m]\n  x\' = 0 [m/s]\n  # last words\n}\n');
  });

  it('keeps CRLF line breaks', () => {
    const src = 'plant P {\r\n  state x [m]\r\n  x\' = 0 [m/s]\r\n}\r\n';
    expect(fmt(src.replace('  state', 'state'))).toBe(src);
  });
});

describe('safety', () => {
  it('refuses files with syntax errors', () => {
    for (const bad of ['plant P {\n  param k = (1 +\n}\n', 'plant P {\n  state x [m\n}\n', 'plant "unterminated {\n}\n', 'loop L {']) {
      const r = format(bad);
      expect(r.ok).toBe(false);
      if (!r.ok) expect(r.reason).toMatch(/syntax errors/);
    }
  });

  it('every sample: same tokens and comments, idempotent', () => {
    const files = samples();
    expect(files.length).toBeGreaterThan(0);
    let formatted = 0;
    for (const f of files) {
      const text = readFileSync(f, 'utf8');
      const r = format(text);
      if (!r.ok) {
        expect(r.reason).toMatch(/syntax errors/);
        continue;
      }
      formatted++;
      expect(content(r.text)).toEqual(content(text));
      expect(fmt(r.text)).toBe(r.text);
    }
    expect(formatted).toBeGreaterThan(0);
  });

  it('whitespace mutations of the boom sample all format to the same text', () => {
    const boom = readFileSync(join(ROOT, 'samples', 'boom.loop'), 'utf8');
    const canonical = fmt(boom);
    let seed = 11;
    const rand = (n: number) => {
      seed = (seed * 1103515245 + 12345) & 0x7fffffff;
      return seed % n;
    };
    for (let k = 0; k < 40; k++) {
      // Re-space every gap between tokens on a line (never adding or removing a line break
      // outside a member, which the grammar reads).
      const mutated = boom
        .split('\n')
        .map((line) => {
          // Only the code: strings and the comment keep their own spaces.
          const hash = line.indexOf('#');
          const code = hash < 0 ? line : line.slice(0, hash);
          const rest = hash < 0 ? '' : line.slice(hash);
          const spaced = code.split(/("[^"]*")/).map((part, i) => (i % 2 ? part : part.replace(/ +/g, () => ' '.repeat(1 + rand(3))))).join('');
          return ' '.repeat(rand(6)) + spaced.trimStart() + rest;
        })
        .join('\n');
      expect(fmt(mutated)).toBe(canonical);
    }
  });
});
