// The live-tuning side panel in headless Chromium: knobs (keyboard and mouse), the pole map's
// geometry, in-place updates that keep zoom, cursor and toggles, the not-re-run banner and the
// pinned reference. Reports from tuning-fixtures.ts (synthetic; spans into its DOCUMENT).
import { afterAll, afterEach, beforeAll, describe as group, expect, test } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { join } from 'node:path';
import type { PageToHost } from '../../client/media/messages';
import { CATEGORICAL, parseHex } from '../../client/media/palette';
import { applyBodyClass, buildMedia, countPixels, DARK, describe, drawCount, launch, LIGHT, open, OUT, posted, send, sendReport, serve, violations, waitForDrawAfter, type TestServer } from './harness';
import { applyEdits, CLOSED, DOCUMENT, knobsOf, OPEN, tunedReport } from './tuning-fixtures';

let browser: Browser;
let dark: TestServer;
let light: TestServer;
const pages: Page[] = [];

beforeAll(async () => {
  const media = buildMedia();
  browser = await launch();
  dark = await serve(media, DARK);
  light = await serve(media, LIGHT);
});

afterAll(async () => {
  await browser?.close();
  await dark?.close();
  await light?.close();
});

afterEach(async () => {
  for (const p of pages.splice(0)) await p.context().close().catch(() => {});
});

/** Opens the page; the returned check asserts no CSP violation and no console error so far. */
async function openPage(server: TestServer = dark) {
  const o = await open(browser, server.url);
  pages.push(o.page);
  const clean = async () => {
    expect(await violations(o.page)).toEqual([]);
    expect(o.consoleErrors).toEqual([]);
  };
  return { ...o, clean };
}

type Edit = Extract<PageToHost, { type: 'editParam' }>;

async function edits(page: Page, from = 0): Promise<Edit[]> {
  return (await posted(page)).slice(from).filter((m): m is Edit => m.type === 'editParam');
}

/** Sends a report with the document version it was computed from, and waits until it is drawn. */
async function sendReportAt(page: Page, report: unknown, version: number): Promise<void> {
  const before = await drawCount(page);
  await send(page, { type: 'report', report, version });
  await waitForDrawAfter(page, before);
}

/** One knob as the page describes it. */
async function knob(page: Page, name: string): Promise<{ value: number; text: string; span: { start: number; end: number } }> {
  return ((await describe(page)) as any).knobs.find((k: any) => k.name === name);
}

/** 3 significant digits in fixed notation (the style of a literal typed with fewer). */
function sig3(v: number): string {
  const r = Number(v.toPrecision(3));
  return r.toFixed(Math.max(0, 2 - Math.floor(Math.log10(Math.abs(r)))));
}

/** The slider's value at a position, from the input's own min/max and the knob's anchor. */
async function sliderValue(page: Page, name: string, anchor: number): Promise<number> {
  const { pos, min, max } = await page.locator(`.lw-knob[data-param="${name}"] input[type=range]`).evaluate((e: HTMLInputElement) => ({ pos: Number(e.value), min: Number(e.min), max: Number(e.max) }));
  const u = (2 * (pos - min)) / (max - min) - 1;
  return anchor * 10 ** u;
}

group('knobs', { timeout: 180_000 }, () => {
  test('lists controller and loop params, plant params behind a toggle; sliders are labelled with name and unit', async () => {
    const { page, clean } = await openPage();
    await sendReport(page, tunedReport());
    const shown = page.locator('.lw-knob:visible');
    expect(await shown.evaluateAll((es) => es.map((e) => (e as HTMLElement).dataset.param))).toEqual(['Steady.kp', 'Steady.kd', 'Steady.bias', 'BoomHold.ref']);
    expect(await page.getAttribute('.lw-knob[data-param="Steady.kp"] input[type=range]', 'aria-label')).toBe('Steady.kp [N*m/rad]');
    expect(await page.getAttribute('.lw-knob[data-param="Steady.bias"] input[type=range]', 'aria-label')).toBe('Steady.bias');
    expect(await page.inputValue('.lw-knob[data-param="Steady.kd"] .lw-knob-field')).toBe('2.2');
    const toggle = page.locator('.lw-plant-toggle');
    expect(await toggle.getAttribute('aria-expanded')).toBe('false');
    await toggle.click();
    expect(await toggle.getAttribute('aria-expanded')).toBe('true');
    expect(await shown.count()).toBe(6);
    expect(await page.locator('.lw-knob[data-param="Boom.arm"]').isVisible()).toBe(true);
    // The log range, a decade each way, is written under the slider.
    expect(await page.locator('.lw-knob[data-param="Steady.kp"] .lw-knob-range').textContent()).toBe('1.4 … 140 N*m/rad (log)');
    expect(await page.locator('.lw-knob[data-param="Steady.bias"] .lw-knob-range').textContent()).toBe('-1 … 1 (linear)');
    await clean();
  });

  test('ArrowRight on a slider posts final edits with the log-mapped literal; spans follow the edits', async () => {
    const { page, clean } = await openPage();
    await sendReport(page, tunedReport());
    const slider = page.locator('.lw-knob[data-param="Steady.kp"] input[type=range]');
    await slider.focus();
    const expected: string[] = [];
    for (let i = 0; i < 3; i++) {
      await page.keyboard.press('ArrowRight');
      expected.push(`${sig3(await sliderValue(page, 'Steady.kp', 14))} [N*m/rad]`);
    }
    await expect.poll(async () => (await edits(page)).length).toBe(3);
    const kp = await edits(page);
    expect(kp.map((e) => e.newText)).toEqual(expected);
    expect(kp.every((e) => e.final && e.name === 'Steady.kp')).toBe(true);
    // 14 · 10^(1/120) per step, three steps.
    expect(Number(expected[2].split(' ')[0])).toBeCloseTo(14 * 10 ** (3 / 120), 1);

    // kd sits after kp in the file: its span must have moved with kp's longer text.
    const kdSlider = page.locator('.lw-knob[data-param="Steady.kd"] input[type=range]');
    await kdSlider.focus();
    await page.keyboard.press('ArrowLeft');
    await expect.poll(async () => (await edits(page)).length).toBe(4);
    const all = await edits(page);
    const kdText = `${sig3(await sliderValue(page, 'Steady.kd', 2.2))} [N*m*s/rad]`;
    expect(all[3]).toMatchObject({ name: 'Steady.kd', newText: kdText, final: true });
    const doc = applyEdits(DOCUMENT, all);
    expect(doc).toBe(DOCUMENT.replace('kp   = 14 [N*m/rad]', `kp   = ${expected[2]}`).replace('kd   = 2.2 [N*m*s/rad]', `kd   = ${kdText}`));

    // The host's report of the edited document arrives: knobs adopt its spans and re-centre.
    await sendReport(page, tunedReport({ doc }));
    const d = await describe(page);
    const kpKnob = (d as any).knobs.find((k: any) => k.name === 'Steady.kp');
    expect(kpKnob).toMatchObject({ anchor: Number(expected[2].split(' ')[0]), position: kpKnob.steps / 2, span: knobsOf(doc)[2].span });
    expect(await page.evaluate(() => (document.activeElement as HTMLElement).closest('.lw-knob')?.getAttribute('data-param'))).toBe('Steady.kd');
    await clean();
  });

  test('a report that does not show the last edit is held back, then adopted once the edit is 1.5 s old (an undo in the editor)', async () => {
    const { page, clean } = await openPage();
    await sendReport(page, tunedReport());
    const slider = page.locator('.lw-knob[data-param="Steady.kp"] input[type=range]');
    await slider.focus();
    await page.keyboard.press('ArrowRight');
    await expect.poll(async () => (await edits(page)).length).toBe(1);
    const stepped = Number((await edits(page))[0].newText.split(' ')[0]);
    const kpValue = async () => ((await describe(page)) as any).knobs.find((k: any) => k.name === 'Steady.kp').value;
    expect(await kpValue()).toBeCloseTo(stepped, 9);
    // the editor undid the edit at once: the report of the original text comes back, kp = 14;
    // it does not show the page's last edit, so it is held back for now
    await sendReport(page, tunedReport());
    expect(await kpValue()).toBeCloseTo(stepped, 9);
    // no further report comes; the held-back one is adopted after the pending time
    await expect.poll(kpValue, { timeout: 5000, interval: 100 }).toBe(14);
    await clean();
  });

  test('with versions, a report older than the answered edit is dropped, and the report of an undo is adopted at once', async () => {
    const { page, clean } = await openPage();
    await sendReportAt(page, tunedReport(), 1);
    await page.locator('.lw-knob[data-param="Steady.kp"] input[type=range]').focus();
    await page.keyboard.press('ArrowRight');
    await expect.poll(async () => (await edits(page)).length).toBe(1);
    const stepped = Number((await edits(page))[0].newText.split(' ')[0]);
    await send(page, { type: 'edited', version: 2 });
    // the run of version 1 ends late: it was computed before the edit, so it never reaches the
    // knobs, not even after the 1.5 s that a report without a version would wait
    await sendReportAt(page, tunedReport(), 1);
    await page.waitForTimeout(1800);
    expect(await knob(page, 'Steady.kp')).toMatchObject({ value: stepped });
    // the editor undid the edit: version 3 holds the original text, which the page never posted
    await sendReportAt(page, tunedReport(), 3);
    expect(await knob(page, 'Steady.kp')).toMatchObject({ value: 14, text: '14', span: knobsOf()[2].span });
    await clean();
  });

  test('with versions, a report that comes while an edit waits for its answer is decided by the answer', async () => {
    const { page, clean } = await openPage();
    await sendReportAt(page, tunedReport(), 1);
    await page.locator('.lw-knob[data-param="Steady.kp"] input[type=range]').focus();
    await page.keyboard.press('ArrowRight');
    await expect.poll(async () => (await edits(page)).length).toBe(1);
    const doc2 = applyEdits(DOCUMENT, await edits(page));
    await page.keyboard.press('ArrowRight');
    await expect.poll(async () => (await edits(page)).length).toBe(2);
    const doc3 = applyEdits(DOCUMENT, await edits(page));
    const stepped = Number((await edits(page))[1].newText.split(' ')[0]);
    // the report of the first edit comes while both edits wait: held back
    await sendReportAt(page, tunedReport({ doc: doc2 }), 2);
    expect(((await describe(page)) as any).knobEditsWaiting).toBe(2);
    await send(page, { type: 'edited', version: 2 });
    expect(await knob(page, 'Steady.kp')).toMatchObject({ value: stepped });
    expect(((await describe(page)) as any).knobEditsWaiting).toBe(1);
    // the second answer: the held report is older than the document it left, so it is dropped
    await send(page, { type: 'edited', version: 3 });
    await expect.poll(async () => (await describe(page) as any).knobs.length).toBe(6);
    expect(await knob(page, 'Steady.kp')).toMatchObject({ value: stepped, span: knobsOf(doc3)[2].span });
    // a third step; before its answer the user types 15 in the editor (version 5): that report
    // is held back while the edit waits, and adopted by the answer (version 4 ≤ 5)
    await page.keyboard.press('ArrowRight');
    await expect.poll(async () => (await edits(page)).length).toBe(3);
    const typed = applyEdits(DOCUMENT, await edits(page)).replace(/kp {3}= [^\n]*/, 'kp   = 15 [N*m/rad]');
    await sendReportAt(page, tunedReport({ doc: typed }), 5);
    expect((await knob(page, 'Steady.kp')).value).not.toBe(15);
    await send(page, { type: 'edited', version: 4 });
    await expect.poll(async () => (await knob(page, 'Steady.kp')).value).toBe(15);
    expect(await knob(page, 'Steady.kp')).toMatchObject({ text: '15', span: knobsOf(typed)[2].span });
    expect(await knob(page, 'Steady.kd')).toMatchObject({ span: knobsOf(typed)[3].span });
    await clean();
  });

  test('a mouse drag posts non-final edits, then one final edit with the literal of the end position', async () => {
    const { page, clean } = await openPage();
    await sendReport(page, tunedReport());
    const slider = page.locator('.lw-knob[data-param="Steady.kd"] input[type=range]');
    const box = (await slider.boundingBox())!;
    const y = box.y + box.height / 2;
    await page.mouse.move(box.x + box.width / 2, y);
    await page.mouse.down();
    for (let i = 1; i <= 12; i++) {
      await page.mouse.move(box.x + box.width / 2 + i * 6, y);
      await page.evaluate(() => new Promise((ok) => requestAnimationFrame(() => ok(null))));
    }
    await page.mouse.up();
    await expect.poll(async () => (await edits(page)).some((e) => e.final)).toBe(true);
    const got = await edits(page);
    const last = got[got.length - 1];
    const v = await sliderValue(page, 'Steady.kd', 2.2);
    expect(v).toBeGreaterThan(2.5);
    expect(last).toMatchObject({ name: 'Steady.kd', final: true, newText: `${sig3(v)} [N*m*s/rad]` });
    const moving = got.slice(0, -1);
    expect(moving.length).toBeGreaterThan(2);
    expect(moving.every((e) => !e.final && / \[N\*m\*s\/rad\]$/.test(e.newText))).toBe(true);
    // Each edit is applied to the document as it was after the previous one.
    const doc = applyEdits(DOCUMENT, got);
    expect(doc).toBe(DOCUMENT.replace('2.2 [N*m*s/rad]', last.newText));
    await clean();
  });

  test('the number field posts on Enter; invalid text shows an inline error and posts nothing', async () => {
    const { page, clean } = await openPage();
    await sendReport(page, tunedReport());
    const field = page.locator('.lw-knob[data-param="BoomHold.ref"] .lw-knob-field');
    const error = page.locator('.lw-knob[data-param="BoomHold.ref"] .lw-knob-error');
    await field.fill('-0.4x');
    await field.press('Enter');
    expect(await error.isVisible()).toBe(true);
    expect(await error.textContent()).toContain('is not a number');
    expect(await field.getAttribute('aria-invalid')).toBe('true');
    expect(await edits(page)).toEqual([]);
    await field.fill('-0.42');
    await field.press('Enter');
    await expect.poll(async () => (await edits(page)).length).toBe(1);
    expect((await edits(page))[0]).toEqual({ type: 'editParam', name: 'BoomHold.ref', span: knobsOf()[5].span, newText: '-0.42 [rad]', final: true });
    expect(await error.isVisible()).toBe(false);
    // Blur with an unchanged value posts nothing more; a unitless param gets no unit.
    await page.locator('.lw-knob[data-param="Steady.bias"] .lw-knob-field').fill('0.25');
    await page.locator('.lw-knob[data-param="Steady.kp"] .lw-knob-field').focus();
    await expect.poll(async () => (await edits(page)).length).toBe(2);
    const bias = (await edits(page))[1];
    expect(bias).toMatchObject({ name: 'Steady.bias', newText: '0.25', final: true });
    expect(applyEdits(DOCUMENT, await edits(page))).toContain('param bias = 0.25\n');
    await clean();
  });
});

group('pole map', { timeout: 180_000 }, () => {
  test('one marker per pole at its place on a shared scale; the right-half-plane pole is flagged', async () => {
    const { page, clean } = await openPage();
    await sendReport(page, tunedReport());
    const d = (await describe(page)) as any;
    const pm = d.poles;
    const { view, frame } = pm;
    expect(pm.markers.length).toBe(CLOSED.length + OPEN.length);
    // Symmetric about the real axis, one scale for both axes, every pole inside with a margin.
    expect(view.imMin).toBeCloseTo(-view.imMax, 9);
    expect((view.reMax - view.reMin) / frame.width).toBeCloseTo((view.imMax - view.imMin) / frame.height, 9);
    const poles = [...CLOSED.map(([re, im]) => ({ set: 'closed', re, im })), ...OPEN.map(([re, im]) => ({ set: 'open', re, im }))];
    const extent = Math.max(...poles.map((p) => p.re), 0) - Math.min(...poles.map((p) => p.re), 0);
    for (const p of poles) {
      expect(p.re).toBeGreaterThan(view.reMin + 0.1 * extent);
      expect(p.re).toBeLessThan(view.reMax - 0.1 * extent);
      expect(Math.abs(p.im)).toBeLessThan(view.imMax - 0.1 * extent);
    }
    // Where the markers really are on the page, against the pixel mapping of the known poles.
    const svg = (await page.locator('svg.lw-polemap').boundingBox())!;
    const markers = page.locator('.lw-pole');
    expect(await markers.count()).toBe(poles.length);
    const px = (re: number) => svg.x + frame.left + ((re - view.reMin) / (view.reMax - view.reMin)) * frame.width;
    const py = (im: number) => svg.y + frame.top + ((view.imMax - im) / (view.imMax - view.imMin)) * frame.height;
    const sizes: Record<string, number> = {};
    for (const [set, list] of [['closed', CLOSED], ['open', OPEN]] as const) {
      for (let i = 0; i < list.length; i++) {
        const [re, im] = list[i];
        const m = page.locator(`.lw-pole[data-set="${set}"][data-index="${i}"]`);
        const b = (await m.boundingBox())!;
        expect(b.x + b.width / 2, `${set} ${re}${im >= 0 ? '+' : ''}${im}j x`).toBeCloseTo(px(re), 0);
        expect(b.y + b.height / 2, `${set} ${re}${im >= 0 ? '+' : ''}${im}j y`).toBeCloseTo(py(im), 0);
        const drawn = pm.markers.find((x: any) => x.set === set && x.index === i);
        expect(drawn.rhp).toBe(re > 0);
        expect(await m.evaluate((e) => e.classList.contains('lw-pole-rhp'))).toBe(re > 0);
        sizes[`${set}${i}`] = drawn.size;
      }
    }
    // +0.5 is closed[3]: warning colour, bigger than the stable closed-loop poles.
    const rhp = pm.markers.find((x: any) => x.set === 'closed' && x.index === 3);
    expect(rhp.colour).toBe(d.theme.warning);
    expect(sizes.closed3).toBeGreaterThan(sizes.closed0);
    expect(pm.markers.find((x: any) => x.set === 'closed' && x.index === 0).colour).toBe(CATEGORICAL.dark[0]);
    const fill = await page.locator('.lw-pole[data-set="closed"][data-index="3"] circle').last().getAttribute('fill');
    expect(fill).toBe(d.theme.warning);
    expect(await page.locator('.lw-pole-key').textContent()).toContain('1 closed-loop pole in the right half plane');
    // Guides: the damping rays and natural-frequency circles reaching past the farthest pole.
    expect(pm.dampingRays).toEqual([0.2, 0.4, 0.6, 0.8]);
    expect(Math.max(...pm.circles)).toBeGreaterThanOrEqual(5);
    await clean();
  });

  test('markers are focusable and the readout gives ζ, ωn, τ and re ± im; a new report moves them', async () => {
    const { page, clean } = await openPage();
    await sendReport(page, tunedReport());
    const readout = page.locator('.lw-pole-readout');
    await page.locator('.lw-pole[data-set="closed"][data-index="0"]').focus();
    // −2 ± 3j: ζ = 2/√13 = 0.555, ωn = √13 = 3.606 rad/s, τ = 0.5 s.
    await expect.poll(() => readout.textContent()).toBe('Closed loop: -2 ± 3j rad/s · ζ 0.555 · ωn 3.606 rad/s · τ 0.5 s');
    await page.keyboard.press('Tab');
    const focused = await page.evaluate(() => (document.activeElement as HTMLElement | null)?.classList.contains('lw-pole'));
    expect(focused).toBe(true);
    const b = (await page.locator('.lw-pole[data-set="closed"][data-index="3"]').boundingBox())!;
    await page.mouse.move(b.x + b.width / 2, b.y + b.height / 2);
    await expect.poll(() => readout.textContent()).toContain('0.5 rad/s · ζ -1 · ωn 0.5 rad/s · τ 2 s · unstable');

    const before = ((await describe(page)) as any).poles.markers.find((m: any) => m.set === 'closed' && m.index === 0);
    await sendReport(page, tunedReport({ closed: [[-3, 4], [-3, -4], [-5, 0], [-0.5, 0]] }));
    const after = ((await describe(page)) as any).poles;
    const moved = after.markers.find((m: any) => m.set === 'closed' && m.index === 0);
    expect(moved.re).toBe(-3);
    expect(moved.x).not.toBeCloseTo(before.x, 0);
    expect(after.markers.some((m: any) => m.rhp)).toBe(false);
    await clean();
  });

  test('very spread poles: a zoom to the slow poles, the fast ones as arrows on the edge', async () => {
    const { page, clean } = await openPage();
    await sendReport(page, tunedReport({ closed: [[-2, 3], [-2, -3], [-400, 0]], open: [[-0.8, 0]] }));
    const zoom = page.locator('.lw-pole-zoom');
    expect(await zoom.isVisible()).toBe(true);
    let pm = ((await describe(page)) as any).poles;
    expect(pm.mode).toBe('all');
    expect(pm.markers.every((m: any) => m.inView)).toBe(true);
    await zoom.click();
    pm = ((await describe(page)) as any).poles;
    expect(pm.mode).toBe('slow');
    const fast = pm.markers.find((m: any) => m.re === -400);
    expect(fast.inView).toBe(false);
    expect(fast.x).toBeCloseTo(pm.frame.left, 6);
    expect(pm.view.reMin).toBeGreaterThan(-10);
    expect(pm.note).toContain('1 fast pole outside the view');
    // The zoom mode stays through a new report of the same loop.
    await sendReport(page, tunedReport({ closed: [[-2.1, 3], [-2.1, -3], [-410, 0]], open: [[-0.8, 0]] }));
    expect(((await describe(page)) as any).poles.mode).toBe('slow');
    await page.screenshot({ path: join(OUT, 'tuning-spread-dark.png'), fullPage: true });
    await clean();
  });
});

group('live updates', { timeout: 180_000 }, () => {
  test('a new report of the same loop keeps zoom, cursor and toggles; another loop resets them', async () => {
    const { page, clean } = await openPage();
    await sendReport(page, tunedReport());
    const area = (await page.locator('.lw-panel .u-over').nth(0).boundingBox())!;
    await page.mouse.move(area.x + area.width * 0.2, area.y + 20);
    await page.mouse.down();
    await page.mouse.move(area.x + area.width * 0.6, area.y + 20, { steps: 6 });
    await page.mouse.up();
    await expect.poll(async () => (await describe(page)).zoom).not.toBeNull();
    await page.click('[data-signal="target"]');
    await page.mouse.move(area.x + area.width * 0.5, area.y + area.height / 2);
    await expect.poll(() => page.locator('.lw-readout-time').textContent()).toMatch(/^t = /);
    const before = (await describe(page)) as any;
    const time = await page.locator('.lw-readout-time').textContent();
    const tilt = () => page.locator('.lw-readout-item').filter({ hasText: 'Boom.tilt (nonlinear)' }).locator('.lw-readout-value').textContent();
    const tiltBefore = await tilt();

    await sendReport(page, tunedReport({ zeta: 0.6 }));
    const after = (await describe(page)) as any;
    expect(after.zoom).toEqual(before.zoom);
    for (const p of after.panels) expect(p.xRange).toEqual(before.zoom);
    expect(after.hidden).toEqual({ signals: ['target'], runs: [] });
    expect(after.panels[0].series.find((s: any) => s.signal === 'target').show).toBe(false);
    expect(after.cursorIdx).toBe(before.cursorIdx);
    expect(await page.locator('.lw-readout-time').textContent()).toBe(time);
    // The data did change: the value under the cursor is the new run's.
    expect(await tilt()).not.toBe(tiltBefore);
    expect(after.panels[0].yRange).not.toEqual(before.panels[0].yRange);

    await sendReport(page, tunedReport({ loop: 'OtherLoop' }));
    const other = await describe(page);
    expect(other.zoom).toBeNull();
    expect(other.hidden).toEqual({ signals: [], runs: [] });
    for (const p of other.panels) expect(p.xRange).toEqual({ min: 0, max: 6 });
    await clean();
  });

  test('an error status keeps the last plot under a quiet banner; a later run going on or the next good report clears it', async () => {
    const { page, clean } = await openPage();
    await sendReport(page, tunedReport());
    const before = await describe(page);
    const n = await drawCount(page);
    await send(page, { type: 'status', kind: 'error', message: "unknown name 'kq'", line: 12 });
    const banner = page.locator('.lw-stale');
    await expect.poll(() => banner.isVisible()).toBe(true);
    expect(await banner.textContent()).toBe("Not re-run: line 12: unknown name 'kq'");
    const kept = await describe(page);
    expect(kept.panels.map((p) => p.series.length)).toEqual(before.panels.map((p) => p.series.length));
    expect(await drawCount(page)).toBe(n);
    expect((await countPixels(page, 0, '#1e1e1e', { tol: 3, not: true })).count).toBeGreaterThan(500);
    await page.screenshot({ path: join(OUT, 'tuning-stale-dark.png'), fullPage: true });
    // a re-run of a later version is going on: the banner named an error that is gone
    await send(page, { type: 'status', kind: 'running' });
    await expect.poll(() => banner.isVisible()).toBe(false);
    expect(await page.locator('.lw-status').textContent()).toBe('Running…');
    expect((await describe(page)).panels.map((p) => p.series.length)).toEqual(before.panels.map((p) => p.series.length));
    await send(page, { type: 'status', kind: 'error', message: "unknown name 'kq'", line: 12 });
    await expect.poll(() => banner.isVisible()).toBe(true);
    await sendReport(page, tunedReport({ zeta: 0.5 }));
    expect(await banner.isVisible()).toBe(false);
    expect(((await describe(page)) as any).stale).toBeNull();
    await clean();
  });

  test('Pin draws the pinned response faintly under the live curves, through a reload, until unpinned', async () => {
    const { page, clean } = await openPage();
    await sendReport(page, tunedReport({ zeta: 0.2 }));
    const pin = page.locator('#lw-pin');
    await pin.click();
    expect(await pin.getAttribute('aria-pressed')).toBe('true');
    expect(await pin.textContent()).toBe('Unpin');
    await sendReport(page, tunedReport({ zeta: 0.7 }));
    let d = (await describe(page)) as any;
    expect(d.pinned).toBe(true);
    const ref = d.panels[0].reference;
    expect(ref.map((r: any) => r.signal)).toEqual(['Boom.tilt', 'target']);
    expect(ref.every((r: any) => r.points === 400 && r.alpha < 0.5 && r.width <= 1)).toBe(true);
    expect(ref[0].stroke).toBe(d.panels[0].series[0].stroke);
    // The faint colour (stroke over the background at the reference alpha) is on the canvas.
    const faint = (stroke: string, alpha: number) => {
      const [r, g, b] = parseHex(stroke);
      const bg = [0x1e, 0x1e, 0x1e];
      return '#' + [r, g, b].map((c, i) => Math.round(bg[i] + alpha * (c - bg[i])).toString(16).padStart(2, '0')).join('');
    };
    const faintTilt = faint(ref[0].stroke, ref[0].alpha);
    const withPin = (await countPixels(page, 0, faintTilt, { tol: 8, rect: d.panels[0].bbox })).count;
    expect(withPin).toBeGreaterThan(40);
    await page.screenshot({ path: join(OUT, 'tuning-pinned-dark.png'), fullPage: true });

    await page.reload();
    await page.waitForFunction(() => Number(document.body.dataset.drawCount ?? 0) >= 1);
    await applyBodyClass(page);
    d = await describe(page);
    expect(d.pinned).toBe(true);
    expect(d.panels[0].reference.length).toBe(2);

    const n = await drawCount(page);
    await page.click('#lw-pin');
    await waitForDrawAfter(page, n);
    d = await describe(page);
    expect(d.pinned).toBe(false);
    expect(d.panels[0].reference).toEqual([]);
    expect((await countPixels(page, 0, faintTilt, { tol: 8, rect: d.panels[0].bbox })).count).toBeLessThan(withPin / 4);
    await clean();
  });
});

group('screenshots (test-output/webview/tuning-*.png)', { timeout: 180_000 }, () => {
  for (const [name, server] of [['tuning-dark', () => dark], ['tuning-light', () => light]] as const) {
    test(name, async () => {
      const { page, clean } = await openPage(server());
      await sendReport(page, tunedReport());
      await page.click('#lw-pin');
      await sendReport(page, tunedReport({ zeta: 0.55 }));
      await page.click('.lw-plant-toggle');
      await page.locator('.lw-pole[data-set="closed"][data-index="0"]').focus();
      await page.screenshot({ path: join(OUT, `${name}.png`), fullPage: true });
      await clean();
    });
  }
});
