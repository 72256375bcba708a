// Pins everything the front end reports for a fixed corpus: the AST (shape and spans), every
// diagnostic (code, range, message), name resolution and unit results. The corpus is the
// samples, a generated document (corpus/generated-300.loop), grammar-built documents and mutations of the samples (fixed
// fast-check seeds). Any change to what analyze() returns shows up as a snapshot difference.
// The samples are read from copies in corpus/ so that edits to samples/ do not move the pins.
import fc from 'fast-check';
import { createHash } from 'node:crypto';
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyze } from '../../language/src/analysis';
import { targetKey } from '../../language/src/check/symbols';
import type { Expr } from '../../language/src/syntax/ast';
import { grammarDocument, mutated } from '../fuzz/generators';

function sampleTexts(): Array<{ name: string; text: string }> {
  const dir = join(__dirname, 'corpus');
  return readdirSync(dir)
    .filter((f) => f.endsWith('.loop'))
    .map((f) => ({ name: f, text: readFileSync(join(dir, f), 'utf8') }));
}

function corpus(): Array<{ name: string; text: string }> {
  const out = sampleTexts().sort((a, b) => (a.name < b.name ? -1 : 1));
  fc.sample(grammarDocument, { seed: 4242, numRuns: 60 }).forEach((text, i) => out.push({ name: `grammar-${i}`, text }));
  const samples = sampleTexts().sort((a, b) => (a.name < b.name ? -1 : 1));
  samples.forEach((s, k) => {
    fc.sample(mutated(s.text), { seed: 97 + k, numRuns: 12 }).forEach((text, i) => out.push({ name: `${s.name}~${i}`, text }));
  });
  return out;
}

const sp = (s: { start: number; end: number }) => `${s.start}-${s.end}`;

function digest(text: string): { diagnostics: string[]; ast: string; names: string; units: string } {
  const a = analyze(text);
  const diagnostics = a.diagnostics.map((d) => `${d.code} ${d.severity ?? ''} ${sp(d.span)} ${d.message}`);
  const hash = (s: string) => createHash('sha256').update(s).digest('hex').slice(0, 16);
  const refs = a.symbols.refs.map((r) => `${sp(r.span)} ${r.name} ${targetKey(r.target)}${r.decl ? ' decl' : ''}`);
  const resolved = [...a.symbols.resolved].map(([e, t]) => `${e.kind} ${sp(e.span)} ${targetKey(t)}`);
  const units = a.units
    ? [
        ...[...a.units.dims].map(([e, d]: [Expr, readonly number[]]) => `dim ${e.kind} ${sp(e.span)} ${d.join(',')}`),
        ...[...a.units.quantities].map(([q, v]) => `q ${sp(q.span)} ${v.si} ${v.unit.text}`),
        ...[...a.units.inferred].map(([d, v]) => `inf ${sp((d as { span: { start: number; end: number } }).span)} ${v.text} ${v.dim.join(',')}`),
        ...[...a.units.declared].map(([d, u]) => `decl ${sp((d as { span: { start: number; end: number } }).span)} ${u.text} ${u.scale} ${u.offset} ${u.dim.join(',')} ${u.flavour}`),
      ]
    : [];
  return { diagnostics, ast: hash(JSON.stringify(a.ast)), names: hash(JSON.stringify([refs, resolved, [...a.symbols.systems.keys()], [...a.symbols.loops.keys()]])), units: hash(JSON.stringify(units)) };
}

describe('front end results are pinned', () => {
  it('matches the snapshot on every document of the corpus', async () => {
    const all: Record<string, ReturnType<typeof digest>> = {};
    for (const { name, text } of corpus()) all[name] = digest(text);
    await expect(JSON.stringify(all, null, 1) + '\n').toMatchFileSnapshot('./__snapshots__/frontend-results.json');
  });
});
