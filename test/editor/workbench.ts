// Driving the workbench in Chromium: one helper per thing a user does or looks at. Each waits on
// selectors, never on fixed sleeps, and the test saves a screenshot after each step.
import { chromium, type Browser, type Frame, type Locator, type Page } from 'playwright-core';
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { CHROMIUM } from './code-server';

export async function launch(): Promise<Browser> {
  return chromium.launch({
    executablePath: CHROMIUM,
    args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic'],
  });
}

export async function openWorkbench(browser: Browser, url: string, folder: string): Promise<Page> {
  const page = await browser.newPage({ viewport: { width: 1400, height: 900 } });
  await page.goto(`${url}/?folder=${encodeURIComponent(folder)}`);
  await page.waitForSelector('.monaco-workbench', { timeout: 90_000 });
  // The explorer shows the folder once the workbench has restored its layout.
  await page.waitForSelector('.explorer-folders-view .monaco-list-row', { timeout: 60_000 });
  return page;
}

export class Shots {
  private n = 0;
  constructor(readonly dir: string) {
    mkdirSync(dir, { recursive: true });
  }
  async take(page: Page, step: string): Promise<string> {
    this.n += 1;
    const path = join(this.dir, `${String(this.n).padStart(2, '0')}-${step}.png`);
    await page.screenshot({ path });
    return path;
  }
}

/** The editor that has focus. */
export function activeEditor(page: Page): Locator {
  return page.locator('.editor-group-container.active .monaco-editor').first();
}

/** The text editor showing `name` in its group, whether or not that group has focus. */
export function editorOf(page: Page, name: string): Locator {
  return page.locator('.editor-group-container', { has: page.locator('.tabs-container .tab.active', { hasText: name }) }).locator('.monaco-editor').first();
}

/** Gives the editor of `name` the keyboard focus by clicking its tab (the cursor stays where it was). */
export async function focusEditor(page: Page, name: string): Promise<void> {
  await page.locator('.tabs-container .tab.active', { hasText: name }).first().click();
  await page.locator('.editor-group-container.active .tabs-container .tab.active', { hasText: name }).waitFor({ timeout: 10_000 });
  await page.waitForFunction(() => document.activeElement?.closest('.monaco-editor') !== null, undefined, { timeout: 10_000 });
}

/** The text shown by the editor of `name`, with the non-breaking spaces of the rendering made plain. */
export async function editorTextOf(page: Page, name: string): Promise<string> {
  return (await editorOf(page, name).locator('.view-lines').innerText({ timeout: 5_000 })).replace(/\u00a0/g, ' ');
}

/** Opens a file at the top of the workspace from the explorer and waits until its text is shown. */
export async function openFile(page: Page, name: string, firstText: string): Promise<void> {
  const active = page.locator('.tabs-container .tab.active', { hasText: name });
  if (!(await active.isVisible())) {
    const row = page.locator('.explorer-folders-view .monaco-list-row', { has: page.locator('.label-name', { hasText: new RegExp(`^${name.replace(/[.]/g, '\\.')}$`) }) }).first();
    await row.waitFor({ timeout: 20_000 });
    // A double click opens the file for good rather than as a preview that the next one replaces.
    await row.dblclick();
    await active.waitFor({ timeout: 20_000 });
  }
  await activeEditor(page).locator('.view-lines', { hasText: firstText }).waitFor({ timeout: 20_000 });
}

/** Runs a command from the command palette by its title. */
export async function runCommand(page: Page, title: string): Promise<void> {
  await page.keyboard.press('F1');
  const input = page.locator('.quick-input-widget input');
  await input.waitFor({ state: 'visible', timeout: 20_000 });
  await input.fill(`>${title}`);
  await page.locator('.quick-input-list .monaco-list-row', { hasText: title }).first().waitFor({ timeout: 20_000 });
  await page.keyboard.press('Enter');
}

export async function closeQuickInput(page: Page): Promise<void> {
  if (await page.locator('.quick-input-widget').isVisible()) await page.keyboard.press('Escape');
}

/** The language shown in the status bar for the active editor. */
export async function languageMode(page: Page): Promise<string> {
  const item = page.locator('#status\\.editor\\.mode');
  await item.waitFor({ timeout: 20_000 });
  return (await item.innerText()).trim();
}

/** The first rendered token of the active editor whose text is exactly `text` (or matches it). */
export function token(page: Page, text: string, options: { partial?: boolean } = {}): Locator {
  const exact = new RegExp(`^${text.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}$`);
  return activeEditor(page).locator('.view-line span > span', { hasText: options.partial ? text : exact }).first();
}

/** The editor's text as shown, with the non-breaking spaces of the rendering made plain. */
export async function editorText(page: Page): Promise<string> {
  return (await activeEditor(page).locator('.view-lines').innerText()).replace(/\u00a0/g, ' ');
}

export async function tokenColor(page: Page, text: string, options: { partial?: boolean } = {}): Promise<string> {
  const t = token(page, text, options);
  await t.waitFor({ timeout: 20_000 });
  return t.evaluate((el) => getComputedStyle(el).color);
}

/** Names of the channels offered by the Output view's channel picker (the view is opened). */
export async function outputChannels(page: Page): Promise<string[]> {
  const panel = page.locator('.part.panel');
  if (!(await panel.locator('.output-view, [id="workbench.panel.output"]').first().isVisible().catch(() => false))) {
    await runCommand(page, 'Output: Focus on Output View');
  }
  const options = panel.locator('select option');
  await options.first().waitFor({ state: 'attached', timeout: 20_000 });
  return (await options.allTextContents()).map((t) => t.trim());
}

/** Shows one channel in the Output view. */
export async function showOutputChannel(page: Page, name: string): Promise<void> {
  const select = page.locator('.part.panel select', { has: page.locator('option', { hasText: name }) }).first();
  const label = (await select.locator('option', { hasText: name }).first().textContent())?.trim() ?? name;
  await select.selectOption({ label });
}

/** Hides the bottom panel (Ctrl+J toggles it). */
export async function closePanel(page: Page): Promise<void> {
  const panel = page.locator('.part.panel');
  if (!(await panel.isVisible())) return;
  await page.keyboard.press('Control+J');
  await panel.waitFor({ state: 'hidden', timeout: 10_000 });
}

export async function waitForCodeLens(page: Page, text: string, timeout = 60_000): Promise<Locator> {
  const lens = activeEditor(page).locator('.codelens-decoration a', { hasText: text }).first();
  await lens.waitFor({ timeout });
  return lens;
}

/**
 * Moves the mouse onto an element and returns the text of the hover it opens. The element's box
 * is read again on every attempt: a code lens or a diagnostic arriving after the first reading
 * moves the lines under a resting mouse, and the hover then never opens where it points. Each
 * attempt waits a few seconds for the hover, moves the mouse away and comes back, until the
 * whole timeout has passed.
 */
export async function hoverText(page: Page, target: Locator, timeout = 30_000): Promise<string> {
  const until = Date.now() + timeout;
  await target.waitFor({ timeout });
  const hover = page.locator('.monaco-hover-content').first();
  for (let attempt = 0; ; attempt++) {
    const box = await target.boundingBox();
    if (!box) throw new Error('hover target is not visible');
    await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
    await page.mouse.move(box.x + box.width / 2 + 1, box.y + box.height / 2);
    const left = until - Date.now();
    try {
      await hover.waitFor({ state: 'visible', timeout: Math.max(1, Math.min(8_000, left)) });
      // A hover may first show "Loading..." while the server answers.
      await page.waitForFunction(() => {
        const el = document.querySelector('.monaco-hover-content');
        return !!el && !/^\s*Loading/.test(el.textContent ?? '');
      }, undefined, { timeout: Math.max(1, until - Date.now()) });
      return await hover.innerText();
    } catch (e) {
      if (Date.now() >= until) throw new Error(`no hover opened on the target in ${timeout} ms (${attempt + 1} attempts): ${(e as Error).message}`);
      await page.mouse.move(5, 450);
      await page.keyboard.press('Escape');
    }
  }
}

export async function dismissHover(page: Page): Promise<void> {
  await page.mouse.move(5, 450);
  await page.keyboard.press('Escape');
}

/** Webview frames: each webview is an iframe holding another iframe with the page's content. */
export function webviewFrames(page: Page): Frame[] {
  return page.frames().filter((f) => f !== page.mainFrame() && /vscode-webview|webview/i.test(f.url()));
}

/** Webview frames that hold at least one canvas with drawn pixels (the workbench's own canvases,
 * such as the minimap, are in the main frame and do not count). */
export async function framesWithDrawnCanvas(page: Page): Promise<Frame[]> {
  const found: Frame[] = [];
  for (const frame of webviewFrames(page)) {
    try {
      const drawn = await frame.evaluate(() => {
        for (const c of Array.from(document.querySelectorAll('canvas'))) {
          if (c.width === 0 || c.height === 0) continue;
          const ctx = c.getContext('2d');
          if (!ctx) continue;
          const data = ctx.getImageData(0, 0, c.width, c.height).data;
          for (let i = 3; i < data.length; i += 4 * 7) if (data[i] !== 0) return true;
        }
        return false;
      });
      if (drawn) found.push(frame);
    } catch {
      // a frame that navigated away or is not ours
    }
  }
  return found;
}

export async function waitForDrawnCanvas(page: Page, timeout = 90_000): Promise<Frame> {
  const deadline = Date.now() + timeout;
  while (Date.now() < deadline) {
    const frames = await framesWithDrawnCanvas(page);
    if (frames.length > 0) return frames[0];
    await page.waitForTimeout(500);
  }
  throw new Error('no webview frame with a drawn canvas appeared');
}

/** Visible notification toasts, newest last. */
export async function notifications(page: Page): Promise<string[]> {
  const texts = await page.locator('.notifications-toasts .notification-list-item').allInnerTexts();
  return texts.map((t) => t.replace(/\s+/g, ' ').trim()).filter(Boolean);
}

/** A fingerprint of every canvas of a webview frame (size and pixels), to tell two drawings apart. */
export async function canvasSignature(frame: Frame): Promise<string> {
  return frame.evaluate(() => {
    let h = 2166136261;
    const parts: string[] = [];
    for (const c of Array.from(document.querySelectorAll('canvas'))) {
      if (c.width === 0 || c.height === 0) continue;
      const ctx = c.getContext('2d');
      if (!ctx) continue;
      const data = ctx.getImageData(0, 0, c.width, c.height).data;
      for (let i = 0; i < data.length; i += 1) h = Math.imul(h ^ data[i], 16777619) >>> 0;
      parts.push(`${c.width}x${c.height}`);
    }
    return `${parts.join(',')}:${h.toString(16)}`;
  });
}

/** What the plot page says it shows (window.loopwrightPlot.describe()). */
export async function plotDescription<T = Record<string, unknown>>(frame: Frame): Promise<T> {
  return frame.evaluate(() => (window as unknown as { loopwrightPlot: { describe(): unknown } }).loopwrightPlot.describe()) as Promise<T>;
}

/** Selects the first occurrence of `text` in the active editor (through the find widget) and types `replacement` over it. */
export async function replaceInEditor(page: Page, text: string, replacement: string): Promise<void> {
  await activeEditor(page).click();
  await page.keyboard.press('Control+Home');
  await page.keyboard.press('Control+F');
  const input = page.locator('.editor-group-container.active .find-widget textarea, .editor-group-container.active .find-widget input').first();
  await input.waitFor({ state: 'visible', timeout: 10_000 });
  await input.fill(text);
  await page.locator('.editor-group-container.active .find-widget .matchesCount', { hasText: /^1 of/ }).waitFor({ timeout: 10_000 });
  await page.keyboard.press('Escape');
  await page.keyboard.type(replacement);
}
