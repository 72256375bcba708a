// Language server latencies over stdio, as an editor sees them, on generated documents of 1k,
// 5k and 20k lines: first diagnostics after open, diagnostics after an edit (includes the
// 100 ms debounce), hover p50/p95 right after the edit and once idle (same version, cached
// analysis), code lenses and semantic tokens (first and repeated request).
// Plain node script: `node scripts/build.mjs && node test/bench/server.bench.mjs [lines...]`.
import { spawn } from 'node:child_process';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { createRequire } from 'node:module';
import { generateDocument } from './generate.mjs';
import { loadTs, projectRoot } from './load.mjs';

const require = createRequire(import.meta.url);
const { SERVER_NODE_FLAGS } = await loadTs('language/src/protocol.ts');
const { createMessageConnection, StreamMessageReader, StreamMessageWriter } = require('vscode-jsonrpc/node');

const server = join(projectRoot, 'dist', 'server.js');
if (!existsSync(server)) {
  console.log('dist/server.js is missing: run node scripts/build.mjs first');
  process.exit(1);
}

const sizes = process.argv.slice(2).map(Number).filter((n) => n > 0);
const SIZES = sizes.length ? sizes : [1000, 5000, 20000];
const HOVERS = 200;

const now = () => performance.now();
const pct = (xs, p) => {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.floor((p / 100) * s.length))];
};
const ms = (x) => (x >= 100 ? x.toFixed(0) : x.toFixed(1));

function start() {
  // started as the extension starts it (with the server's node flags)
  const proc = spawn(process.execPath, [...SERVER_NODE_FLAGS, server, '--stdio'], { cwd: projectRoot });
  const conn = createMessageConnection(new StreamMessageReader(proc.stdout), new StreamMessageWriter(proc.stdin));
  const waiters = [];
  conn.onNotification('textDocument/publishDiagnostics', (p) => {
    for (let i = waiters.length - 1; i >= 0; i--) if (waiters[i].uri === p.uri && waiters[i].version === p.version) waiters.splice(i, 1)[0].resolve(p);
  });
  conn.onRequest('workspace/configuration', (p) => p.items.map(() => null));
  conn.listen();
  const diagnostics = (uri, version) => new Promise((resolve) => waiters.push({ uri, version, resolve }));
  return { proc, conn, diagnostics };
}

async function measure(lines) {
  const s = start();
  await s.conn.sendRequest('initialize', { processId: process.pid, rootUri: null, capabilities: {}, initializationOptions: { trusted: true } });
  await s.conn.sendNotification('initialized', {});
  // Warm the process (module loading, first analysis) on a small document first.
  const warm = 'file:///bench/warm.loop';
  const w = s.diagnostics(warm, 1);
  await s.conn.sendNotification('textDocument/didOpen', { textDocument: { uri: warm, languageId: 'loop', version: 1, text: generateDocument(60) } });
  await w;

  const text = generateDocument(lines);
  const docLines = text.split('\n');
  const uri = `file:///bench/doc-${lines}.loop`;
  let t = now();
  const first = s.diagnostics(uri, 1);
  await s.conn.sendNotification('textDocument/didOpen', { textDocument: { uri, languageId: 'loop', version: 1, text } });
  const d1 = await first;
  const open = now() - t;

  // An edit in the middle: change one param value.
  const line = docLines.findIndex((l, i) => i > docLines.length / 2 && l.includes('param mass ='));
  const col = docLines[line].indexOf('=') + 2;
  t = now();
  const second = s.diagnostics(uri, 2);
  await s.conn.sendNotification('textDocument/didChange', { textDocument: { uri, version: 2 }, contentChanges: [{ range: { start: { line, character: col }, end: { line, character: col + 1 } }, text: '3' }] });
  await second;
  const edit = now() - t;

  // Hovers on names spread over the document (the analysis of version 2 is cached).
  const targets = [];
  for (let i = 0; i < docLines.length && targets.length < HOVERS; i += Math.max(1, Math.floor(docLines.length / HOVERS))) {
    const m = /[A-Za-z_]\w*'/.exec(docLines[i]) ?? /(?:state|param|input|output) (\w+)/.exec(docLines[i]);
    if (m) targets.push({ line: i, character: m.index + 6 });
  }
  const hovers = [];
  let answered = 0;
  for (const position of targets) {
    t = now();
    const h = await s.conn.sendRequest('textDocument/hover', { textDocument: { uri }, position });
    hovers.push(now() - t);
    if (h) answered++;
  }

  // Warm and idle: once the later-phase checks (loops compiled one by one) have finished, which
  // shows as three quick answers in a row.
  let quick = 0;
  const idleBy = now() + 120_000;
  while (quick < 3 && now() < idleBy) {
    t = now();
    await s.conn.sendRequest('textDocument/hover', { textDocument: { uri }, position: targets[0] });
    quick = now() - t < 5 ? quick + 1 : 0;
    await new Promise((r) => setTimeout(r, 100));
  }
  const idle = [];
  for (const position of targets) {
    t = now();
    await s.conn.sendRequest('textDocument/hover', { textDocument: { uri }, position });
    idle.push(now() - t);
  }

  t = now();
  const lenses = await s.conn.sendRequest('textDocument/codeLens', { textDocument: { uri } });
  const lens = now() - t;
  t = now();
  const tokens = await s.conn.sendRequest('textDocument/semanticTokens/full', { textDocument: { uri } });
  const sem = now() - t;
  t = now();
  await s.conn.sendRequest('textDocument/semanticTokens/full', { textDocument: { uri } });
  const semWarm = now() - t;

  await s.conn.sendRequest('shutdown');
  await s.conn.sendNotification('exit');
  s.conn.dispose();
  s.proc.kill();
  return {
    lines: docLines.length - 1,
    open,
    edit,
    p50: pct(hovers, 50),
    p95: pct(hovers, 95),
    i50: pct(idle, 50),
    i95: pct(idle, 95),
    lens,
    sem,
    semWarm,
    notes: `${d1.diagnostics.length} diag, ${answered}/${hovers.length} hovers, ${lenses.length} lenses, ${tokens.data.length / 5} tokens`,
  };
}

// Runs through the server (`loopwright/run`, the boom loop of samples/, simulate mode): the
// first run after the document opens (at once, and after a pause of `pauseMs` as when the user
// reads the file before running it), then repeated runs, as live tuning re-runs on every pause
// in typing. The run workers are kept warm between runs (server/src/runs.ts, RunWorkers); the
// one started when the document opens first runs a small loop of its own (worker.ts).
async function runLatency(pauseMs, repeats = 15) {
  const { readFileSync } = await import('node:fs');
  const s = start();
  await s.conn.sendRequest('initialize', { processId: process.pid, rootUri: null, capabilities: {}, initializationOptions: { trusted: true } });
  await s.conn.sendNotification('initialized', {});
  const uri = 'file:///bench/boom.loop';
  const opened = s.diagnostics(uri, 1);
  await s.conn.sendNotification('textDocument/didOpen', { textDocument: { uri, languageId: 'loop', version: 1, text: readFileSync(join(projectRoot, 'samples', 'boom.loop'), 'utf8') } });
  await opened;
  await new Promise((r) => setTimeout(r, pauseMs));
  const once = async (mode) => {
    const t = now();
    const r = await s.conn.sendRequest('loopwright/run', { uri, loop: 'Upright', mode });
    if (!r?.runs?.length) throw new Error('the run gave no runs');
    return now() - t;
  };
  const first = await once('simulate');
  const again = [];
  for (let i = 0; i < repeats; i++) again.push(await once('simulate'));
  const sweeps = [];
  for (let i = 0; i < 5; i++) sweeps.push(await once('sweep'));
  await s.conn.sendRequest('shutdown');
  await s.conn.sendNotification('exit');
  s.conn.dispose();
  s.proc.kill();
  return { first, p50: pct(again, 50), p95: pct(again, 95), sweep: pct(sweeps, 50) };
}

const rows = [];
for (const n of SIZES) rows.push(await measure(n));
const runs = await runLatency(0);
const paused = await runLatency(1500);

const header = ['lines', 'open→diag ms', 'edit→diag ms', 'hover p50 ms', 'hover p95 ms', 'idle hover p50 ms', 'idle hover p95 ms', 'lens ms', 'sem.tokens ms', 'sem.tokens again ms', 'notes'];
const body = rows.map((r) => [String(r.lines), ms(r.open), ms(r.edit), ms(r.p50), ms(r.p95), ms(r.i50), ms(r.i95), ms(r.lens), ms(r.sem), ms(r.semWarm), r.notes]);
const widths = header.map((h, i) => Math.max(h.length, ...body.map((b) => b[i].length)));
const line = (cells) => cells.map((c, i) => (i === cells.length - 1 ? c : c.padStart(widths[i]))).join('  ');
console.log('Language server over stdio. edit→diag includes the 100 ms debounce; "hover" right after the edit (model checks of');
console.log('the loops still running between requests), "idle hover" once they are done. Lens and tokens on the idle server.');
console.log(line(header));
for (const b of body) console.log(line(b));
console.log('');
console.log(`Runs through the server (boom loop, loopwright/run): first at once after open ${ms(runs.first)} ms, first 1.5 s after open ${ms(paused.first)} ms; again p50 ${ms(runs.p50)} ms, p95 ${ms(runs.p95)} ms; sweep of 5 runs p50 ${ms(runs.sweep)} ms`);
