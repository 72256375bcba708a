// Short fuzz budget for every `npm test`; `npm run fuzz` runs the same property 100,000 times.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { grammarDocument, mutated, sampleTexts } from './generators';
import { checkDocument } from './property';

describe('fuzzing analyze()', () => {
  it('documents generated from the grammar never break the analysis', () => {
    fc.assert(
      fc.property(grammarDocument, (text) => {
        const r = checkDocument(text);
        expect(r.problem).toBeUndefined();
      }),
      { numRuns: 150, seed: 42 },
    );
  });

  for (const s of sampleTexts()) {
    it(`mutations of ${s.name} never break the analysis`, () => {
      fc.assert(
        fc.property(mutated(s.text), (text) => {
          const r = checkDocument(text);
          expect(r.problem).toBeUndefined();
        }),
        { numRuns: 25, seed: 7 },
      );
    });
  }
});
