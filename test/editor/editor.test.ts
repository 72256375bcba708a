// The extension in a real workbench: code-server in headless Chromium, the packaged .vsix
// installed into a fresh extensions folder, a workspace of sample copies. Screenshots of every
// step go to test-output/editor/. Run with `npm run test:editor`.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { existsSync, readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { packageVsix, ROOT } from '../package/package-vsix';
import { ensureSandbox, startCodeServer, type RunningCodeServer } from './code-server';
import { grammarProbes, makeWorkspace, type TestWorkspace } from './workspace';
import type { Frame } from 'playwright-core';
import {
  activeEditor,
  canvasSignature,
  plotDescription,
  replaceInEditor,
  closePanel,
  dismissHover,
  focusEditor,
  editorText,
  editorTextOf,
  hoverText,
  languageMode,
  launch,
  notifications,
  openFile,
  openWorkbench,
  outputChannels,
  showOutputChannel,
  Shots,
  tokenColor,
  waitForCodeLens,
  waitForDrawnCanvas,
} from './workbench';

const OUT = join(ROOT, 'test-output', 'editor');
// Steps that need the language server run once its entry point exists in the tree.
const HAS_SERVER = existsSync(join(ROOT, 'server', 'src', 'main.ts'));
const needsServer = it.skipIf(!HAS_SERVER);

let code: (RunningCodeServer & { installed: string[] }) | undefined;
let browser: Browser | undefined;
let page: Page;
let ws: TestWorkspace;
const shots = new Shots(OUT);

/** Runs a step; on failure saves a screenshot of what the workbench showed, then fails. */
async function step(name: string, body: () => Promise<void>): Promise<void> {
  try {
    await body();
    await shots.take(page, name);
  } catch (error) {
    if (page) await shots.take(page, `${name}-failed`).catch(() => undefined);
    throw error;
  }
}

describe('Loopwright in the workbench', () => {
  beforeAll(async () => {
    rmSync(OUT, { recursive: true, force: true });
    ensureSandbox(ROOT);
    const vsix = packageVsix();
    ws = makeWorkspace(ROOT, join(ROOT, 'test', 'editor', 'fixtures'));
    code = await startCodeServer({ vsix, workspace: ws.dir, logDir: OUT });
    browser = await launch();
    page = await openWorkbench(browser, code.url, ws.dir);
    await shots.take(page, 'workbench');
  });

  afterAll(async () => {
    await browser?.close().catch(() => undefined);
    await code?.stop();
    if (ws) rmSync(ws.dir, { recursive: true, force: true });
  });

  it('installs the packaged extension', () => {
    expect(code!.installed).toContain('loopwright.loopwright');
  });

  it('opens boom.loop in the Loopwright language with grammar colours', async () => {
    await step('language-and-colours', async () => {
      await openFile(page, 'boom.loop', 'plant');
      // The workbench may show the file before the extension's contributions are registered.
      await expect.poll(() => languageMode(page), { timeout: 60_000, interval: 500 }).toBe('Loopwright');
      const probe = grammarProbes(readFileSync(ws.boom, 'utf8'));
      const keyword = await tokenColor(page, probe.keyword);
      const blockName = await tokenColor(page, probe.blockName);
      const number = await tokenColor(page, probe.number);
      const unit = await tokenColor(page, probe.unit);
      const comment = await tokenColor(page, probe.comment, { partial: true });
      const plain = await activeEditor(page).locator('.view-lines').evaluate((el) => getComputedStyle(el).color);
      // Without the grammar every token has the editor's plain text colour.
      for (const c of [keyword, blockName, number, unit, comment]) expect(c).not.toBe(plain);
      expect(new Set([keyword, blockName, number, unit, comment]).size).toBeGreaterThanOrEqual(4);
    });
  });

  it('activates the extension (its output channel exists)', async () => {
    await step('activated', async () => {
      await openFile(page, 'boom.loop', 'plant');
      await expect.poll(() => outputChannels(page), { timeout: 30_000, interval: 1000 }).toContainEqual(expect.stringMatching(/^Loopwright\b/));
      await showOutputChannel(page, 'Loopwright');
    });
  });

  it('offers the pid snippet and inserts a PID skeleton', async () => {
    await closePanel(page);
    await step('snippet', async () => {
      await openFile(page, 'scratch.loop', '');
      await activeEditor(page).click();
      await page.keyboard.type('pid');
      await page.keyboard.press('Control+Space');
      const row = page.locator('.suggest-widget .monaco-list-row', { hasText: 'pid' }).first();
      await row.waitFor({ timeout: 20_000 });
      await page.locator('.suggest-widget .monaco-list-row', { hasText: 'PID' }).first().click();
      await activeEditor(page).locator('.view-lines', { hasText: 'from err' }).waitFor({ timeout: 20_000 });
      const text = await editorText(page);
      expect(text).toMatch(/controller Pid/);
      expect(text).toMatch(/pid u from err \{ kp = 10/);
      await page.keyboard.press('Escape');
    });
  });

  needsServer('shows the Simulate code lens on boom.loop', async () => {
    await step('code-lens', async () => {
      await openFile(page, 'boom.loop', 'plant');
      await waitForCodeLens(page, 'Simulate');
    });
  });

  needsServer('marks the unit error with a squiggle and explains it', async () => {
    await step('unit-error', async () => {
      await openFile(page, 'boom-unit-error.loop', 'plant');
      const squiggle = activeEditor(page).locator('.squiggly-error').first();
      await squiggle.waitFor({ timeout: 60_000 });
      const text = await hoverText(page, squiggle);
      expect(text).toMatch(/\bm\b/);
      expect(text).toMatch(/rad/);
    });
    await dismissHover(page);
  });

  needsServer('warns on the around member of a loop that is unstable about its operating point', async () => {
    await step('unstable-loop', async () => {
      await openFile(page, 'boom-weak-gain.loop', 'plant');
      const squiggle = activeEditor(page).locator('.squiggly-warning').first();
      await squiggle.waitFor({ timeout: 60_000 });
      const text = await hoverText(page, squiggle);
      expect(text).toMatch(/is unstable: a pole right of the imaginary axis/);
      expect(text).toMatch(/LW604/);
    });
    await dismissHover(page);
  });

  needsServer('hovers the plant name with its A matrix and poles', async () => {
    await step('plant-hover', async () => {
      await openFile(page, 'boom.loop', 'plant');
      await waitForCodeLens(page, 'Simulate');
      const name = activeEditor(page).locator('.view-line span > span', { hasText: /^Boom$/ }).first();
      const text = await hoverText(page, name, 60_000);
      expect(text).toMatch(/\bA\b/);
      expect(text).toMatch(/pole/i);
    });
    await dismissHover(page);
  });

  needsServer('runs the loop from the Simulate lens and draws the plot in a webview', async () => {
    await step('simulate', async () => {
      await openFile(page, 'boom.loop', 'plant');
      const lens = await waitForCodeLens(page, 'Simulate');
      await lens.click();
      await page.locator('.tab', { hasText: 'Upright' }).first().waitFor({ timeout: 60_000 }).catch(async (e) => {
        throw new Error(`no plot panel opened; notifications: ${(await notifications(page)).join(' | ')}; ${e}`);
      });
      const frame = await waitForDrawnCanvas(page).catch(async (e) => {
        throw new Error(`${e instanceof Error ? e.message : e}; notifications: ${(await notifications(page)).join(' | ')}`);
      });
      expect(await frame.locator('canvas').count()).toBeGreaterThan(0);
      plot = frame;
    });
  });

  // ---- live tuning: the plot follows the text, knobs edit the text ----

  /** The text of kp's line in the editor. */
  const kpLine = async () => (await editorTextOf(page, 'boom.loop')).split('\n').find((l) => /param kp\s*=/.test(l))?.trim() ?? '';
  type Knob = { name: string; text: string; value: number };
  const kpKnob = async () => (await plotDescription<{ knobs: Knob[] }>(plot!)).knobs.find((k) => k.name === 'Steady.kp');
  let plot: Frame | undefined;

  needsServer('changing kp in the text re-runs the loop and redraws the plot in place', async () => {
    expect(plot, 'the plot panel of the previous step').toBeDefined();
    await step('live-edit-kp', async () => {
      await openFile(page, 'boom.loop', 'plant');
      expect(await kpLine()).toBe('param kp = 14 [N*m/rad]');
      expect((await kpKnob())?.value).toBe(14);
      const before = await canvasSignature(plot!);
      await replaceInEditor(page, 'kp = 14', 'kp = 40');
      await expect.poll(kpLine, { timeout: 10_000 }).toBe('param kp = 40 [N*m/rad]');
      // the live report brings the new knob value, and the canvases are drawn anew
      await expect.poll(async () => (await kpKnob())?.value, { timeout: 30_000, interval: 250 }).toBe(40);
      await expect.poll(() => canvasSignature(plot!), { timeout: 30_000, interval: 250 }).not.toBe(before);
      expect(await plot!.locator('.lw-stale').isHidden()).toBe(true);
    });
  });

  needsServer('an edit with an error keeps the last plot and shows the banner with the line', async () => {
    await step('live-error-banner', async () => {
      const before = await canvasSignature(plot!);
      await replaceInEditor(page, 'kd*s/', 'kx*s/');
      const banner = plot!.locator('.lw-stale');
      await banner.waitFor({ state: 'visible', timeout: 30_000 });
      const line = readFileSync(ws.boom, 'utf8').split('\n').findIndex((l) => l.includes('kd*s/')) + 1;
      expect(await banner.innerText()).toMatch(new RegExp(`Not re-run: line ${line}: LW201`));
      expect(await canvasSignature(plot!)).toBe(before);
    });
    await step('live-error-fixed', async () => {
      await focusEditor(page, 'boom.loop');
      await page.keyboard.press('Control+Z');
      await expect.poll(async () => (await editorTextOf(page, 'boom.loop')).includes('kd*s/'), { timeout: 10_000 }).toBe(true);
      await plot!.locator('.lw-stale').waitFor({ state: 'hidden', timeout: 30_000 });
      expect(await kpLine()).toBe('param kp = 40 [N*m/rad]');
    });
  });

  needsServer('dragging the kp knob edits the literal; one Ctrl+Z undoes the whole drag', async () => {
    await step('knob-drag', async () => {
      const slider = plot!.locator('input.lw-knob-slider[aria-label="Steady.kp [N*m/rad]"]');
      await slider.waitFor({ timeout: 20_000 });
      await slider.scrollIntoViewIfNeeded();
      const box = await slider.boundingBox();
      if (!box) throw new Error('the kp slider is not visible');
      const y = box.y + box.height / 2;
      const x0 = box.x + box.width / 2;
      await page.mouse.move(x0, y);
      await page.mouse.down();
      const seen = new Set<string>();
      for (let i = 1; i <= 6; i++) {
        await page.mouse.move(x0 + (i * box.width) / 16, y, { steps: 2 });
        await expect.poll(kpLine, { timeout: 5_000, interval: 50 }).not.toBe([...seen].pop() ?? 'param kp = 40 [N*m/rad]');
        seen.add(await kpLine());
      }
      await page.mouse.up();
      // the host answers every edit of the drag with the version it left (the knobs rely on it)
      await expect.poll(async () => (await plotDescription<{ knobEditsWaiting: number }>(plot!)).knobEditsWaiting, { timeout: 10_000, interval: 100 }).toBe(0);
      const after = await kpLine();
      expect(after).toMatch(/^param kp = [\d.]+ \[N\*m\/rad\]$/);
      expect(after).not.toBe('param kp = 40 [N*m/rad]');
      // several edits landed in the text during the drag
      expect(seen.size).toBeGreaterThanOrEqual(3);
      expect(Number(/= ([\d.]+)/.exec(after)![1])).toBeGreaterThan(40);
    });
    await step('knob-drag-undone', async () => {
      await focusEditor(page, 'boom.loop');
      await page.keyboard.press('Control+Z');
      await expect.poll(kpLine, { timeout: 10_000 }).toBe('param kp = 40 [N*m/rad]');
      // the typed change of the earlier step is a separate undo step, still in place
      await expect.poll(async () => (await kpKnob())?.value, { timeout: 30_000, interval: 250 }).toBe(40);
    });
  });

  needsServer('ArrowRight on the kp knob steps the literal; Ctrl+Z restores it', async () => {
    await step('knob-arrow', async () => {
      const slider = plot!.locator('input.lw-knob-slider[aria-label="Steady.kp [N*m/rad]"]');
      await slider.press('ArrowRight');
      await expect.poll(kpLine, { timeout: 10_000 }).toMatch(/^param kp = 40\.[0-9]+ \[N\*m\/rad\]$/);
      const stepped = Number(/= ([\d.]+)/.exec(await kpLine())![1]);
      // one step is ×10^(1/120)
      expect(stepped / 40).toBeCloseTo(10 ** (1 / 120), 2);
      await expect.poll(async () => (await kpKnob())?.value, { timeout: 30_000, interval: 250 }).toBe(stepped);
    });
    await step('knob-arrow-undone', async () => {
      await focusEditor(page, 'boom.loop');
      await page.keyboard.press('Control+Z');
      await expect.poll(kpLine, { timeout: 10_000 }).toBe('param kp = 40 [N*m/rad]');
    });
  });
});
