// The plot page in headless Chromium: production HTML and CSP from page.ts, a stub VS Code API,
// synthetic reports from fixtures.ts (closed-form second-order responses).
import { afterAll, afterEach, beforeAll, describe as group, expect, test } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import type { LoopRunReport } from '../../language/src/protocol';
import { parseCsv } from '../../client/media/csv';
import { CATEGORICAL, sequential } from '../../client/media/palette';
import { reportPageHtml } from '../../client/src/page';
import { compareReport, grid, makeRun, SIGNALS, simulateReport, sweepReport, SWEEP_ZETAS } from './fixtures';
import {
  applyBodyClass, buildMedia, close, countPixels, DARK, describe, drawCount, hexToRgb, launch, LIGHT, open, OUT, pixelAt,
  posted, send, sendReport, serve, violations, waitForDrawAfter, type TestServer,
} from './harness';

let browser: Browser;
let media: Record<string, string>;
let dark: TestServer;
let light: TestServer;
const pages: Page[] = [];

beforeAll(async () => {
  media = buildMedia();
  browser = await launch();
  dark = await serve(media, DARK);
  light = await serve(media, LIGHT);
});

afterAll(async () => {
  for (const p of pages) await p.context().close().catch(() => {});
  await browser?.close();
  await dark?.close();
  await light?.close();
});

afterEach(async () => {
  for (const p of pages.splice(0)) await p.context().close().catch(() => {});
});

async function openPage(server: TestServer = dark) {
  const o = await open(browser, server.url);
  pages.push(o.page);
  return o;
}

/** Pixels of a panel's plotting area within `tol` of `hex`. */
async function countColour(page: Page, panel: number, hex: string, tol = 40): Promise<number> {
  const d = await describe(page);
  return (await countPixels(page, panel, hex, { tol, rect: d.panels[panel].bbox })).count;
}

async function plotArea(page: Page, panel: number) {
  const box = await page.locator('.lw-panel .u-over').nth(panel).boundingBox();
  if (!box) throw new Error('no plotting area');
  return box;
}

async function clickAndWaitForPost(page: Page, selector: string, type: string) {
  const before = (await posted(page)).length;
  await page.click(selector);
  await page.waitForFunction(([n, t]) => (window as any).__posted.slice(n as number).some((m: { type: string }) => m.type === t), [before, type] as const);
  return (await posted(page)).slice(before).find((m) => m.type === type)!;
}

group('loading and drawing', { timeout: 180_000 }, () => {
  test('says ready first, then draws every panel without CSP violations or console errors', async () => {
    const { page, consoleErrors } = await openPage();
    const first = await posted(page);
    expect(first).toEqual([{ type: 'ready' }]);
    const report = simulateReport();
    await sendReport(page, report);
    const d = await describe(page);
    expect(d.panels.map((p) => p.group)).toEqual(['position', 'rate', 'actuator']);
    for (let i = 0; i < d.panels.length; i++) {
      const differing = (await countPixels(page, i, '#1e1e1e', { tol: 3, not: true })).count;
      expect(differing, `panel ${i} has drawn pixels`).toBeGreaterThan(500);
      // Every series of the panel is visible in its own colour.
      for (const s of d.panels[i].series) expect(await countColour(page, i, s.stroke), `${s.signal} drawn`).toBeGreaterThan(30);
    }
    expect(await violations(page)).toEqual([]);
    expect(consoleErrors).toEqual([]);
  });

  test('a run with an error shows its message prominently, with its time and state', async () => {
    const { page } = await openPage();
    const report = simulateReport();
    const run = report.runs[0];
    const cut = 150;
    run.t = run.t.slice(0, cut);
    for (const k of Object.keys(run.signals)) run.signals[k] = run.signals[k].slice(0, cut);
    run.error = { message: 'Boom.tilt became non-finite', time: run.t[cut - 1], state: 'Boom.tilt', code: 'sim.nonfinite' };
    await sendReport(page, report);
    const alert = page.locator('.lw-alerts [role="alert"]');
    await expect.poll(() => alert.count()).toBe(1);
    const text = await alert.textContent();
    expect(text).toContain('Boom.tilt became non-finite');
    expect(text).toContain('state Boom.tilt');
    expect(text).toContain('sim.nonfinite');
    expect(await alert.isVisible()).toBe(true);
    expect(await page.locator('.lw-run .lw-run-error').textContent()).toBe(text);
  });

  test('status messages show in the toolbar', async () => {
    const { page } = await openPage();
    await send(page, { type: 'status', kind: 'running', message: 'BoomHold' });
    await expect.poll(() => page.locator('.lw-status').textContent()).toBe('Running… BoomHold');
    await send(page, { type: 'status', kind: 'error', message: 'unknown name kq', line: 12 });
    await expect.poll(() => page.locator('.lw-status').textContent()).toBe('Line 12: unknown name kq');
    await send(page, { type: 'status', kind: 'idle' });
    await expect.poll(() => page.locator('.lw-status').textContent()).toBe('');
  });

  test('malformed messages show a clear error in the page and never break it', async () => {
    const { page, consoleErrors } = await openPage();
    const problem = page.locator('.lw-problem');
    const cases: Array<[unknown, string]> = [
      ['garbage', 'expected a message object'],
      [{ type: 'paint' }, 'unknown message type'],
      [{ type: 'report', report: { loop: 1 } }, 'loop must be a string'],
      [{ type: 'report', report: { ...simulateReport(), runs: [{ ...simulateReport().runs[0], t: [0, 1] }] } }, 'has 400 samples but t has 2'],
      [{ type: 'report', report: { ...simulateReport(), runs: [{ ...simulateReport().runs[0], t: [...simulateReport().runs[0].t].reverse() }] } }, 'must not decrease'],
      [{ type: 'status', kind: 'sleeping' }, "kind must be 'running', 'idle' or 'error'"],
    ];
    for (const [message, expected] of cases) {
      await send(page, message);
      await expect.poll(() => problem.textContent()).toContain(expected);
      expect(await problem.isVisible()).toBe(true);
    }
    const errors = (await posted(page)).filter((m) => m.type === 'error');
    expect(errors.length).toBe(cases.length);
    // A good report afterwards draws normally and clears the problem.
    await sendReport(page, simulateReport());
    expect(await problem.isVisible()).toBe(false);
    expect((await describe(page)).panels.length).toBe(3);
    expect(consoleErrors).toEqual([]);
  });
});

group('legend, readout and zoom', { timeout: 180_000 }, () => {
  test('legend entries equal the shown signals and a toggle applies across runs (mouse and keyboard)', async () => {
    const { page } = await openPage();
    const report = compareReport();
    await sendReport(page, report);
    const names = await page.locator('.lw-legend:not(.lw-legend-runs) .lw-legend-item .lw-legend-name').allTextContents();
    expect(names).toEqual(report.signals.map((s) => s.name));
    expect(await page.locator('.lw-legend-runs .lw-legend-name').allTextContents()).toEqual(['nonlinear', 'linear']);

    const tiltColour = (await describe(page)).panels[0].series.find((s) => s.signal === 'Boom.tilt')!.stroke;
    expect(await countColour(page, 0, tiltColour, 10)).toBeGreaterThan(50);
    let before = await drawCount(page);
    await page.click('[data-signal="Boom.tilt"]');
    await waitForDrawAfter(page, before);
    let d = await describe(page);
    const tilt = d.panels[0].series.filter((s) => s.signal === 'Boom.tilt');
    expect(tilt.map((s) => s.runLabel)).toEqual(['nonlinear', 'linear']);
    expect(tilt.every((s) => !s.show)).toBe(true);
    expect(d.panels[0].series.filter((s) => s.signal === 'target').every((s) => s.show)).toBe(true);
    expect(d.hidden).toEqual({ signals: ['Boom.tilt'], runs: [] });
    expect(await countColour(page, 0, tiltColour, 10)).toBeLessThan(5);
    expect(await page.getAttribute('[data-signal="Boom.tilt"]', 'aria-pressed')).toBe('false');

    // Keyboard: focus stays on the entry, Space toggles it back on.
    await page.focus('[data-signal="Boom.tilt"]');
    before = await drawCount(page);
    await page.keyboard.press('Space');
    await waitForDrawAfter(page, before);
    d = await describe(page);
    expect(d.panels[0].series.filter((s) => s.signal === 'Boom.tilt').every((s) => s.show)).toBe(true);
    expect(await page.evaluate(() => (document.activeElement as HTMLElement).dataset.signal)).toBe('Boom.tilt');
    expect(await page.getAttribute('[data-signal="Boom.tilt"]', 'aria-pressed')).toBe('true');
  });

  test('the readout shows every series at the cursor, and the cursor is synced across panels', async () => {
    const { page } = await openPage();
    const report = simulateReport();
    await sendReport(page, report);
    const area = await plotArea(page, 0);
    await page.mouse.move(area.x + area.width * 0.4, area.y + area.height / 2);
    await expect.poll(() => page.locator('.lw-readout-time').textContent()).toMatch(/^t = /);
    const tText = (await page.locator('.lw-readout-time').textContent())!;
    const t = Number(/t = ([-\d.e]+) s/.exec(tText)![1]);
    const run = report.runs[0];
    const idx = run.t.reduce((best, x, i) => (Math.abs(x - t) < Math.abs(run.t[best] - t) ? i : best), 0);
    const items = page.locator('.lw-readout-item:not([hidden])');
    expect(await items.count()).toBe(4);
    for (const name of ['Boom.tilt', 'Boom.rate', 'Steady.drive']) {
      const value = Number(await items.filter({ hasText: `${name} (nonlinear)` }).locator('.lw-readout-value').textContent());
      expect(value).toBeCloseTo(run.signals[name][idx], 3);
    }
    // The other panels' cursor lines follow.
    for (const i of [1, 2]) {
      const cls = await page.locator('.lw-panel').nth(i).locator('.u-cursor-x').getAttribute('class');
      expect(cls).not.toContain('u-off');
    }
  });

  test('drag zooms x on every panel; double-click and the reset button show all again', async () => {
    const { page } = await openPage();
    await sendReport(page, compareReport());
    const area = await plotArea(page, 1);
    await page.mouse.move(area.x + area.width * 0.25, area.y + 20);
    await page.mouse.down();
    await page.mouse.move(area.x + area.width * 0.4, area.y + 40, { steps: 5 });
    await page.mouse.move(area.x + area.width * 0.5, area.y + 40, { steps: 5 });
    await page.mouse.up();
    await expect.poll(async () => (await describe(page)).zoom).not.toBeNull();
    let d = await describe(page);
    expect(d.zoom!.min).toBeCloseTo(1.5, 1);
    expect(d.zoom!.max).toBeCloseTo(3, 1);
    for (const p of d.panels) expect(p.xRange).toEqual({ min: d.zoom!.min, max: d.zoom!.max });

    const area0 = await plotArea(page, 0);
    await page.mouse.dblclick(area0.x + area0.width / 2, area0.y + area0.height / 2);
    await expect.poll(async () => (await describe(page)).zoom).toBeNull();
    d = await describe(page);
    for (const p of d.panels) expect(p.xRange).toEqual({ min: 0, max: 6 });

    await page.mouse.move(area.x + area.width * 0.1, area.y + 20);
    await page.mouse.down();
    await page.mouse.move(area.x + area.width * 0.3, area.y + 20, { steps: 5 });
    await page.mouse.up();
    await expect.poll(async () => (await describe(page)).zoom).not.toBeNull();
    await page.click('#lw-reset-zoom');
    await expect.poll(async () => (await describe(page)).zoom).toBeNull();
    for (const p of (await describe(page)).panels) expect(p.xRange).toEqual({ min: 0, max: 6 });
  });

  test('state survives a reload: report, zoom and toggles are drawn at once, and ready is still posted', async () => {
    const { page } = await openPage();
    const report = compareReport();
    await sendReport(page, report);
    await page.click('[data-run="linear"]');
    const area = await plotArea(page, 0);
    await page.mouse.move(area.x + area.width * 0.5, area.y + 10);
    await page.mouse.down();
    await page.mouse.move(area.x + area.width * 0.75, area.y + 10, { steps: 8 });
    await page.mouse.up();
    await expect.poll(async () => (await describe(page)).zoom).not.toBeNull();
    const saved = await describe(page);

    await page.reload();
    await page.waitForFunction(() => Number(document.body.dataset.drawCount ?? 0) >= 1);
    await applyBodyClass(page);
    const after = await describe(page);
    expect(after.zoom).toEqual(saved.zoom);
    expect(after.hidden).toEqual({ signals: [], runs: ['linear'] });
    for (const p of after.panels) {
      expect(p.xRange).toEqual(saved.zoom);
      expect(p.series.filter((s) => s.runLabel === 'linear').every((s) => !s.show)).toBe(true);
      expect(p.series.filter((s) => s.runLabel === 'nonlinear').every((s) => s.show)).toBe(true);
    }
    expect(await posted(page)).toContainEqual({ type: 'ready' });
    expect(await page.locator('.lw-title').textContent()).toBe(report.loop);
  });
});

group('styling', { timeout: 180_000 }, () => {
  test('a theme switch redraws with the new background and the light palette', async () => {
    const { page } = await openPage();
    await sendReport(page, simulateReport());
    expect(close(await pixelAt(page, 0, 2, 2), hexToRgb('#1e1e1e'), 1)).toBe(true);
    expect((await describe(page)).panels[0].series[0].stroke).toBe(CATEGORICAL.dark[0]);

    const before = await drawCount(page);
    await page.evaluate((vars) => {
      for (const [k, v] of Object.entries(vars)) document.documentElement.style.setProperty(k, v);
      document.body.className = 'vscode-light';
    }, LIGHT.vars);
    await waitForDrawAfter(page, before);
    expect(close(await pixelAt(page, 0, 2, 2), hexToRgb('#ffffff'), 1)).toBe(true);
    const d = await describe(page);
    expect(d.theme.variant).toBe('light');
    expect(d.panels[0].series[0].stroke).toBe(CATEGORICAL.light[0]);
    expect(await countColour(page, 0, CATEGORICAL.light[0], 30)).toBeGreaterThan(30);

    // A 'theme' message redraws too (VS Code may change colours without a class change).
    const n = await drawCount(page);
    await page.evaluate(() => document.documentElement.style.setProperty('--vscode-editor-background', '#fdf6e3'));
    await send(page, { type: 'theme' });
    await waitForDrawAfter(page, n);
    expect(close(await pixelAt(page, 0, 2, 2), hexToRgb('#fdf6e3'), 1)).toBe(true);
  });

  test('the linear run is dashed in the colour of its nonlinear signal', async () => {
    const { page } = await openPage(light);
    await sendReport(page, compareReport());
    const d = await describe(page);
    for (const p of d.panels) {
      for (const s of p.signals) {
        const nl = p.series.find((x) => x.signal === s && x.runKind === 'nonlinear')!;
        const lin = p.series.find((x) => x.signal === s && x.runKind === 'linear')!;
        expect(nl.dash).toEqual([]);
        expect(lin.dash.length).toBeGreaterThan(0);
        expect(lin.stroke).toBe(nl.stroke);
      }
    }
    const strokes = d.panels.flatMap((p) => p.series.filter((s) => s.runKind === 'nonlinear').map((s) => s.stroke));
    expect(new Set(strokes).size).toBe(strokes.length);
  });

  test('limit lines are drawn dashed at lo and hi, and at-limit intervals are shaded', async () => {
    const { page } = await openPage();
    const report = simulateReport();
    await sendReport(page, report);
    const d = await describe(page);
    const act = d.panels.findIndex((p) => p.group === 'actuator');
    const p = d.panels[act];
    expect(p.limits.map((l) => [l.which, l.value])).toEqual([['lo', -1.5], ['hi', 1.5]]);
    for (const other of d.panels) if (other !== p) expect(other.limits).toEqual([]);
    for (const l of p.limits) {
      // Along the line's row, away from the curve, the limit colour alternates with gaps.
      const row = { left: p.bbox.left + p.bbox.width * 0.5, top: Math.floor(l.y), width: p.bbox.width * 0.3, height: 1 };
      const hit = await countPixels(page, act, l.colour, { tol: 60, rect: row });
      const on = hit.count / hit.total;
      expect(on, `${l.which} limit line`).toBeGreaterThan(0.3);
      expect(on, `${l.which} limit line is dashed`).toBeLessThan(0.8);
    }
    const expected = report.runs[0].atLimit['Steady.drive'];
    expect(expected.length).toBeGreaterThan(0);
    expect(p.bands.map((b) => [b.t0, b.t1])).toEqual(expected);
    const column = async (x: number) => {
      const r = await countPixels(page, act, '#1e1e1e', { tol: 4, not: true, rect: { left: x, top: p.bbox.top + 2, width: 1, height: p.bbox.height - 4 } });
      return r.count / r.total;
    };
    const band = p.bands[0];
    expect(await column((band.x0 + band.x1) / 2)).toBeGreaterThan(0.9);
    expect(await column(p.bbox.left + p.bbox.width * 0.71)).toBeLessThan(0.2);
  });

  test('sweep runs are coloured along the sequential scale and the legend gives value and recovery', async () => {
    const { page } = await openPage();
    const report = sweepReport();
    await sendReport(page, report);
    const d = await describe(page);
    const tilt = d.panels[0].series.filter((s) => s.signal === 'Boom.tilt');
    expect(tilt.map((s) => s.stroke)).toEqual(SWEEP_ZETAS.map((z) => sequential((z - 0.2) / 0.7, 'dark')));
    const entries = page.locator('.lw-legend-runs .lw-legend-item');
    expect(await entries.count()).toBe(SWEEP_ZETAS.length);
    for (let i = 0; i < SWEEP_ZETAS.length; i++) {
      const text = (await entries.nth(i).textContent())!;
      expect(text).toContain(`Boom.damping = ${SWEEP_ZETAS[i]}`);
      expect(text).toContain(report.runs[i].recovered ? '✓' : '✗');
    }
    expect(report.runs.some((r) => !r.recovered)).toBe(true);
  });

  test('markup in names, descriptions and messages stays inert text', async () => {
    const { page, consoleErrors } = await openPage();
    let dialogs = 0;
    page.on('dialog', (dlg) => {
      dialogs++;
      void dlg.dismiss();
    });
    const evil = '<img src=x onerror=alert(1)>';
    const signals = SIGNALS.map((s, i) => ({ ...s, name: `${evil}${i}`, unit: i === 0 ? evil : s.unit, description: evil, group: i < 2 ? evil : s.group }));
    const run = makeRun(evil, 'nonlinear', { zeta: 0.4, omega: 3 }, grid(6, 200), signals);
    run.expects[0].text = evil;
    run.expects[0].measuredText = evil;
    run.error = { message: evil, time: 6, state: evil, code: evil };
    const report: LoopRunReport = { loop: evil, file: evil, signals, runs: [run], warnings: [evil] };
    await sendReport(page, report);
    await send(page, { type: 'status', kind: 'error', message: evil });
    await expect.poll(() => page.locator('.lw-status').textContent()).toBe(evil);
    expect(await page.evaluate(() => document.querySelectorAll('img, [onerror]').length)).toBe(0);
    expect(await page.locator('.lw-legend-name').first().textContent()).toBe(`${evil}0`);
    expect(await page.locator('.lw-alert').textContent()).toContain(evil);
    expect(await page.locator('.lw-panel-title').first().textContent()).toContain(evil);
    const requestsBefore = dark.requests.length;
    await page.waitForTimeout(200);
    expect(dark.requests.slice(requestsBefore).filter((r) => r.endsWith('/x'))).toEqual([]);
    expect(dark.requests.filter((r) => r.endsWith('/x'))).toEqual([]);
    expect(dialogs).toBe(0);
    expect(await violations(page)).toEqual([]);
    expect(consoleErrors).toEqual([]);
  });
});

group('exports', { timeout: 180_000 }, () => {
  test('Export CSV posts every run, and parsing it back gives the data that was sent', async () => {
    const { page } = await openPage();
    const report = compareReport(120);
    await sendReport(page, report);
    const m = await clickAndWaitForPost(page, '#lw-export-csv', 'exportCsv');
    if (m.type !== 'exportCsv') throw new Error('wrong message');
    const rows = parseCsv(m.csv);
    expect(rows[0]).toEqual(['run', 'kind', 'sweep value', 't [s]', 'Boom.tilt [rad]', 'target [rad]', 'Boom.rate [rad/s]', 'Steady.drive [N*m]']);
    expect(rows.length).toBe(1 + report.runs.reduce((n, r) => n + r.t.length, 0));
    let k = 1;
    for (const run of report.runs) {
      for (let i = 0; i < run.t.length; i++, k++) {
        const row = rows[k];
        expect(row.slice(0, 3)).toEqual([run.label, run.kind, '']);
        expect(Number(row[3])).toBe(run.t[i]);
        report.signals.forEach((s, j) => expect(Number(row[4 + j])).toBe(run.signals[s.name][i]));
      }
    }
  });

  test('Export PNG posts one image composed of all panels', async () => {
    const { page } = await openPage();
    await sendReport(page, simulateReport());
    const m = await clickAndWaitForPost(page, '#lw-export-png', 'exportPng');
    if (m.type !== 'exportPng') throw new Error('wrong message');
    expect(m.dataUrl.startsWith('data:image/png;base64,')).toBe(true);
    writeFileSync(join(OUT, 'export.png'), Buffer.from(m.dataUrl.split(',')[1], 'base64'));
    const info = await page.evaluate(async (url) => {
      const img = new Image();
      img.src = url;
      await img.decode();
      const c = document.createElement('canvas');
      c.width = img.width;
      c.height = img.height;
      const ctx = c.getContext('2d')!;
      ctx.drawImage(img, 0, 0);
      const data = ctx.getImageData(0, 0, c.width, c.height).data;
      const colours = new Set<number>();
      for (let i = 0; i < data.length; i += 4 * 7) colours.add((data[i] << 16) | (data[i + 1] << 8) | data[i + 2]);
      const heights = [...document.querySelectorAll('.lw-panel canvas')].reduce((h, e) => h + (e as HTMLCanvasElement).height, 0);
      return { width: img.width, height: img.height, colours: colours.size, heights };
    }, m.dataUrl);
    expect(info.height).toBeGreaterThan(info.heights);
    expect(info.width).toBeGreaterThan(600);
    expect(info.colours).toBeGreaterThan(20);
  });
});

group('standalone report', { timeout: 180_000 }, () => {
  test('the self-contained report opens from file:// without any network request', async () => {
    const report = compareReport();
    const html = reportPageHtml({ report, script: media['plot.js'], styles: [media['uPlot.min.css'], media['style.css']] });
    const file = join(OUT, 'report.html');
    writeFileSync(file, html);
    const context = await browser.newContext({ viewport: { width: 1000, height: 900 }, acceptDownloads: true });
    const page = await context.newPage();
    pages.push(page);
    const url = pathToFileURL(file).href;
    const requests: string[] = [];
    const errors: string[] = [];
    page.on('request', (r) => {
      if (r.url() !== url) requests.push(r.url());
    });
    page.on('console', (m) => m.type() === 'error' && errors.push(m.text()));
    page.on('pageerror', (e) => errors.push(String(e)));
    await page.addInitScript(() => {
      (window as any).__violations = [];
      document.addEventListener('securitypolicyviolation', (e) => (window as any).__violations.push(e.violatedDirective));
    });
    await page.goto(url);
    await page.waitForFunction(() => Number(document.body.dataset.drawCount ?? 0) >= 1);
    const d = await describe(page);
    expect(d.panels.length).toBe(3);
    expect(d.panels[0].series.length).toBe(4);
    expect(await page.evaluate(() => [...document.querySelectorAll('.lw-panel canvas')].length)).toBe(3);
    expect(requests).toEqual([]);
    expect(errors).toEqual([]);
    expect(await violations(page)).toEqual([]);
    await page.screenshot({ path: join(OUT, 'report.png'), fullPage: true });

    // Without a host, Export CSV becomes a download of the same text.
    const [download] = await Promise.all([page.waitForEvent('download'), page.click('#lw-export-csv')]);
    expect(download.suggestedFilename()).toBe('BoomHold.csv');
    const path = await download.path();
    const { readFileSync } = await import('node:fs');
    const rows = parseCsv(readFileSync(path, 'utf8'));
    expect(rows.length).toBe(1 + 2 * report.runs[0].t.length);
  });
});

group('screenshots (test-output/webview/*.png, for looking at)', { timeout: 180_000 }, () => {
  for (const [name, theme, make] of [
    ['simulate-dark', 'dark', simulateReport],
    ['compare-light', 'light', compareReport],
    ['sweep-dark', 'dark', sweepReport],
  ] as const) {
    test(name, async () => {
      const { page, consoleErrors } = await openPage(theme === 'dark' ? dark : light);
      await sendReport(page, make());
      const area = await plotArea(page, 0);
      await page.mouse.move(area.x + area.width * 0.3, area.y + area.height / 2);
      await expect.poll(() => page.locator('.lw-readout-time').textContent()).toMatch(/^t = /);
      await page.screenshot({ path: join(OUT, `${name}.png`), fullPage: true });
      expect(consoleErrors).toEqual([]);
      expect(await violations(page)).toEqual([]);
    });
  }
});
