// Opens the production plot page (page.ts HTML and CSP, the built dist/media bundle) in headless
// Chromium for the webview benchmarks, served from 127.0.0.1 with a stub host API and dark theme
// colours. Returns the tab plus what must be closed at the end.
import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { createServer } from 'node:http';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { build } from 'esbuild';
import { chromium } from 'playwright-core';

export async function openPlotPage() {
  const root = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
  execFileSync(process.execPath, [join(root, 'scripts', 'build.mjs')], { cwd: root, stdio: 'inherit' });
  const media = Object.fromEntries(['plot.js', 'style.css', 'uPlot.min.css'].map((f) => [f, readFileSync(join(root, 'dist', 'media', f), 'utf8')]));
  // page.ts is TypeScript: bundle it on the fly to use the production HTML and CSP.
  const bundled = await build({ entryPoints: [join(root, 'client', 'src', 'page.ts')], bundle: true, format: 'esm', platform: 'node', write: false, logLevel: 'warning' });
  const page = await import(`data:text/javascript;base64,${Buffer.from(bundled.outputFiles[0].text).toString('base64')}`);

  const prelude = `window.acquireVsCodeApi = () => { let s; return { postMessage() {}, getState: () => s, setState: (v) => { s = v; } }; };
for (const [k, v] of Object.entries({ '--vscode-editor-background': '#1e1e1e', '--vscode-editor-foreground': '#d4d4d4' })) document.documentElement.style.setProperty(k, v);`;

  let origin = '';
  const server = createServer((req, res) => {
    const path = new URL(req.url ?? '/', 'http://127.0.0.1').pathname;
    if (path === '/page') {
      res.writeHead(200, { 'content-type': 'text/html' });
      res.end(page.plotPageHtml({ nonce: page.createNonce(), cspSource: origin, assets: { script: `${origin}/media/plot.js`, style: `${origin}/media/style.css`, uplotStyle: `${origin}/media/uPlot.min.css` }, prelude }));
    } else if (path.startsWith('/media/') && media[path.slice(7)]) {
      res.writeHead(200, { 'content-type': path.endsWith('.js') ? 'text/javascript' : 'text/css' });
      res.end(media[path.slice(7)]);
    } else res.writeHead(404).end();
  });
  await new Promise((ok) => server.listen(0, '127.0.0.1', ok));
  origin = `http://127.0.0.1:${server.address().port}`;

  const browser = await chromium.launch({
    executablePath: '/usr/bin/chromium',
    args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic'],
  });
  const tab = await (await browser.newContext({ viewport: { width: 1200, height: 1000 }, deviceScaleFactor: 1 })).newPage();
  await tab.goto(`${origin}/page`);
  await tab.waitForFunction(() => window.loopwrightPlot !== undefined);
  return { tab, browser, server };
}
