// The language server over stdio: every feature through the protocol, on the samples and on
// small marked sources.

import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CodeAction, FoldingRange, InitializeResult } from 'vscode-languageserver-protocol';
import { buildOnce, ROOT, Server } from './harness';
import {
  applyEdits,
  completionLabels,
  definitionSpan,
  formatted,
  freshUri,
  hoverText,
  inlayLabels,
  lensTitles,
  lenses,
  mark,
  openMarked,
  positionAt,
  rangeOf,
  rangeText,
  referenceSpans,
  renamed,
  semanticTokensOf,
  symbolsOf,
} from './features';

let server: Server;
let init: InitializeResult;

beforeAll(async () => {
  buildOnce();
  ({ server, init } = await Server.start({ initializationOptions: { trusted: true, settings: { run: { timeBudgetMs: 10000 } } } }));
});

afterAll(async () => {
  await server?.stop();
});

const BOOM = readFileSync(join(ROOT, 'samples', 'boom.loop'), 'utf8');

function samplesIn(dir: string): string[] {
  const out: string[] = [];
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    if (e.isDirectory()) out.push(...samplesIn(join(dir, e.name)));
    else if (e.name.endsWith('.loop')) out.push(join(dir, e.name));
  }
  return out;
}

describe('initialize', () => {
  it('declares the features and the semantic token legend', () => {
    const c = init.capabilities;
    expect(c.hoverProvider).toBe(true);
    expect(c.codeLensProvider).toBeTruthy();
    expect(c.completionProvider?.triggerCharacters).toContain('.');
    expect(c.renameProvider).toEqual({ prepareProvider: true });
    expect(c.semanticTokensProvider?.legend.tokenTypes).toContain('keyword');
    expect(c.semanticTokensProvider?.legend.tokenTypes).toContain('type');
    expect(c.textDocumentSync).toMatchObject({ change: 2 });
  });
});

describe('diagnostics', () => {
  it('every sample opens and gets diagnostics for its version', async () => {
    const files = samplesIn(join(ROOT, 'samples'));
    expect(files.length).toBeGreaterThan(0);
    for (const f of files) {
      const uri = `file://${f}`;
      const d = await server.open(uri, readFileSync(f, 'utf8'));
      expect(d.version).toBe(1);
      for (const x of d.diagnostics) {
        expect(x.source).toBe('loopwright');
        expect(String(x.code)).toMatch(/^LW\d{3}$/);
      }
      server.close(uri);
    }
  });

  it('the boom sample has no errors', async () => {
    const uri = freshUri('boom');
    const d = await server.open(uri, BOOM);
    expect(d.diagnostics.filter((x) => x.severity === 1)).toEqual([]);
    server.close(uri);
  });

  /** Diagnostics of a marked source; with `code`, waits for the message that has it (later layers push second). */
  async function diagnosticsOf(src: string, code?: string) {
    const m = mark(src);
    const uri = freshUri('diag');
    const first = await server.open(uri, m.text);
    const diagnostics = code ? await server.diagnosticsWhere(uri, (d) => d.some((x) => x.code === code)) : first.diagnostics;
    server.close(uri);
    return { m, list: diagnostics.map((x) => ({ code: x.code, text: rangeText(m.text, x.range), range: x.range, message: x.message, related: x.relatedInformation })) };
  }

  it('an undefined name: LW201 exactly on the name', async () => {
    const { m, list } = await diagnosticsOf('plant P {\n  state x [m]\n  x\' = «y»\n}\n');
    expect(list.map((d) => d.code)).toEqual(['LW201']);
    expect(list[0].range).toEqual(rangeOf(m.text, m.ranges[0]));
  });

  it('states without equations: LW204 on each state name', async () => {
    const { m, list } = await diagnosticsOf('plant P {\n  state «x» [m]\n  state «v» [m/s]\n}\n');
    expect(list.map((d) => d.code)).toEqual(['LW204', 'LW204']);
    expect(list.map((d) => d.range)).toEqual(m.ranges.map((r) => rangeOf(m.text, r)));
  });

  it('a unit mismatch: LW303 on the expression', async () => {
    const { m, list } = await diagnosticsOf("plant P {\n  param k = 2 [N/m]\n  state x [m]\n  x' = «k»\n}\n");
    expect(list.map((d) => d.code)).toEqual(['LW303']);
    expect(list[0].range).toEqual(rangeOf(m.text, m.ranges[0]));
  });

  it('a syntax error is reported with code LW101 and a range inside the text', async () => {
    const { m, list } = await diagnosticsOf('plant P {\n  param = 3\n}\n');
    expect(list.length).toBeGreaterThan(0);
    expect(list[0].code).toBe('LW101');
    expect(list[0].range.start.line).toBe(1);
    expect(list[0].range.end.line).toBeLessThanOrEqual(positionAt(m.text, m.text.length).line);
  });

  it('ranges count UTF-16 code units (names with non-ASCII letters)', async () => {
    const { m, list } = await diagnosticsOf('plant P {\n  state θ [rad]\n  θ\' = «ω»\n}\n');
    expect(list.map((d) => d.code)).toEqual(['LW201']);
    expect(list[0].range).toEqual(rangeOf(m.text, m.ranges[0]));
  });

  it('an algebraic loop: LW404 on every arrow of the cycle, each naming the others', async () => {
    const src = 'controller A {\n  input u [m]\n  output y [m] = u\n}\ncontroller B {\n  input u [m]\n  output y [m] = u\n}\nloop L {\n  «A.y -> B.u»\n  «B.y -> A.u»\n  simulate 1 [s]\n}\n';
    const { m, list } = await diagnosticsOf(src, 'LW404');
    expect(list.map((d) => d.code)).toEqual(['LW404', 'LW404']);
    expect(list.map((d) => d.range)).toEqual(m.ranges.map((r) => rangeOf(m.text, r)));
    expect(list[0].related?.map((r) => r.location.range)).toEqual([rangeOf(m.text, m.ranges[1])]);
    expect(list[1].related?.map((r) => r.location.range)).toEqual([rangeOf(m.text, m.ranges[0])]);
    expect(list[0].related?.[0].location.uri).toMatch(/^file:\/\/\/test\/diag-/);
  });

  it('an operating point off equilibrium: LW601 from the linear layer, with the trim fix as a code action', async () => {
    const text = BOOM.replace('upright { tilt = 0 [rad]', 'upright { tilt = 0.1 [rad]');
    const uri = freshUri('lw601');
    await server.open(uri, text);
    const list = await server.diagnosticsWhere(uri, (d) => d.some((x) => x.code === 'LW601'));
    const d = list.find((x) => x.code === 'LW601')!;
    expect(rangeText(text, d.range)).toMatch(/^operating point upright \{/);
    expect(d.severity).toBe(2);
    expect(d.message).toContain("rate'");
    const actions = await server.request<CodeAction[]>('textDocument/codeAction', { textDocument: { uri }, range: d.range, context: { diagnostics: [d] } });
    const trim = actions.find((a) => a.title.startsWith('Trim'))!;
    expect(trim.isPreferred).toBe(true);
    const fixed = applyEdits(text, trim.edit!.changes![uri]);
    // The input that holds tilt = 0.1 rad: drive = −g·load·arm·sin(0.1).
    const drive = Number(/drive = (-?[0-9.e-]+) \[N\*m\] \}/.exec(fixed)![1]);
    expect(drive).toBeCloseTo(-9.80665 * 0.9 * 0.6 * Math.sin(0.1), 6);
    server.close(uri);
  });

  it('edits are debounced and answered for the newest version', async () => {
    const uri = freshUri('debounce');
    const text = 'plant P {\n  state x [m]\n  x\' = 0 [m/s]\n}\n';
    await server.open(uri, text);
    expect(server.diagnosticsOf(uri)).toEqual([]);
    // Three quick edits: x' = 0 → y → yy → yyy; only the last version needs an answer.
    const at = text.indexOf('0 [m/s]');
    let v = 0;
    for (const [i, s] of ['y', 'yy', 'yyy'].entries()) {
      const len = i === 0 ? '0 [m/s]'.length : s.length - 1;
      v = server.change(uri, [{ range: { start: positionAt(text, at), end: { line: 2, character: 7 + len } }, text: s }]);
    }
    const d = await server.nextDiagnostics(uri, v);
    expect(d.diagnostics.map((x) => x.code)).toEqual(['LW201']);
    expect(d.diagnostics[0].message).toContain("'yyy'");
    server.close(uri);
    const cleared = await server.nextDiagnostics(uri);
    expect(cleared.diagnostics).toEqual([]);
  });
});

describe('hover', () => {
  it('a state: kind, owner, unit with its SI form, default and description', async () => {
    const h = await hoverText(server, BOOM.replace("tilt' = rate", "ti|lt' = rate"));
    expect(h).toContain('(state) **tilt** of plant `Boom`');
    expect(h).toContain('`[rad]`');
    expect(h).toContain('dimensionless');
    expect(h).toContain('angle from upright');
  });

  it('a param: its value as written and in SI', async () => {
    const h = await hoverText(server, 'plant P {\n  param l|en = 250 [mm]\n  state x [m]\n  x\' = 0 [m/s]\n}\n');
    expect(h).toContain('(param) **len**');
    expect(h).toContain('`250 [mm]`');
    expect(h).toContain('0.25');
  });

  it('a let: the inferred unit', async () => {
    const h = await hoverText(server, BOOM.replace('let inertia', 'let iner|tia'));
    expect(h).toContain('(let) **inertia**');
    expect(h).toContain('kg*m^2');
  });

  it('a unit in brackets: its SI expansion', async () => {
    const h = await hoverText(server, BOOM.replace('[N*m*s/rad]', '[N*m*|s/rad]'));
    expect(h).toContain('`[N*m*s/rad]`');
    expect(h).toContain('kg*m^2/s');
  });

  it('a scaled unit shows its factor', async () => {
    const h = await hoverText(server, 'plant P {\n  param len = 250 [m|m]\n  state x [m]\n  x\' = 0 [m/s]\n}\n');
    expect(h).toContain('0.001');
    expect(h).toContain('`m`');
  });

  it('a function: its summary', async () => {
    const h = await hoverText(server, BOOM.replace('*sin(tilt)', '*s|in(tilt)'));
    expect(h).toContain('(function) `sin(x)`');
    const c = await hoverText(server, BOOM.replace('expect settling', 'expect sett|ling'));
    expect(c).toContain('last time outside the band');
  });

  it('a system name: its description, states, inputs and outputs', async () => {
    const h = await hoverText(server, BOOM.replace('target - Boom.seen', 'target - Bo|om.seen'));
    expect(h).toContain('(plant) **Boom** — camera boom on a motorised hinge');
    expect(h).toContain('States: `tilt` `[rad]`, `rate` `[rad/s]`');
    expect(h).toContain('Inputs: `drive` `[N*m]`');
  });

  it('a keyword explains itself; whitespace has no hover', async () => {
    const h = await hoverText(server, BOOM.replace('  around Boom', '  aro|und Boom'));
    expect(h).toContain('operating point the loop is linearized about');
    const none = await hoverText(server, BOOM.replace('plant Boom', '|  plant Boom').replace('# A camera', '  A camera'));
    expect(none).toBe('');
  });
});

describe('hover with linear analysis', () => {
  // The boom's params, by hand: A = [[0, 1], [g/arm, −drag/(load·arm²)]], B = [0, 1/(load·arm²)].
  const arm = 0.6;
  const load = 0.9;
  const drag = 0.02;
  const g = 9.80665;
  const a21 = g / arm;
  const a22 = -drag / (load * arm * arm);
  const b2 = 1 / (load * arm * arm);
  // Open-loop poles: roots of λ² − a22·λ − a21 = 0.
  const disc = Math.sqrt(a22 * a22 + 4 * a21);
  const poles = [(a22 + disc) / 2, (a22 - disc) / 2];
  const shown = (x: number, digits: number) => String(Number(x.toPrecision(digits))).replace('-', '−');

  it('on the plant: A, B, C, D labelled with names and units, open-loop poles, residual', async () => {
    const h = await hoverText(server, BOOM.replace('plant Boom', 'plant Bo|om'));
    expect(h).toContain('Linearized at `upright`');
    expect(h).toContain(`| **rate \\[rad/s\\]** | ${shown(a21, 5)} | ${shown(a22, 5)} |`);
    expect(h).toContain(`| **tilt \\[rad\\]** | 0 | 1 |`);
    expect(h).toContain(`| **rate \\[rad/s\\]** | ${shown(b2, 5)} |`);
    expect(h).toContain('drive \\[N\\*m\\]');
    expect(h).toContain(`| ${shown(poles[0], 4)} |`);
    expect(h).toContain(`| ${shown(poles[1], 4)} |`);
    expect(h).toContain('unstable');
    expect(h).toContain('**Equilibrium residual**');
    expect(h).toContain('an equilibrium');
  });

  it('on the operating point: the same linearization', async () => {
    const h = await hoverText(server, BOOM.replace('operating point upright', 'operating point upr|ight'));
    expect(h).toContain('(operating point) **upright**');
    expect(h).toContain(`| **rate \\[rad/s\\]** | ${shown(a21, 5)} | ${shown(a22, 5)} |`);
  });

  it('on the controller: realization, pole −wf, zero and DC gain kp with its unit', async () => {
    const h = await hoverText(server, BOOM.replace('controller Steady', 'controller Ste|ady'));
    expect(h).toContain('**Realization**');
    expect(h).toContain('| −25 | 1 | 25 |');
    // kp + kd·s/(1 + s/wf) = (kp + (kp/wf + kd)·s)/(1 + s/wf): zero at −kp/(kp/wf + kd).
    const zero = -14 / (14 / 25 + 2.2);
    expect(h).toContain(`drive/err: ${shown(zero, 4)}`);
    expect(h).toContain('**DC gain**: drive/err = 14 `N*m/rad`');
  });

  it('on the loop: closed-loop poles, verdict, dominant pair, settling and margins', async () => {
    const h = await hoverText(server, BOOM.replace('loop Upright', 'loop Upr|ight'));
    expect(h).toContain('**Closed loop** at its operating point: **stable**');
    expect(h).toContain('**Dominant pair**');
    expect(h).toMatch(/\*\*Settling \(2 %\)\*\* ≈ [0-9.]+ s/);
    expect(h).toContain('| Boom.drive |');
    expect(h).toContain(`**Open-loop plant poles**: ${shown(poles[0], 4)}, ${shown(poles[1], 4)}`);
  });

  it('a file with errors says why there is no linear model', async () => {
    const h = await hoverText(server, BOOM.replace('plant Boom', 'plant Bo|om').replace("tilt' = rate", "tilt' = rat"));
    expect(h).toContain('(plant) **Boom**');
    expect(h).toContain('_Linear analysis: the file has errors');
  });
});

describe('code lenses', () => {
  it('the boom loop gets Simulate, Compare linear and Sweep (4 runs), with the client commands', async () => {
    const uri = freshUri('lens');
    await server.open(uri, BOOM);
    const ls = await lenses(server, uri);
    expect(ls.map((l) => l.command?.title)).toEqual(['▶ Simulate', 'Compare linear', 'Sweep (4 runs)']);
    expect(ls.map((l) => l.command?.command)).toEqual(['loopwright.simulate', 'loopwright.compareLinear', 'loopwright.sweep']);
    expect(ls[0].command?.arguments).toEqual([uri, 'Upright']);
    const loopLine = BOOM.split('\n').findIndex((l) => l.startsWith('loop Upright'));
    expect(ls[0].range.start.line).toBe(loopLine);
    server.close(uri);
  });

  it('a loop without compare or sweep gets only Simulate; a param sweep counts its steps', async () => {
    const src = 'loop A {\n  simulate 1 [s]\n}\nloop B {\n  param k = 1\n  sweep k over 1 .. 2 steps 5\n  simulate 1 [s]\n}\n';
    const uri = freshUri('lens2');
    await server.open(uri, src);
    expect(await lensTitles(server, uri)).toEqual(['▶ Simulate', '▶ Simulate', 'Sweep (5 runs)']);
    server.close(uri);
  });

  it('titles stay while a line is half typed, and follow the loop when lines are added above', async () => {
    const uri = freshUri('lens3');
    await server.open(uri, BOOM);
    const at = BOOM.indexOf('  show Boom.tilt');
    const pos = positionAt(BOOM, at);
    // Insert a broken line inside the loop, then two lines at the top.
    server.change(uri, [{ range: { start: pos, end: pos }, text: '  start Boom.tilt = (\n' }]);
    server.change(uri, [{ range: { start: { line: 0, character: 0 }, end: { line: 0, character: 0 } }, text: '\n\n' }]);
    const ls = await lenses(server, uri);
    expect(ls.map((l) => l.command?.title)).toEqual(['▶ Simulate', 'Compare linear', 'Sweep (4 runs)']);
    const loopLine = BOOM.split('\n').findIndex((l) => l.startsWith('loop Upright')) + 2;
    expect(ls[0].range.start.line).toBe(loopLine);
    server.close(uri);
  });
});

describe('outline, folding, semantic tokens', () => {
  it('the outline has blocks with their members', async () => {
    const uri = freshUri('symbols');
    await server.open(uri, BOOM);
    const syms = await symbolsOf(server, uri);
    expect(syms.map((s) => s.name)).toEqual(['Boom', 'Steady', 'Upright']);
    const boom = syms[0].children!.map((c) => c.name);
    expect(boom.slice(0, 5)).toEqual(['arm', 'load', 'drag', 'g', 'inertia']);
    expect(boom).toContain('tilt');
    expect(boom).toContain("rate'");
    expect(boom).toContain('upright');
    expect(syms[1].children!.map((c) => c.name)).toContain('drive / err');
    expect(syms[2].children!.map((c) => c.name)).toContain('→ Steady.err');
    for (const s of syms) {
      expect(s.range.start.line).toBeLessThanOrEqual(s.selectionRange.start.line);
      expect(s.range.end.line).toBeGreaterThanOrEqual(s.selectionRange.end.line);
    }
    server.close(uri);
  });

  it('folding ranges cover each block and comment runs', async () => {
    const src = '# one\n# two\nplant P {\n  state x [m]\n  x\' = 0 [m/s]\n  operating point p {\n    x = 0 [m]\n  }\n}\n';
    const uri = freshUri('fold');
    await server.open(uri, src);
    const folds = (await server.request<FoldingRange[]>('textDocument/foldingRange', { textDocument: { uri } })).map((f) => [f.startLine, f.endLine, f.kind]);
    expect(folds).toContainEqual([2, 7, 'region']);
    expect(folds).toContainEqual([5, 6, 'region']);
    expect(folds).toContainEqual([0, 1, 'comment']);
    server.close(uri);
  });

  it('semantic tokens tell states, inputs, outputs, params, units, keywords and functions apart', async () => {
    const uri = freshUri('semantic');
    await server.open(uri, BOOM);
    const legend = init.capabilities.semanticTokensProvider!.legend;
    const toks = await semanticTokensOf(server, uri, BOOM, legend);
    const kindOf = (text: string, nth = 0) => toks.filter((t) => t.text === text)[nth];
    expect(kindOf('plant')).toMatchObject({ type: 'keyword' });
    expect(kindOf('tilt')).toMatchObject({ type: 'variable', modifiers: ['declaration'] });
    expect(kindOf('drive')).toMatchObject({ type: 'parameter', modifiers: ['declaration'] });
    expect(kindOf('seen')).toMatchObject({ type: 'property', modifiers: ['declaration'] });
    expect(kindOf('arm')).toMatchObject({ type: 'variable', modifiers: ['declaration', 'readonly'] });
    expect(kindOf('[m]')).toMatchObject({ type: 'type' });
    expect(kindOf('sin')).toMatchObject({ type: 'function', modifiers: ['defaultLibrary'] });
    expect(kindOf('Boom')).toMatchObject({ type: 'class', modifiers: ['declaration'] });
    expect(kindOf('upright')).toMatchObject({ type: 'enumMember' });
    // Strictly increasing, non-overlapping positions.
    expect(toks.every((t) => t.text.length > 0)).toBe(true);
    server.close(uri);
  });
});

describe('completion', () => {
  it('block keywords at the top level', async () => {
    const labels = await completionLabels(server, 'pl|');
    expect(labels).toEqual(['plant', 'controller', 'loop']);
  });

  it('member keywords at the start of a line inside a plant; no loop members there', async () => {
    const labels = await completionLabels(server, 'plant P {\n  state x [m]\n  |\n}\n');
    expect(labels).toEqual(expect.arrayContaining(['param', 'let', 'state', 'input', 'output', 'limit', 'operating point', 'x']));
    expect(labels).not.toContain('simulate');
    expect(labels).not.toContain('sample every');
  });

  it('loop members inside a loop', async () => {
    const labels = await completionLabels(server, BOOM.replace('  compare linear\n', '  |\n'));
    expect(labels).toEqual(expect.arrayContaining(['signal', 'simulate', 'compare linear', 'sweep', 'show', 'expect', 'Boom', 'Steady', 'target']));
    expect(labels).not.toContain('state');
  });

  it('members after System.', async () => {
    const labels = await completionLabels(server, BOOM.replace('show Boom.tilt', 'show Boom.|tilt'));
    expect(labels).toEqual(expect.arrayContaining(['tilt', 'rate', 'drive', 'seen', 'arm', 'upright']));
    expect(labels).not.toContain('kp');
  });

  it('state and input values after System.point.', async () => {
    const labels = await completionLabels(server, BOOM.replace('Boom.upright.drive +', 'Boom.upright.|drive +'));
    expect(labels.sort()).toEqual(['drive', 'rate', 'tilt']);
  });

  it('unit names inside brackets', async () => {
    const labels = await completionLabels(server, 'plant P {\n  param k = 3 [k|\n}\n');
    expect(labels).toEqual(expect.arrayContaining(['kg', 'm', 's', 'N', 'rad', 'Hz', 'degC']));
    expect(labels).not.toContain('param');
  });

  it('names in scope inside an expression, with functions', async () => {
    const labels = await completionLabels(server, BOOM.replace("tilt' = rate", "tilt' = ra|"));
    expect(labels).toEqual(expect.arrayContaining(['rate', 'tilt', 'arm', 'inertia', 'sin', 'clamp', 'pi']));
    expect(labels).not.toContain('step');
    expect(labels).not.toContain('Steady');
  });

  it('entry names inside pid braces, and option words after method =', async () => {
    const pid = await completionLabels(server, 'controller C {\n  input e [rad]\n  output u [N]\n  pid u from e { kp = 1 [N/rad], | }\n}\n');
    expect(pid).toEqual(['kp', 'ki', 'kd', 'rolloff', 'antiwindup']);
    const method = await completionLabels(server, 'loop L {\n  simulate 1 [s] { method = | }\n}\n');
    expect(method).toEqual(['adaptive', 'extrapolation', 'stiff']);
  });
});

describe('definition, references, rename', () => {
  it('definition of a use goes to its declaration', async () => {
    const src = BOOM.replace('  state rate [rad/s]', '  state «rate» [rad/s]').replace("tilt' = rate", "tilt' = ra|te");
    const m = mark(src);
    expect(await definitionSpan(server, src)).toEqual(m.ranges[0]);
  });

  it('definition through System.member in a loop', async () => {
    const src = BOOM.replace('  output seen', '  output «seen»').replace('target - Boom.seen', 'target - Boom.se|en');
    const m = mark(src);
    expect(await definitionSpan(server, src)).toEqual(m.ranges[0]);
  });

  it('references: declaration and every use, in the plant and the loop', async () => {
    const src = 'plant P {\n  state «x» [m]\n  output «y»| [m] = «x»\n  «x»\' = 0 [m/s]\n}\n';
    // cursor on y: y's references only
    const m = mark(src);
    const refs = await referenceSpans(server, src);
    expect(refs).toEqual([m.ranges[1]]);
    const src2 = 'plant P {\n  state «x»| [m]\n  output y [m] = «x»\n  «x»\' = 0 [m/s]\n}\nloop L {\n  show P.«x»\n  simulate 1 [s]\n}\n';
    const m2 = mark(src2);
    expect(await referenceSpans(server, src2)).toEqual(m2.ranges);
  });

  it('rename edits every use, the loop included', async () => {
    const r = await renamed(server, BOOM.replace('state tilt', 'state ti|lt'), 'angle');
    expect(r.error).toBeUndefined();
    expect(r.text).not.toMatch(/\btilt\b/);
    expect(r.text).toContain("angle' = rate");
    expect(r.text).toContain('sweep start Boom.angle over');
    expect(r.text).toContain('output seen [rad] = angle');
    expect(r.edits).toBe((BOOM.match(/\btilt\b/g) ?? []).length);
  });

  it('rename refuses keywords, built-ins, functions and taken names', async () => {
    expect((await renamed(server, BOOM.replace('state tilt', 'state ti|lt'), 'state')).error).toMatch(/keyword/);
    expect((await renamed(server, BOOM.replace('state tilt', 'state ti|lt'), '2x')).error).toMatch(/not a name/);
    expect((await renamed(server, BOOM.replace('state tilt', 'state ti|lt'), 'rate')).error).toMatch(/already declared/);
    expect((await renamed(server, BOOM.replace('*sin(tilt)', '*si|n(tilt)'), 'sine2')).error).toMatch(/function/);
    const m = await openMarked(server, BOOM.replace('kd*s/', 'kd*|s/'));
    await expect(server.request('textDocument/prepareRename', { textDocument: { uri: m.uri }, position: positionAt(m.text, m.cursor) })).rejects.toThrow(/built in/);
    server.close(m.uri);
  });
});

describe('formatting', () => {
  it('formats the samples canonically and idempotently, keeping comments', async () => {
    for (const f of samplesIn(join(ROOT, 'samples'))) {
      const text = readFileSync(f, 'utf8');
      const uri = freshUri('fmt');
      await server.open(uri, text);
      const once = await formatted(server, uri, text);
      server.close(uri);
      if (once.error) {
        expect(once.error).toMatch(/syntax errors/);
        continue;
      }
      const uri2 = freshUri('fmt2');
      await server.open(uri2, once.text!);
      const twice = await formatted(server, uri2, once.text!);
      server.close(uri2);
      expect(twice.text).toBe(once.text);
      for (const c of text.match(/#[^\n]*/g) ?? []) expect(once.text).toContain(c.trim());
    }
  });

  it('spaces, indentation and trailing comments of the boom sample', async () => {
    const uri = freshUri('fmt3');
    await server.open(uri, BOOM);
    const r = await formatted(server, uri, BOOM);
    server.close(uri);
    expect(r.text).toContain("  rate' = (g / arm) * sin(tilt) - drag / inertia * rate + drive / inertia\n");
    expect(r.text).toContain('  param arm = 0.6 [m]\n');
    expect(r.text).toContain('  let inertia = load * arm^2  # unit inferred: kg*m^2\n');
    expect(r.text).toContain('  limit drive within -4 [N*m] .. 4 [N*m]  # the motor cannot give more\n');
    expect(r.text).toContain('  drive / err = kp + kd * s / (1 + s / wf)\n');
    expect(r.text).toContain('}\n\ncontroller Steady');
  });

  it('refuses a file with syntax errors and leaves it alone', async () => {
    const text = 'plant P {\n  param k = (1 +\n}\n';
    const uri = freshUri('fmt4');
    await server.open(uri, text);
    const r = await formatted(server, uri, text);
    server.close(uri);
    expect(r.error).toMatch(/syntax errors/);
  });
});

describe('code actions', () => {
  it('a unit mismatch offers the language quick fix, with its edit', async () => {
    const text = "plant P {\n  param k = 2 [N/m]\n  state x [m]\n  x' = k\n}\n";
    const uri = freshUri('action');
    const d = await server.open(uri, text);
    const diag = d.diagnostics.find((x) => x.code === 'LW303')!;
    expect(diag).toBeTruthy();
    const actions = await server.request<CodeAction[]>('textDocument/codeAction', { textDocument: { uri }, range: diag.range, context: { diagnostics: [diag] } });
    expect(actions.length).toBeGreaterThan(0);
    expect(actions[0].kind).toBe('quickfix');
    const edits = actions[0].edit!.changes![uri];
    expect(edits.length).toBeGreaterThan(0);
    expect(actions[0].diagnostics?.[0].code).toBe('LW303');
    server.close(uri);
  });
});

describe('inlay hints', () => {
  it('inferred units after let and derived params, none after literals', async () => {
    const text = 'plant P {\n  param m = 2 [kg]\n  param w = 3 [m/s]\n  param p = m * w\n  let e = m * w^2\n  state x [m]\n  x\' = w\n}\n';
    const uri = freshUri('inlay');
    await server.open(uri, text);
    const hints = await inlayLabels(server, uri, text);
    expect(hints).toContainEqual({ after: 'p', label: ': kg*m/s' });
    expect(hints.find((h) => h.after === 'e')?.label).toMatch(/^: (kg\*m\^2\/s\^2|J)$/);
    expect(hints.find((h) => h.after === 'm')).toBeUndefined();
    server.close(uri);
  });

  it('the closed-loop verdict after the loop name', async () => {
    const uri = freshUri('inlay2');
    await server.open(uri, BOOM);
    const hints = await inlayLabels(server, uri, BOOM);
    expect(hints).toContainEqual({ after: 'inertia', label: ': kg*m^2' });
    const verdict = hints.find((h) => h.after === 'Upright');
    expect(verdict?.label).toMatch(/^stable · ζ 0\.\d+ · ts ≈ [0-9.]+ s$/);
    server.close(uri);
  });
});

describe('trust', () => {
  it('an untrusted workspace gets no run lenses until trust is granted', async () => {
    const { server: s } = await Server.start({ initializationOptions: { trusted: false } });
    try {
      const uri = freshUri('trust');
      await s.open(uri, BOOM);
      expect(await lensTitles(s, uri)).toEqual([]);
      await expect(s.request('loopwright/run', { uri, loop: 'Upright', mode: 'simulate' })).rejects.toThrow(/untrusted/);
      await s.conn.sendNotification('loopwright/trust', { trusted: true });
      expect(await lensTitles(s, uri)).toEqual(['▶ Simulate', 'Compare linear', 'Sweep (4 runs)']);
    } finally {
      await s.stop();
    }
  });
});
