// Runs through the server (worker, progress, cancellation, time budget), bad input of every
// kind (malformed JSON-RPC, unknown methods, unknown or closed documents, positions out of
// range), and a storm of rapid edits after which the answers are still right.

import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WorkDoneProgress, type CompletionItem, type Hover, type MarkupContent } from 'vscode-languageserver-protocol';
import type { LoopRunReport } from '../../language/src/protocol';
import { buildOnce, ROOT, Server, SLOW_LOOP } from './harness';
import { freshUri, lensTitles, positionAt } from './features';

let server: Server;

beforeAll(async () => {
  buildOnce();
  ({ server } = await Server.start({ initializationOptions: { trusted: true } }));
});

afterAll(async () => {
  await server?.stop();
});

const BOOM = readFileSync(join(ROOT, 'samples', 'boom.loop'), 'utf8');

const SLOW = SLOW_LOOP;

async function alive(s: Server): Promise<void> {
  const uri = freshUri('alive');
  const d = await s.open(uri, 'plant P {\n  state x [m]\n  x\' = y\n}\n');
  expect(d.diagnostics.map((x) => x.code)).toEqual(['LW201']);
  s.close(uri);
  expect(s.exited).toBeNull();
}

describe('runs', () => {
  it('runs the boom loop in a worker and returns the report, with progress', async () => {
    const uri = freshUri('run');
    await server.open(uri, BOOM);
    const progress: string[] = [];
    server.conn.onProgress(WorkDoneProgress.type, 'tok-1', (v) => void progress.push(`${v.kind}:${'message' in v ? (v.message ?? '') : ''}`));
    const report = await server.request<LoopRunReport>('loopwright/run', { uri, loop: 'Upright', mode: 'simulate', workDoneToken: 'tok-1' });
    expect(report.loop).toBe('Upright');
    expect(report.runs[0].label).toBe('nonlinear');
    expect(report.runs[0].error).toBeUndefined();
    expect(report.runs[0].t.length).toBeGreaterThan(10);
    const tilt = report.runs[0].signals['Boom.tilt'];
    expect(tilt[0]).toBeCloseTo(0.5, 9);
    expect(Math.abs(tilt[tilt.length - 1])).toBeLessThan(0.01);
    expect(report.poles?.closed.length).toBe(3);
    expect(progress[0]).toMatch(/^begin/);
    expect(progress[progress.length - 1]).toMatch(/^end/);
    server.close(uri);
  });

  it('a sweep returns one run per value after the nonlinear run', async () => {
    const uri = freshUri('sweep');
    await server.open(uri, BOOM);
    const report = await server.request<LoopRunReport>('loopwright/run', { uri, loop: 'Upright', mode: 'sweep' });
    expect(report.runs.map((r) => r.kind)).toEqual(['nonlinear', 'sweep', 'sweep', 'sweep', 'sweep']);
    server.close(uri);
  });

  it('a loop that does not exist, a closed document, a file with errors: clear errors', async () => {
    const uri = freshUri('run-bad');
    await server.open(uri, BOOM);
    await expect(server.request('loopwright/run', { uri, loop: 'Nope', mode: 'simulate' })).rejects.toThrow(/no loop named 'Nope'/);
    await expect(server.request('loopwright/run', { uri: 'file:///never-opened.loop', loop: 'Upright', mode: 'simulate' })).rejects.toThrow(/not open/);
    server.close(uri);
    const bad = freshUri('run-err');
    await server.open(bad, BOOM.replace("tilt' = rate", "tilt' = rat"));
    await expect(server.request('loopwright/run', { uri: bad, loop: 'Upright', mode: 'simulate' })).rejects.toThrow(/error/);
    server.close(bad);
  });

  it('cancelling a long run terminates it and answers as cancelled; the server stays responsive', async () => {
    const uri = freshUri('cancel');
    await server.open(uri, SLOW);
    const { CancellationTokenSource } = await import('vscode-jsonrpc/node');
    const source = new CancellationTokenSource();
    const started = Date.now();
    const pending = server.conn.sendRequest('loopwright/run', { uri, loop: 'Long', mode: 'sweep' }, source.token);
    // While it runs, other requests are answered.
    const h = await server.request<Hover | null>('textDocument/hover', { textDocument: { uri }, position: { line: 2, character: 9 } });
    expect((h?.contents as MarkupContent).value).toContain('(state) **x**');
    setTimeout(() => source.cancel(), 300);
    await expect(pending).rejects.toMatchObject({ code: -32800 });
    expect(Date.now() - started).toBeLessThan(8000);
    server.close(uri);
    await alive(server);
  });

  it('a run over its time budget is stopped with a clear error', async () => {
    const { server: s } = await Server.start({ initializationOptions: { trusted: true, settings: { run: { timeBudgetMs: 500 } } } });
    try {
      const uri = freshUri('budget');
      await s.open(uri, SLOW);
      await expect(s.request('loopwright/run', { uri, loop: 'Long', mode: 'sweep' })).rejects.toThrow(/time budget of 500 ms/);
      await alive(s);
    } finally {
      await s.stop();
    }
  });
});

describe('transports', () => {
  it('the same server speaks over node IPC (--node-ipc), as the extension starts it', async () => {
    const { fork } = await import('node:child_process');
    const { createMessageConnection, IPCMessageReader, IPCMessageWriter } = await import('vscode-jsonrpc/node');
    const child = fork(join(ROOT, 'dist', 'server.js'), ['--node-ipc'], { silent: true });
    const conn = createMessageConnection(new IPCMessageReader(child), new IPCMessageWriter(child));
    conn.listen();
    try {
      const init = await conn.sendRequest<{ capabilities: { hoverProvider?: boolean } }>('initialize', { processId: process.pid, rootUri: null, capabilities: {} });
      expect(init.capabilities.hoverProvider).toBe(true);
      const got = new Promise<{ diagnostics: Array<{ code: string }> }>((resolve) => conn.onNotification('textDocument/publishDiagnostics', resolve));
      await conn.sendNotification('initialized', {});
      await conn.sendNotification('textDocument/didOpen', { textDocument: { uri: 'file:///ipc.loop', languageId: 'loop', version: 1, text: "plant P {\n  state x [m]\n  x' = y\n}\n" } });
      expect((await got).diagnostics.map((d) => d.code)).toEqual(['LW201']);
      await conn.sendRequest('shutdown');
    } finally {
      conn.dispose();
      child.kill();
    }
  });
});

describe('bad input', () => {
  it('malformed JSON-RPC does not stop the server', async () => {
    const { server: s } = await Server.start();
    try {
      const junk = '{"jsonrpc": "2.0", "id": 99, "method": ';
      s.writeRaw(`Content-Length: ${Buffer.byteLength(junk)}\r\n\r\n${junk}`);
      const notObject = '[1, 2, 3]';
      s.writeRaw(`Content-Length: ${Buffer.byteLength(notObject)}\r\n\r\n${notObject}`);
      await new Promise((r) => setTimeout(r, 300));
      expect(s.exited).toBeNull();
      await alive(s);
    } finally {
      await s.stop();
    }
  });

  it('unknown methods answer MethodNotFound; unknown notifications are ignored', async () => {
    await expect(server.request('loopwright/nonsense', {})).rejects.toMatchObject({ code: -32601 });
    await server.conn.sendNotification('loopwright/nonsense', { x: 1 });
    await alive(server);
  });

  it('requests on unknown and closed documents answer empty', async () => {
    const unknown = { textDocument: { uri: 'file:///nowhere.loop' }, position: { line: 0, character: 0 } };
    expect(await server.request('textDocument/hover', unknown)).toBeNull();
    expect(await server.request('textDocument/completion', unknown)).toEqual([]);
    expect(await server.request('textDocument/definition', unknown)).toBeNull();
    expect(await server.request('textDocument/references', { ...unknown, context: { includeDeclaration: true } })).toEqual([]);
    expect(await server.request('textDocument/codeLens', { textDocument: unknown.textDocument })).toEqual([]);
    expect(await server.request('textDocument/documentSymbol', { textDocument: unknown.textDocument })).toEqual([]);
    expect(await server.request('textDocument/semanticTokens/full', { textDocument: unknown.textDocument })).toEqual({ data: [] });
    expect(await server.request('textDocument/foldingRange', { textDocument: unknown.textDocument })).toEqual([]);
    expect(await server.request('textDocument/formatting', { textDocument: unknown.textDocument, options: { tabSize: 2, insertSpaces: true } })).toBeNull();
    const uri = freshUri('closed');
    await server.open(uri, BOOM);
    server.close(uri);
    expect(await server.request('textDocument/hover', { textDocument: { uri }, position: { line: 3, character: 10 } })).toBeNull();
    expect(await lensTitles(server, uri)).toEqual([]);
  });

  it('positions out of range and malformed params get sane answers', async () => {
    const uri = freshUri('range');
    await server.open(uri, BOOM);
    for (const position of [{ line: 9999, character: 0 }, { line: 3, character: 9999 }, { line: -5, character: -5 }]) {
      await server.request('textDocument/hover', { textDocument: { uri }, position });
      const items = await server.request<CompletionItem[]>('textDocument/completion', { textDocument: { uri }, position });
      expect(Array.isArray(items)).toBe(true);
      await server.request('textDocument/definition', { textDocument: { uri }, position });
    }
    // Params missing entirely: logged, answered empty.
    expect(await server.request('textDocument/hover', {})).toBeNull();
    expect(await server.request('textDocument/codeLens', {})).toEqual([]);
    await expect(server.request('textDocument/rename', { textDocument: { uri }, position: { line: 3, character: 9 }, newName: 42 })).rejects.toThrow(/new name/);
    // An edit with a range past the end is clamped by the document, not fatal.
    server.change(uri, [{ range: { start: { line: 500, character: 0 }, end: { line: 600, character: 3 } }, text: '\n# appended\n' }]);
    expect(await lensTitles(server, uri)).toEqual(['▶ Simulate', 'Compare linear', 'Sweep (4 runs)']);
    server.close(uri);
    await alive(server);
  });
});

describe('a storm of edits', () => {
  it('1,000 rapid edits, then every answer fits the final text', async () => {
    const uri = freshUri('storm');
    let text = BOOM;
    await server.open(uri, text);
    let version = 1;
    let seed = 7;
    const rand = (n: number) => {
      seed = (seed * 1103515245 + 12345) & 0x7fffffff;
      return seed % n;
    };
    const EDITS = 1000;
    for (let i = 0; i < EDITS; i++) {
      // Typing and deleting at random places: an inserted comment, or removal of one.
      const insert = rand(3) !== 0 || !text.includes('# z');
      if (insert) {
        const lines = text.split('\n');
        const line = rand(lines.length);
        const pos = { line, character: lines[line].length };
        const piece = rand(2) ? ' # z' : ' # zz';
        version = server.change(uri, [{ range: { start: pos, end: pos }, text: piece }]);
        const off = text.split('\n').slice(0, line).join('\n').length + (line ? 1 : 0) + lines[line].length;
        text = text.slice(0, off) + piece + text.slice(off);
      } else {
        const at = text.indexOf(' # z');
        const end = text[at + 4] === 'z' ? at + 5 : at + 4;
        version = server.change(uri, [{ range: { start: positionAt(text, at), end: positionAt(text, end) }, text: '' }]);
        text = text.slice(0, at) + text.slice(end);
      }
      // Now and then a request in the middle of the storm.
      if (i % 100 === 50) void server.request('textDocument/hover', { textDocument: { uri }, position: { line: rand(40), character: rand(20) } });
    }
    // The last diagnostics are for the final version, and the answers fit the final text.
    const d = await server.nextDiagnostics(uri, version);
    expect(d.diagnostics.filter((x) => x.severity === 1)).toEqual([]);
    let checked = 0;
    const at = text.indexOf("tilt' = rate");
    const h = await server.request<Hover>('textDocument/hover', { textDocument: { uri }, position: positionAt(text, at + 1) });
    expect((h.contents as MarkupContent).value).toContain('(state) **tilt**');
    checked++;
    const refs = await server.request<Array<{ range: { start: { line: number; character: number } } }>>('textDocument/references', { textDocument: { uri }, position: positionAt(text, at + 1), context: { includeDeclaration: true } });
    const expected = [...text.matchAll(/\btilt\b/g)].map((m) => positionAt(text, m.index!));
    expect(refs.map((r) => r.range.start)).toEqual(expected);
    checked++;
    expect(await lensTitles(server, uri)).toEqual(['▶ Simulate', 'Compare linear', 'Sweep (4 runs)']);
    checked++;
    console.log(`storm: ${EDITS} edits sent (final version ${version}), ${checked} answers checked against the final text`);
    server.close(uri);
  });
});
