// Self-contained HTML reports of runs, for `simulate --html` and `sweep --html`. The page is the
// editor's plot page (client/src/page.ts with the built dist/media/plot.js and its CSS inlined,
// so the plots, metrics and expects are drawn by the very code the webview runs), plus a static
// section written here: run summary, linearization (verdict, poles, margins) and the model text,
// all escaped. The page's CSP allows nothing but its own nonce'd inline style and script, so it
// opens from disk with no network.

import { existsSync, readFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import type { Analysis } from '../analysis';
import { linearizeLoop, type LoopLinearization } from '../linear/linearize';
import type { LoopRunReport, PoleInfo } from '../protocol';
import { createNonce, escapeHtml, MEDIA_FILES, reportPageHtml } from '../../../client/src/page';
import { num } from './format';
import type { CliIO } from './types';

export interface ReportAssets {
  script: string;
  styles: string[];
}

/** Where the built page assets may be: next to the bundled CLI, or the project's dist/. */
function assetRoots(): string[] {
  const roots: string[] = [];
  const env = process.env.LOOPWRIGHT_ROOT;
  if (env) roots.push(env);
  // dist/cli.js → the extension root is its parent
  if (typeof __dirname !== 'undefined') roots.push(resolve(__dirname, '..'));
  if (process.argv[1]) roots.push(resolve(dirname(process.argv[1]), '..'));
  roots.push(process.cwd());
  return roots;
}

/** Reads dist/media/plot.js and the CSS, or says why not. */
export function loadReportAssets(root?: string): { ok: true; assets: ReportAssets } | { ok: false; message: string } {
  const roots = root ? [root] : assetRoots();
  for (const r of roots) {
    const at = (p: string) => join(r, p);
    if (![MEDIA_FILES.script, MEDIA_FILES.style, MEDIA_FILES.uplotStyle].every((p) => existsSync(at(p)))) continue;
    try {
      return { ok: true, assets: { script: readFileSync(at(MEDIA_FILES.script), 'utf8'), styles: [readFileSync(at(MEDIA_FILES.uplotStyle), 'utf8'), readFileSync(at(MEDIA_FILES.style), 'utf8')] } };
    } catch (err) {
      return { ok: false, message: `cannot read the report page assets in ${r}: ${(err as Error).message}` };
    }
  }
  return { ok: false, message: `the report page assets (${MEDIA_FILES.script}) are missing; build them with 'node scripts/build.mjs'` };
}

export interface HtmlReportInput {
  report: LoopRunReport;
  analysis: Analysis;
  /** The loop's name (for its linearization). */
  loop: string;
  /** A title line for the page; default from the loop and file. */
  title?: string;
  /** What was run: 'simulate' or 'sweep' (and, for a limit search, its result text). */
  heading?: string;
}

const STATIC_CSS = `
#lw-static { font: 13px/1.45 system-ui, sans-serif; margin: 24px 16px 48px; max-width: 1100px; }
#lw-static h2 { font-size: 15px; margin: 22px 0 6px; }
#lw-static table { border-collapse: collapse; margin: 4px 0 10px; }
#lw-static th, #lw-static td { border: 1px solid rgba(128,128,128,.45); padding: 2px 8px; text-align: right; }
#lw-static th:first-child, #lw-static td:first-child { text-align: left; }
#lw-static .pass { color: #1a7f37; } #lw-static .fail { color: #cf222e; font-weight: 600; }
#lw-static pre { border: 1px solid rgba(128,128,128,.45); padding: 8px; overflow: auto; font: 12px/1.4 ui-monospace, monospace; white-space: pre; }
`;

const td = (s: string, cls?: string) => `<td${cls ? ` class="${cls}"` : ''}>${escapeHtml(s)}</td>`;
const th = (s: string) => `<th>${escapeHtml(s)}</th>`;
const tableHtml = (head: string[], rows: string[][]) => `<table><thead><tr>${head.map(th).join('')}</tr></thead><tbody>${rows.map((r) => `<tr>${r.join('')}</tr>`).join('')}</tbody></table>`;

function polesRows(poles: PoleInfo[]): string[][] {
  return poles.map((p, i) => [td(String(i + 1)), td(num(p.re, 6)), td(num(p.im, 6)), td(num(p.damping, 4)), td(num(p.natural, 5)), td(num(p.timeConstant, 5))]);
}

function linearSection(lin: LoopLinearization): string {
  if (!lin.ok) return `<h2>Linearization</h2><p>${escapeHtml(lin.problem ?? 'the loop could not be linearized')}</p>`;
  const out: string[] = ['<h2>Linearization at the operating point</h2>'];
  out.push(`<p>Verdict: <b>${escapeHtml(lin.verdict)}</b>${lin.unstable ? escapeHtml(` (${lin.unstable} pole${lin.unstable > 1 ? 's' : ''} in the right half-plane)`) : ''}${lin.settling !== null ? escapeHtml(`; 2 % settling of the dominant pole ≈ ${num(lin.settling, 4)} s`) : ''}</p>`);
  out.push(tableHtml(['state', 'value', 'unit'], lin.states.map((s) => [td(s.name), td(num(s.value, 6)), td(s.unit || '1')])));
  out.push('<h2>Closed-loop poles</h2>');
  out.push(lin.poles.length ? tableHtml(['pole', 're [1/s]', 'im [rad/s]', 'damping', 'natural [rad/s]', 'time constant [s]'], polesRows(lin.poles)) : '<p>none (no states)</p>');
  if (lin.open.length) {
    out.push('<h2>Open-loop plant poles</h2>');
    out.push(tableHtml(['pole', 're [1/s]', 'im [rad/s]', 'damping', 'natural [rad/s]', 'time constant [s]'], polesRows(lin.open)));
  }
  if (lin.margins.length) {
    out.push('<h2>Margins, loop broken at each controlled plant input</h2>');
    out.push(
      tableHtml(
        ['input', 'gain margin', 'gain margin [dB]', 'at [rad/s]', 'phase margin [deg]', 'at [rad/s]', 'delay margin [s]'],
        lin.margins.map((m) => [td(m.input), td(m.stable ? num(m.gain ?? Infinity, 5) : '—'), td(m.stable ? num(m.gainDb ?? Infinity, 4) : '—'), td(num(m.gainMarginFrequency, 5)), td(num(m.phase, 5)), td(num(m.phaseMarginFrequency, 5)), td(m.stable ? num(m.delay ?? Infinity, 4) : '—')]),
      ),
    );
  }
  if (lin.states.length && lin.states.length <= 16) {
    out.push('<h2>A (closed loop, in the units of the states per second)</h2>');
    out.push(tableHtml(['', ...lin.states.map((s) => s.name)], lin.A.map((row, i) => [td(lin.states[i].name), ...row.map((v) => td(num(v, 5)))])));
  }
  for (const n of lin.notes) out.push(`<p>Note: ${escapeHtml(n)}</p>`);
  return out.join('\n');
}

function runsSection(report: LoopRunReport): string {
  const rows = report.runs.map((r) => {
    const passed = r.expects.filter((e) => e.pass).length;
    const ok = !r.error && passed === r.expects.length;
    return [
      td(r.label),
      td(r.kind),
      td(r.error ? 'failed' : r.recovered ? '✓' : '✗', r.error || !r.recovered ? 'fail' : 'pass'),
      td(r.expects.length ? `${passed}/${r.expects.length}` : '—', ok ? 'pass' : 'fail'),
      td(r.error ? `${r.error.code}: ${r.error.message}` : ''),
    ];
  });
  const out = ['<h2>Runs</h2>', tableHtml(['run', 'kind', 'recovered', 'expects', 'error'], rows)];
  const expectRows: string[][] = [];
  for (const r of report.runs) for (const e of r.expects) expectRows.push([td(r.label), td(e.text), td(e.measuredText || (e.error ?? '—')), td(e.pass ? 'pass' : 'FAIL', e.pass ? 'pass' : 'fail')]);
  if (expectRows.length) out.push('<h2>Expects</h2>', tableHtml(['run', 'expect', 'measured', ''], expectRows));
  return out.join('\n');
}

/** The report page as one HTML string. */
export function htmlReport(input: HtmlReportInput, assets: ReportAssets): string {
  const lin = linearizeLoop(input.analysis, input.loop);
  const report: LoopRunReport = { ...input.report };
  if (lin.ok && !report.poles) report.poles = { closed: lin.poles, open: lin.open };
  const nonce = createNonce();
  const page = reportPageHtml({ report, script: assets.script, styles: assets.styles, nonce, title: input.title });
  const section = [
    `<style nonce="${nonce}">${STATIC_CSS}</style>`,
    '<section id="lw-static">',
    `<h2>${escapeHtml(input.heading ?? `Loop ${report.loop}${report.file ? ` in ${report.file}` : ''}`)}</h2>`,
    report.warnings.length ? `<ul>${report.warnings.map((w) => `<li>${escapeHtml(w)}</li>`).join('')}</ul>` : '',
    runsSection(report),
    linearSection(lin),
    '<h2>Model</h2>',
    `<pre id="lw-model">${escapeHtml(input.analysis.text)}</pre>`,
    '</section>',
  ].join('\n');
  const at = page.lastIndexOf('</body>');
  return at < 0 ? page + section : page.slice(0, at) + section + '\n' + page.slice(at);
}

/** Writes the report to `path`; on failure prints one line and returns false. */
export function writeHtmlReport(io: CliIO, command: string, path: string, input: HtmlReportInput): boolean {
  const a = loadReportAssets();
  if (!a.ok) {
    io.err(`loopwright ${command}: ${a.message}`);
    return false;
  }
  let html: string;
  try {
    html = htmlReport(input, a.assets);
  } catch (err) {
    io.err(`loopwright ${command}: cannot build the report: ${(err as Error).message}`);
    return false;
  }
  try {
    io.writeFile(path, html);
  } catch (err) {
    io.err(`loopwright ${command}: cannot write ${path}: ${(err as NodeJS.ErrnoException).code ?? (err as Error).message}`);
    return false;
  }
  return true;
}
