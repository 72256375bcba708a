// The snippets insert skeletons that the checker accepts as they come (every placeholder at its
// default), alone and put together: plant + controller + loop, and the PID controller.
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { analyze } from '../../language/src/analysis';

const root = join(fileURLToPath(new URL('.', import.meta.url)), '..', '..');
const snippets = JSON.parse(readFileSync(join(root, 'snippets', 'loop.json'), 'utf8')) as Record<string, { prefix: string; body: string[] }>;

/** The text a snippet inserts when every placeholder keeps its default. */
export function expand(body: string[]): string {
  let text = body.join('\n').replace(/\t/g, '  ');
  // Innermost placeholders first, so that defaults holding other placeholders expand too.
  for (let prev = ''; prev !== text; ) {
    prev = text;
    text = text.replace(/\$\{\d+:([^${}]*)\}/g, '$1');
  }
  return text.replace(/\$\{?\d+\}?/g, '');
}

function problems(text: string): string[] {
  return analyze(text).diagnostics.filter((d) => d.severity !== 'info').map((d) => `${d.code} ${d.message} @${JSON.stringify(text.slice(d.span.start, d.span.end))}`);
}

const byPrefix = (p: string) => {
  const s = Object.values(snippets).find((x) => x.prefix === p);
  if (!s) throw new Error(`no snippet with prefix ${p}`);
  return expand(s.body);
};

describe('snippets', () => {
  it('has the four skeletons', () => {
    expect(Object.values(snippets).map((s) => s.prefix).sort()).toEqual(['controller', 'loop', 'pid', 'plant']);
  });

  it('plant + controller + loop make a file without errors or warnings', () => {
    const text = [byPrefix('plant'), byPrefix('controller'), byPrefix('loop')].join('\n');
    expect(problems(text)).toEqual([]);
  });

  it('the pid controller checks clean', () => {
    expect(problems(byPrefix('pid'))).toEqual([]);
  });

  it('the plant alone checks clean, and its operating point is an equilibrium', () => {
    expect(problems(byPrefix('plant'))).toEqual([]);
  });

  it('the check would notice a skeleton with a unit error', () => {
    const broken = byPrefix('plant').replace(/input (\w+) \[m\/s\]/, 'input $1 [m]');
    expect(broken).not.toBe(byPrefix('plant'));
    expect(problems(broken).length).toBeGreaterThan(0);
  });

  it('expansion leaves no placeholder syntax behind', () => {
    for (const s of Object.values(snippets)) expect(expand(s.body)).not.toMatch(/\$/);
  });
});
