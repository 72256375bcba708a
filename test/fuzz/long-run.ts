// `npm run fuzz`: the fuzz property over 100,000 cases (grammar documents and mutations of every
// sample, in equal shares), printing cases run, failures and the slowest case.

import fc from 'fast-check';
import { grammarDocument, mutated, sampleTexts } from './generators';
import { checkDocument } from './property';

const total = Number(process.env.FUZZ_CASES ?? 100_000);
const seed = Number(process.env.FUZZ_SEED ?? Date.now() % 1_000_000);
const samples = sampleTexts();
const sources: Array<{ name: string; arb: fc.Arbitrary<string> }> = [{ name: 'grammar', arb: grammarDocument }, ...samples.map((s) => ({ name: s.name, arb: mutated(s.text) }))];
const perSource = Math.ceil(total / sources.length);

let cases = 0;
let failures = 0;
let slowest = { ms: 0, source: '', text: '' };
const t0 = Date.now();
for (const [k, src] of sources.entries()) {
  for (const text of fc.sample(src.arb, { numRuns: perSource, seed: seed + k })) {
    if (cases >= total) break;
    const r = checkDocument(text);
    cases++;
    if (r.ms > slowest.ms) slowest = { ms: r.ms, source: src.name, text };
    if (r.problem) {
      failures++;
      if (failures <= 5) console.log(`FAIL (${src.name}): ${r.problem}\n--- case ---\n${text.slice(0, 2000)}\n---`);
    }
  }
}
console.log(`fuzz: ${cases} cases, ${failures} failures, slowest case ${slowest.ms.toFixed(1)} ms (${slowest.source}), seed ${seed}, ${((Date.now() - t0) / 1000).toFixed(1)} s`);
process.exitCode = failures ? 1 : 0;
