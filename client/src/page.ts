// HTML of the response-plot page. Pure functions: the extension's panel calls `plotPageHtml`
// with webview URIs; the HTML report writer calls `reportPageHtml` with the bundle and CSS texts
// to get one self-contained file. Nothing here imports vscode or touches the file system.

import type { LoopRunReport } from '../../language/src/protocol';
import { EMBEDDED_REPORT_ID } from '../media/messages';

/** Built assets, relative to the extension root (the build writes them). */
export const MEDIA_FILES = {
  script: 'dist/media/plot.js',
  style: 'dist/media/style.css',
  uplotStyle: 'dist/media/uPlot.min.css',
} as const;

export { EMBEDDED_REPORT_ID };

export interface PlotPageAssets {
  /** URIs as the webview can load them (`webview.asWebviewUri(...).toString()`). */
  script: string;
  style: string;
  uplotStyle: string;
}

export interface PlotPageOptions {
  assets: PlotPageAssets;
  /** Fresh per render: see `createNonce`. */
  nonce: string;
  /** `webview.cspSource`. */
  cspSource: string;
  title?: string;
  /** Script run before plot.js, under the same nonce (the tests use it to stub the host API). */
  prelude?: string;
}

export interface ReportPageOptions {
  report: LoopRunReport;
  /** Text of dist/media/plot.js. */
  script: string;
  /** Texts of dist/media/uPlot.min.css and dist/media/style.css, in that order. */
  styles: string[];
  title?: string;
  nonce?: string;
}

const NONCE = /^[A-Za-z0-9+/_-]{16,}={0,2}$/;

/** 128 random bits as base64url, from the platform's crypto (Node 20 and browsers). */
export function createNonce(): string {
  const bytes = new Uint8Array(16);
  globalThis.crypto.getRandomValues(bytes);
  let s = '';
  for (const b of bytes) s += String.fromCharCode(b);
  return btoa(s).replace(/\+/g, '-').replace(/\//g, '_').replace(/=+$/, '');
}

/** Escapes text for an HTML text node or a double-quoted attribute. */
export function escapeHtml(s: string): string {
  return s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

function checkNonce(nonce: string): string {
  if (!NONCE.test(nonce)) throw new Error('nonce must be at least 16 base64 characters');
  return nonce;
}

/** A CSP source list must not smuggle in another directive or quote. */
/**
 * The webview's CSP source as the host gives it: one or more space-separated sources, each a
 * host or scheme source (`https://*.vscode-cdn.net`, `vscode-resource:`) or the quoted keyword
 * `'self'` (code-server gives `'self' https://*.vscode-cdn.net`). Anything that could end the
 * directive or smuggle another one (`;`, `,`, other quotes, line breaks) is refused.
 */
function checkSource(src: string): string {
  const parts = src.trim().split(/\s+/).filter(Boolean);
  const ok = parts.length > 0 && parts.every((p) => p === "'self'" || /^[A-Za-z0-9+.\-]+:(\/\/[^\s;,'"]*)?$|^[^\s;,'":]+(\.[^\s;,'"]+)*(:\d+)?$|^(https?|wss?):\/\/[^\s;,'"]+$/.test(p));
  if (!ok || /[;,\r\n"]/.test(src)) throw new Error(`not a CSP source: ${JSON.stringify(src)}`);
  return parts.join(' ');
}

export function plotPageCsp(nonce: string, cspSource: string): string {
  const n = `'nonce-${checkNonce(nonce)}'`;
  const src = checkSource(cspSource);
  return `default-src 'none'; img-src ${src} data:; style-src ${src} ${n}; script-src ${n}; font-src ${src}`;
}

/** CSP of the standalone report: nothing but its own inline, nonce'd style and script. */
export function reportPageCsp(nonce: string): string {
  const n = `'nonce-${checkNonce(nonce)}'`;
  return `default-src 'none'; img-src data: blob:; style-src ${n}; script-src ${n}`;
}

/** Script text safe inside `<script>…</script>`. */
function inlineScript(text: string): string {
  return text.replace(/<\/(script)/gi, '<\\/$1').replace(/<!--/g, '<\\!--');
}

/** CSS text safe inside `<style>…</style>`. */
function inlineStyle(text: string): string {
  return text.replace(/<\/(style)/gi, '<\\/$1');
}

/** JSON safe inside a `<script type="application/json">` data block (and still valid JSON). */
export function inlineJson(value: unknown): string {
  return JSON.stringify(value).replace(/</g, '\\u003c').replace(/>/g, '\\u003e').replace(/&/g, '\\u0026').replace(/\u2028/g, '\\u2028').replace(/\u2029/g, '\\u2029');
}

function shell(csp: string, title: string, head: string, body: string): string {
  return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="${escapeHtml(csp)}">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${escapeHtml(title)}</title>
${head}
</head>
<body>
<div id="lw-root"><noscript>This page needs JavaScript to draw the plots.</noscript></div>
${body}
</body>
</html>
`;
}

/** The webview page: CSS and plot.js from the extension's media folder. */
export function plotPageHtml(o: PlotPageOptions): string {
  const nonce = checkNonce(o.nonce);
  const a = o.assets;
  const head = [
    `<link rel="stylesheet" href="${escapeHtml(a.uplotStyle)}">`,
    `<link rel="stylesheet" href="${escapeHtml(a.style)}">`,
  ].join('\n');
  const body = [
    o.prelude !== undefined ? `<script nonce="${nonce}">${inlineScript(o.prelude)}</script>` : '',
    `<script nonce="${nonce}" src="${escapeHtml(a.script)}"></script>`,
  ].filter(Boolean).join('\n');
  return shell(plotPageCsp(nonce, o.cspSource), o.title ?? 'Loopwright plot', head, body);
}

/** One HTML file with the report, the bundle and the CSS inlined: opens offline from disk. */
export function reportPageHtml(o: ReportPageOptions): string {
  const nonce = checkNonce(o.nonce ?? createNonce());
  const title = o.title ?? `Loopwright — ${o.report.loop}${o.report.file ? ` (${o.report.file})` : ''}`;
  const head = o.styles.map((css) => `<style nonce="${nonce}">${inlineStyle(css)}</style>`).join('\n');
  const body = [
    `<script type="application/json" id="${EMBEDDED_REPORT_ID}">${inlineJson(o.report)}</script>`,
    `<script nonce="${nonce}">${inlineScript(o.script)}</script>`,
  ].join('\n');
  return shell(reportPageCsp(nonce), title, head, body);
}
