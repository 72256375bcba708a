// Draw time of the plot page in headless Chromium: 10 series × 100,000 points must draw in
// < 300 ms. Run: node test/bench/webview.bench.mjs  (builds dist/media first).
// The report is generated inside the page (damped sinusoids, synthetic) and handed to the page's
// message handler as VS Code would deliver it; the clock runs from the message to the end of the
// last panel's draw (and, separately, to the next animation frame).
import { openPlotPage } from './plot-page.mjs';

const { tab, browser, server } = await openPlotPage();

/** Builds a report of `series` signals × `points` samples in `groups` panels, in the page. */
async function makeReport(series, points, groups) {
  await tab.evaluate(([series, points, groups]) => {
    const t = Array.from({ length: points }, (_, i) => (20 * i) / (points - 1));
    const signals = [];
    const data = {};
    for (let k = 0; k < series; k++) {
      const name = `s${k}`;
      signals.push({ name, unit: 'rad', scale: 1, offset: 0, kind: 'state', group: `g${k % groups}` });
      const w = 1 + k * 0.37;
      data[name] = t.map((x) => 1 - Math.exp(-0.2 * x) * Math.cos(w * x) + 0.01 * Math.sin(97 * x));
    }
    const run = { label: 'nonlinear', kind: 'nonlinear', t, signals: data, atLimit: {}, metrics: {}, expects: [], recovered: true, stats: { steps: 0, rejected: 0, evaluations: 0, jacobians: 0, ms: 0 } };
    window.__benchReport = { loop: 'Bench', signals, runs: [run], warnings: [] };
  }, [series, points, groups]);
}

/** ms from handing over the message to the end of drawing, and to the next frame. */
function measure(action) {
  return tab.evaluate(async (action) => {
    const drawn = new Promise((ok) => document.addEventListener('loopwright:drawn', () => ok(performance.now()), { once: true }));
    const t0 = performance.now();
    if (action === 'report') window.dispatchEvent(new MessageEvent('message', { data: { type: 'report', report: window.__benchReport } }));
    else if (action === 'theme') window.dispatchEvent(new MessageEvent('message', { data: { type: 'theme' } }));
    else if (action === 'toggle') document.querySelector('.lw-legend-item').click();
    const t1 = await drawn;
    const t2 = await new Promise((ok) => requestAnimationFrame(() => ok(performance.now())));
    return { draw: t1 - t0, frame: t2 - t0 };
  }, action);
}

const scenarios = [
  { name: '10 series × 100,000 points, 5 panels', series: 10, points: 100_000, groups: 5, action: 'report', budget: 300 },
  { name: '10 series × 100,000 points, 1 panel', series: 10, points: 100_000, groups: 1, action: 'report', budget: 300 },
  { name: 'theme redraw (10 × 100,000, 5 panels)', series: 10, points: 100_000, groups: 5, action: 'theme', budget: 300 },
  { name: 'legend toggle (10 × 100,000, 5 panels)', series: 10, points: 100_000, groups: 5, action: 'toggle', budget: 300 },
];
const rows = [];
const median = (xs) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
for (const s of scenarios) {
  await makeReport(s.series, s.points, s.groups);
  if (s.action !== 'report') await measure('report');
  await measure(s.action); // warm-up
  const runs = [];
  for (let i = 0; i < 7; i++) runs.push(await measure(s.action));
  const draw = runs.map((r) => r.draw);
  const frame = runs.map((r) => r.frame);
  rows.push({
    scenario: s.name,
    'median draw ms': median(draw).toFixed(1),
    'min ms': Math.min(...draw).toFixed(1),
    'max ms': Math.max(...draw).toFixed(1),
    'median to frame ms': median(frame).toFixed(1),
    'budget ms': s.budget,
    verdict: median(draw) < s.budget ? 'ok' : 'OVER',
  });
}
console.table(rows);
await browser.close();
server.close();
