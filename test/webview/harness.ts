// Drives the plot page in headless Chromium (Debian's /usr/bin/chromium through playwright-core).
// The page is the production HTML from page.ts with the production CSP; a nonce'd prelude stands in
// for VS Code: it stubs acquireVsCodeApi (postMessage records, get/setState kept in sessionStorage
// so a reload can restore) and sets theme variables the way VS Code puts them on <html>.

import { execFileSync } from 'node:child_process';
import { readFileSync, mkdirSync } from 'node:fs';
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { join } from 'node:path';
import { chromium, type Browser, type Page } from 'playwright-core';
import { createNonce, plotPageHtml } from '../../client/src/page';
import type { HostToPage, PageToHost } from '../../client/media/messages';

export const ROOT = join(import.meta.dirname, '..', '..');
export const OUT = join(ROOT, 'test-output', 'webview');

export const CHROMIUM_ARGS = ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic'];

export function launch(): Promise<Browser> {
  return chromium.launch({ executablePath: '/usr/bin/chromium', args: CHROMIUM_ARGS });
}

/** Builds the bundles (dist/media/plot.js, the CSS copies) and returns the media texts. */
export function buildMedia(): Record<string, string> {
  if (process.env.LOOPWRIGHT_DIST_BUILT !== '1') execFileSync(process.execPath, [join(ROOT, 'scripts', 'build.mjs')], { cwd: ROOT, stdio: 'pipe' });
  mkdirSync(OUT, { recursive: true });
  const media: Record<string, string> = {};
  for (const f of ['plot.js', 'style.css', 'uPlot.min.css']) media[f] = readFileSync(join(ROOT, 'dist', 'media', f), 'utf8');
  return media;
}

export interface ThemeVars {
  bodyClass: string;
  vars: Record<string, string>;
}

export const DARK: ThemeVars = {
  bodyClass: 'vscode-dark',
  vars: {
    '--vscode-editor-background': '#1e1e1e',
    '--vscode-editor-foreground': '#d4d4d4',
    '--vscode-panel-border': '#444444',
    '--vscode-descriptionForeground': '#9d9d9d',
    '--vscode-font-family': 'sans-serif',
  },
};

export const LIGHT: ThemeVars = {
  bodyClass: 'vscode-light',
  vars: {
    '--vscode-editor-background': '#ffffff',
    '--vscode-editor-foreground': '#333333',
    '--vscode-panel-border': '#d0d0d0',
    '--vscode-descriptionForeground': '#6f6f6f',
    '--vscode-font-family': 'sans-serif',
  },
};

/** The stand-in for VS Code, run before plot.js. */
export function prelude(theme: ThemeVars): string {
  return `(() => {
  const KEY = 'loopwright-test-state';
  const posted = (window.__posted = []);
  window.__violations = [];
  document.addEventListener('securitypolicyviolation', (e) => window.__violations.push(e.violatedDirective + ' ' + e.blockedURI));
  let acquired = false;
  window.acquireVsCodeApi = () => {
    if (acquired) throw new Error('acquireVsCodeApi may be called once');
    acquired = true;
    return Object.freeze({
      postMessage: (m) => { posted.push(JSON.parse(JSON.stringify(m))); },
      getState: () => { const s = sessionStorage.getItem(KEY); return s === null ? undefined : JSON.parse(s); },
      setState: (s) => { sessionStorage.setItem(KEY, JSON.stringify(s)); return s; },
    });
  };
  const vars = ${JSON.stringify(theme.vars)};
  for (const [k, v] of Object.entries(vars)) document.documentElement.style.setProperty(k, v);
  document.documentElement.dataset.bodyClass = ${JSON.stringify(theme.bodyClass)};
})();`;
}

export interface TestServer {
  url: string;
  requests: string[];
  close(): Promise<void>;
}

/** Serves /page (a fresh nonce per request) and /media/* on 127.0.0.1 only. */
export async function serve(media: Record<string, string>, theme: ThemeVars = DARK): Promise<TestServer> {
  const requests: string[] = [];
  let origin = '';
  const server: Server = createServer((req, res) => {
    const path = new URL(req.url ?? '/', 'http://127.0.0.1').pathname;
    requests.push(path);
    if (path === '/page') {
      const html = plotPageHtml({
        nonce: createNonce(),
        cspSource: origin,
        assets: { script: `${origin}/media/plot.js`, style: `${origin}/media/style.css`, uplotStyle: `${origin}/media/uPlot.min.css` },
        title: 'plot test',
        prelude: prelude(theme),
      });
      res.writeHead(200, { 'content-type': 'text/html; charset=utf-8', 'cache-control': 'no-store' });
      res.end(html);
      return;
    }
    const name = path.replace(/^\/media\//, '');
    if (path.startsWith('/media/') && name in media) {
      res.writeHead(200, { 'content-type': name.endsWith('.js') ? 'text/javascript' : 'text/css', 'cache-control': 'no-store' });
      res.end(media[name]);
      return;
    }
    // Chromium asks every http page for a favicon; the webview never does.
    if (path === '/favicon.ico') {
      res.writeHead(204).end();
      return;
    }
    res.writeHead(404).end();
  });
  await new Promise<void>((ok) => server.listen(0, '127.0.0.1', ok));
  origin = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  return { url: `${origin}/page`, requests, close: () => new Promise((ok) => server.close(() => ok())) };
}

export interface Opened {
  page: Page;
  consoleErrors: string[];
}

/** Opens the page in a fresh context, applies the body theme class, waits for 'ready'. */
export async function open(browser: Browser, url: string, viewport = { width: 1000, height: 900 }): Promise<Opened> {
  const context = await browser.newContext({ viewport, deviceScaleFactor: 1 });
  const page = await context.newPage();
  const consoleErrors: string[] = [];
  page.on('console', (m) => {
    if (m.type() === 'error') consoleErrors.push(m.text());
  });
  page.on('pageerror', (e) => consoleErrors.push(String(e)));
  await page.goto(url);
  await applyBodyClass(page);
  await page.waitForFunction(() => (window as any).__posted.some((m: PageToHost) => m.type === 'ready'));
  return { page, consoleErrors };
}

/** VS Code sets the theme class on <body>; the prelude runs before <body> exists. */
export async function applyBodyClass(page: Page): Promise<void> {
  await page.evaluate(() => {
    const c = document.documentElement.dataset.bodyClass;
    if (c) document.body.className = c;
  });
}

export function drawCount(page: Page): Promise<number> {
  return page.evaluate(() => Number(document.body.dataset.drawCount ?? 0));
}

export async function waitForDrawAfter(page: Page, before: number): Promise<void> {
  await page.waitForFunction((n) => Number(document.body.dataset.drawCount ?? 0) > n, before);
}

/** Posts a host → page message the way VS Code delivers it (a window 'message' event). */
export async function send(page: Page, message: HostToPage | unknown): Promise<void> {
  await page.evaluate((m) => window.postMessage(m, '*'), message as object);
}

/** Sends a report and waits until every panel has drawn it. */
export async function sendReport(page: Page, report: unknown): Promise<void> {
  const before = await drawCount(page);
  await send(page, { type: 'report', report });
  await waitForDrawAfter(page, before);
}

export function posted(page: Page): Promise<PageToHost[]> {
  return page.evaluate(() => (window as any).__posted as PageToHost[]);
}

export function violations(page: Page): Promise<string[]> {
  return page.evaluate(() => (window as any).__violations as string[]);
}

export interface Described {
  drawCount: number;
  theme: { background: string; foreground: string; variant: 'dark' | 'light' };
  zoom: { min: number; max: number } | null;
  hidden: { signals: string[]; runs: string[] } | null;
  panels: Array<{
    group: string;
    signals: string[];
    series: Array<{ run: number; runLabel: string; runKind: string; signal: string; stroke: string; dash: number[]; show: boolean }>;
    limits: Array<{ signal: string; which: 'lo' | 'hi'; value: number; y: number; colour: string }>;
    bands: Array<{ signal: string; run: number; t0: number; t1: number; x0: number; x1: number; colour: string }>;
    xRange: { min: number | null; max: number | null };
    bbox: { left: number; top: number; width: number; height: number };
  }>;
}

export function describe(page: Page): Promise<Described> {
  return page.evaluate(() => (window as any).loopwrightPlot.describe());
}

export interface Rect {
  left: number;
  top: number;
  width: number;
  height: number;
}

/**
 * Counts, inside the page (pixel arrays are too big to ship out), the pixels of a panel canvas in
 * `rect` (default: the whole canvas) that are within `tol` of `hex` per channel — or, with
 * `not`, the pixels that are not.
 */
export function countPixels(page: Page, panel: number, hex: string, o: { tol?: number; rect?: Rect; not?: boolean } = {}): Promise<{ count: number; total: number }> {
  return page.evaluate(
    ([i, rgb, tol, rect, not]) => {
      const c = document.querySelectorAll('.lw-panel canvas')[i as number] as HTMLCanvasElement;
      const r = (rect as Rect | null) ?? { left: 0, top: 0, width: c.width, height: c.height };
      const x0 = Math.max(0, Math.round(r.left));
      const y0 = Math.max(0, Math.round(r.top));
      const w = Math.max(1, Math.min(c.width - x0, Math.round(r.width)));
      const h = Math.max(1, Math.min(c.height - y0, Math.round(r.height)));
      const d = c.getContext('2d')!.getImageData(x0, y0, w, h).data;
      const [R, G, B] = rgb as number[];
      let count = 0;
      for (let k = 0; k < d.length; k += 4) {
        const near = Math.abs(d[k] - R) <= (tol as number) && Math.abs(d[k + 1] - G) <= (tol as number) && Math.abs(d[k + 2] - B) <= (tol as number);
        if (near !== not) count++;
      }
      return { count, total: w * h };
    },
    [panel, hexToRgb(hex), o.tol ?? 6, o.rect ?? null, o.not ?? false] as const,
  );
}

export async function pixelAt(page: Page, panel: number, x: number, y: number): Promise<[number, number, number, number]> {
  return page.evaluate(([i, x, y]) => {
    const c = document.querySelectorAll('.lw-panel canvas')[i] as HTMLCanvasElement;
    return [...c.getContext('2d')!.getImageData(x, y, 1, 1).data] as [number, number, number, number];
  }, [panel, Math.round(x), Math.round(y)] as const);
}

export function hexToRgb(hex: string): [number, number, number] {
  const n = parseInt(hex.slice(1), 16);
  return [(n >> 16) & 255, (n >> 8) & 255, n & 255];
}

export function close(a: readonly number[], b: readonly number[], tol = 6): boolean {
  return a.slice(0, 3).every((v, i) => Math.abs(v - b[i]) <= tol);
}
