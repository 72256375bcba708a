// The parse lexes and parses a document in pieces cut at block starts (syntax/parse.ts
// blockStarts), so that a large document's tokens die young. Where the pieces are cut must not
// matter: a document parsed with a piece per block and parsed whole gives the same tree and the
// same diagnostics, on the samples, on documents built from the grammar and on mutations of the
// samples (deleted, duplicated and swapped tokens and lines, random bytes, deep nesting).
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { DiagnosticSink } from '../../language/src/diagnostics';
import { blockStarts, parse } from '../../language/src/syntax/parse';
import { grammarDocument, mutated, sampleTexts } from '../fuzz/generators';

function parsed(text: string, pieceChars: number) {
  const sink = new DiagnosticSink();
  const r = parse(text, sink, pieceChars);
  const diagnostics = sink.items.map((d) => `${d.span.start}-${d.span.end} ${d.code} ${d.message}`).sort();
  return { ast: JSON.stringify(r.ast), diagnostics, comments: r.comments.map((c) => `${c.startOffset} ${c.image}`), tokens: r.tokens.map((t) => `${t.startOffset} ${t.tokenType.name} ${t.image}`) };
}

function expectSameInPieces(text: string): void {
  const whole = parsed(text, Infinity);
  const pieces = parsed(text, 0);
  expect(pieces.ast).toBe(whole.ast);
  expect(pieces.diagnostics).toEqual(whole.diagnostics);
  expect(pieces.comments).toEqual(whole.comments);
  expect(pieces.tokens).toEqual(whole.tokens);
}

describe('parsing in pieces', () => {
  it('cuts only between blocks: a block keyword starting a line right after the closing brace of the block before', () => {
    const text = [
      'plant A {', //                                      line 0
      '  let x = "loop { in a string" # and { here', //     braces in strings and comments do not count
      '  let y = (1 +',
      '}',
      '# a comment between blocks',
      'controller B {', //                                  line 5: a cut (after '}' and a comment)
      '  input e',
      '  loop X {', //                                      nested and indented: not a cut
      '}',
      '}',
      'loopy = 1', //                                       not the word 'loop', and the block before is not closed by it
      'loop C {', //                                        line 11: no cut, the line before does not end a block
      '}',
      'loop D {', //                                        line 13: a cut
      '  param k = 2 [N}m]', //                             a brace inside brackets: no cut from here on
      '}',
      'loop E {',
      '}',
    ].join('\n');
    const at = (line: number) => text.split('\n').slice(0, line).join('\n').length + 1;
    expect(blockStarts(text, 0)).toEqual([0, at(5), at(13)]);
    // pieces hold at least minChars characters
    expect(blockStarts(text, at(5) + 1)).toEqual([0, at(13)]);
    expect(blockStarts(text, Infinity)).toEqual([0]);
    // braces that never close keep the rest of the text in one piece
    expect(blockStarts('plant A {\n  param k = 1\nplant B {\n}\nloop C {\n}\n', 0)).toEqual([0]);
    // a ( or [ left open is closed only by a brace
    expect(blockStarts('plant A {\n}\n(\nloop C {\n}\n', 0)).toEqual([0]);
  });

  it('the samples parse the same in pieces as whole', () => {
    for (const s of sampleTexts()) expectSameInPieces(s.text);
  });

  it('documents built from the grammar, and several of them joined, parse the same in pieces', () => {
    fc.assert(fc.property(fc.array(grammarDocument, { minLength: 1, maxLength: 3 }), (docs) => expectSameInPieces(docs.join('\n\n'))), { seed: 20261202, numRuns: 150 });
  });

  it('mutated samples (broken blocks, stray braces, random bytes) parse the same in pieces', () => {
    const samples = sampleTexts();
    for (const [k, s] of samples.entries()) {
      fc.assert(fc.property(mutated(s.text), (text) => expectSameInPieces(text)), { seed: 7100 + k, numRuns: 25 });
    }
  }, 120_000);
});
