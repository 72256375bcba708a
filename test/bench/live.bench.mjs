// Live tuning: from a new report ("an edit arrived") to the redrawn plot and pole map, for a
// boom-sized report (3 signals × 1000 points, 4 closed-loop poles, 2 plant poles, 4 knobs).
// Target < 150 ms in headless Chromium. Run: node test/bench/live.bench.mjs (builds dist/media).
// The reports are synthetic (damped sinusoids whose damping changes a little from edit to edit,
// poles moving with it) and are made inside the page; each is handed to the page's message
// handler as VS Code delivers it. Clock: from posting the message to the draw-done event
// (`loopwright:drawn`) and to the animation frame after it.
import { openPlotPage } from './plot-page.mjs';

const { tab, browser, server } = await openPlotPage();

// The report factory lives in the page: `__make(k, loop)` gives the k-th edit's report.
await tab.evaluate(() => {
  const points = 1000;
  const t = Array.from({ length: points }, (_, i) => (6 * i) / (points - 1));
  const pole = (re, im) => ({ re, im, damping: -re / Math.hypot(re, im), natural: Math.hypot(re, im), timeConstant: 1 / Math.abs(re) });
  const knob = (name, owner, value, unit, start) => {
    const text = String(value);
    return { name, system: name.split('.')[0], owner, value, unit, span: { start, end: start + text.length + unit.length + 3 }, text };
  };
  window.__make = (k, loop = 'BoomHold') => {
    const zeta = 0.3 + 0.002 * (k % 100);
    const w = 3;
    const wd = w * Math.sqrt(1 - zeta * zeta);
    const y = t.map((x) => 1 - Math.exp(-zeta * w * x) * Math.cos(wd * x));
    const v = t.map((x) => w * Math.exp(-zeta * w * x) * Math.sin(wd * x));
    const u = y.map((yy, i) => Math.max(-1.5, Math.min(1.5, 4 * (1 - yy) - 0.8 * v[i])));
    const signals = [
      { name: 'Boom.tilt', unit: 'rad', scale: 1, offset: 0, kind: 'output', group: 'position' },
      { name: 'Boom.rate', unit: 'rad/s', scale: 1, offset: 0, kind: 'state', group: 'rate' },
      { name: 'Steady.drive', unit: 'N*m', scale: 1, offset: 0, kind: 'controller', group: 'actuator', limit: { lo: -1.5, hi: 1.5 } },
    ];
    const run = { label: 'nonlinear', kind: 'nonlinear', t, signals: { 'Boom.tilt': y, 'Boom.rate': v, 'Steady.drive': u }, atLimit: { 'Steady.drive': [[0, 0.3]] }, metrics: {}, expects: [], recovered: true, stats: { steps: 300, rejected: 0, evaluations: 2000, jacobians: 0, ms: 0.04 } };
    return {
      file: '/bench/boom.loop', loop, signals, runs: [run], warnings: [],
      poles: { closed: [pole(-zeta * w, wd), pole(-zeta * w, -wd), pole(-5 - 0.01 * k, 0), pole(-25, 0)], open: [pole(-0.1, 0), pole(-25, 0)] },
      params: [knob('Steady.kp', 'controller', 14 + 0.1 * (k % 10), 'N*m/rad', 300), knob('Steady.kd', 'controller', 2.2, 'N*m*s/rad', 340), knob('Boom.arm', 'plant', 0.6, 'm', 40), knob('Boom.drag', 'plant', 0.02, 'N*m*s/rad', 60)],
    };
  };
});

/** ms from posting the report to the draw-done event, and to the frame after it. */
function measure(k, loop) {
  return tab.evaluate(async ([k, loop]) => {
    const report = window.__make(k, loop);
    const drawn = new Promise((ok) => document.addEventListener('loopwright:drawn', () => ok(performance.now()), { once: true }));
    const t0 = performance.now();
    window.dispatchEvent(new MessageEvent('message', { data: { type: 'report', report } }));
    const t1 = await drawn;
    const t2 = await new Promise((ok) => requestAnimationFrame(() => ok(performance.now())));
    const poles = window.loopwrightPlot.describe().poles;
    if (!poles || poles.markers.length !== 6) throw new Error('the pole map was not drawn');
    return { draw: t1 - t0, frame: t2 - t0 };
  }, [k, loop]);
}

const median = (xs) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
const pct = (xs, p) => [...xs].sort((a, b) => a - b)[Math.min(xs.length - 1, Math.floor(xs.length * p))];
const rows = [];
const budget = 150;
let k = 0;
for (const [name, loopOf] of [
  ['edit of the same loop (in-place update)', () => 'BoomHold'],
  ['report of another loop (full rebuild)', (i) => `Loop${i % 2}`],
]) {
  for (let i = 0; i < 5; i++) await measure(k++, loopOf(i)); // warm-up
  const runs = [];
  for (let i = 0; i < 40; i++) runs.push(await measure(k++, loopOf(i)));
  const frame = runs.map((r) => r.frame);
  rows.push({
    scenario: name,
    'median to drawn ms': median(runs.map((r) => r.draw)).toFixed(1),
    'median to frame ms': median(frame).toFixed(1),
    'p90 to frame ms': pct(frame, 0.9).toFixed(1),
    'max to frame ms': Math.max(...frame).toFixed(1),
    'budget ms': budget,
    verdict: median(frame) < budget ? 'ok' : 'OVER',
  });
}
console.log('3 signals × 1000 points, 6 poles, 4 knobs; 40 reports each after 5 warm-up');
console.table(rows);
await browser.close();
server.close();
