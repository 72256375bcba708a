// The HTML report of `simulate --html` and `sweep --html` opened from disk in headless Chromium:
// no request leaves the page, the plot canvases are drawn (pixels that are not background), and
// the static part carries poles and the escaped model text.

import { execFileSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { command as simulate } from '../../language/src/cli/simulate';
import { cli, fakeIO } from './fake-io';

const ARGS = ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic'];
let browser: Browser;
const dir = mkdtempSync(join(tmpdir(), 'lw-report-'));

beforeAll(async () => {
  // the page assets come from the build (dist/media), as for the installed CLI
  execFileSync('node', ['scripts/build.mjs'], { stdio: 'pipe' });
  browser = await chromium.launch({ executablePath: '/usr/bin/chromium', args: ARGS });
}, 120_000);

afterAll(async () => {
  await browser?.close();
});

async function open(html: string, name: string) {
  const path = join(dir, name);
  writeFileSync(path, html);
  const page = await browser.newPage();
  const requests: string[] = [];
  page.on('request', (r) => {
    if (!r.url().startsWith('file://') && !r.url().startsWith('data:') && !r.url().startsWith('blob:')) requests.push(r.url());
  });
  const problems: string[] = [];
  page.on('pageerror', (e) => problems.push(e.message));
  await page.goto(`file://${path}`);
  await page.waitForFunction(() => document.querySelectorAll('canvas').length > 0, undefined, { timeout: 20_000 });
  await page.waitForTimeout(300);
  // a drawn canvas has pixels of more than one colour
  const drawn = await page.evaluate(() =>
    [...document.querySelectorAll('canvas')].map((c) => {
      const ctx = (c as HTMLCanvasElement).getContext('2d');
      if (!ctx || c.width === 0 || c.height === 0) return 0;
      const d = ctx.getImageData(0, 0, c.width, c.height).data;
      const first = d[0] * 65536 + d[1] * 256 + d[2] + d[3] * 16777216;
      let other = 0;
      for (let i = 0; i < d.length; i += 4) if (d[i] * 65536 + d[i + 1] * 256 + d[i + 2] + d[i + 3] * 16777216 !== first) other++;
      return other;
    }),
  );
  const staticText = await page.evaluate(() => document.getElementById('lw-static')?.textContent ?? '');
  const model = await page.evaluate(() => document.getElementById('lw-model')?.textContent ?? '');
  await page.close();
  return { requests, problems, drawn, staticText, model };
}

describe('HTML reports', () => {
  it('simulate --html: offline, plots drawn, poles and the model text', async () => {
    const io = fakeIO();
    const code = await simulate.run(['samples/reel.loop', '--html', 'reel.html'], io);
    expect(code).toBe(0);
    const html = io.written.get('reel.html')!;
    expect(html).toContain('http-equiv="Content-Security-Policy" content="default-src &#39;none&#39;');
    expect(html).not.toMatch(/<(script|link|img)[^>]+(src|href)=/i); // nothing loaded from outside
    const r = await open(html, 'reel.html');
    expect(r.requests).toEqual([]);
    expect(r.problems).toEqual([]);
    expect(r.drawn.length).toBeGreaterThan(0);
    expect(r.drawn.filter((n) => n > 100).length).toBeGreaterThan(0);
    expect(r.staticText).toContain('Closed-loop poles');
    expect(r.staticText).toContain('Margins');
    expect(r.model).toContain('plant Reel "cable reel: DC motor, gearbox and drum under cable tension"');
  }, 60_000);

  it('sweep --html: every run in the page, and model text that looks like markup stays text', async () => {
    const hostile = (await import('node:fs')).readFileSync('test/cli/fixtures/arm.loop', 'utf8').replace('# A balancing arm', '# </pre><script>window.__pwned = 1</script> <img src="http://example.invalid/x.png"> A balancing arm');
    const r0 = await cli(['sweep', 'arm.loop', '--html', 'arm.html'], { 'arm.loop': hostile });
    expect(r0.code).toBe(1); // the 0.7 rad run falls over
    const html = r0.io.written.get('arm.html')!;
    expect(html).not.toContain('<script>window.__pwned');
    const r = await open(html, 'arm.html');
    expect(r.requests).toEqual([]);
    expect(r.problems).toEqual([]);
    expect(r.drawn.filter((n) => n > 100).length).toBeGreaterThan(0);
    expect(r.model).toContain('<script>window.__pwned = 1</script>');
    expect(r.staticText).toContain('Arm.angle = 0.7 [rad]');
    const page = await browser.newPage();
    await page.goto(`file://${join(dir, 'arm.html')}`);
    expect(await page.evaluate(() => (window as unknown as { __pwned?: number }).__pwned)).toBeUndefined();
    await page.close();
  }, 60_000);
});
