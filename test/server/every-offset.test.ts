// Hover and completion at every offset of every sample, over stdio: the server answers each
// request (null, a hover, or a list), never an internal error, and is alive afterwards.
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CompletionItem, CompletionList, Hover } from 'vscode-languageserver-protocol';
import { analyze } from '../../language/src/analysis';
import { buildOnce, ROOT, Server } from './harness';
import { freshUri, positionAt } from './features';

let server: Server;

beforeAll(async () => {
  buildOnce();
  ({ server } = await Server.start({ initializationOptions: { trusted: true } }));
});

afterAll(async () => {
  await server?.stop();
});

function samples(dir = join(ROOT, 'samples')): string[] {
  return readdirSync(dir).flatMap((f) => {
    const p = join(dir, f);
    return statSync(p).isDirectory() ? samples(p) : f.endsWith('.loop') ? [p] : [];
  });
}

describe('every offset of every sample', () => {
  for (const file of samples()) {
    it(`hover and completion everywhere in ${file.slice(ROOT.length + 1)}`, async () => {
      const text = readFileSync(file, 'utf8');
      const uri = freshUri('offsets');
      await server.open(uri, text);
      // offsets inside a declared name must get a hover (the name's kind, unit, description)
      const named = new Set<number>();
      for (const r of analyze(text).symbols.refs) if (r.decl) for (let o = r.span.start; o < r.span.end; o++) named.add(o);
      const unanswered: number[] = [];
      let completions = 0;
      for (let off = 0; off <= text.length; off++) {
        const position = positionAt(text, off);
        const [h, c] = await Promise.all([
          server.request<Hover | null>('textDocument/hover', { textDocument: { uri }, position }),
          server.request<CompletionItem[] | CompletionList | null>('textDocument/completion', { textDocument: { uri }, position }),
        ]);
        if (h !== null) expect(h.contents).toBeDefined();
        else if (named.has(off)) unanswered.push(off);
        const items = Array.isArray(c) ? c : c?.items ?? [];
        for (const item of items) expect(typeof item.label).toBe('string');
        if (items.length) completions++;
      }
      expect(named.size).toBeGreaterThan(0);
      expect(unanswered).toEqual([]);
      expect(completions).toBeGreaterThan(0);
      server.close(uri);
    }, 240_000);
  }
});
