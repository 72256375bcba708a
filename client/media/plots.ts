// Stacked uPlot panels, one per SignalInfo.group, sharing the time axis: synced cursor, synced
// x zoom (drag to zoom, double-click to reset), limit lines and at-limit bands drawn in hooks.
// Everything drawn comes from the report as it is; nothing about the model is computed here.

import uPlot from 'uplot';
import type { LoopRunReport, RunResult, SignalInfo } from '../../language/src/protocol';
import { labelWithUnit, fmt } from './format';
import type { Hidden, Pinned, Zoom } from './messages';
import { DASHES, LINEAR_DASH, sequential, signalStyle, withAlpha } from './palette';
import type { Theme } from './theme';

const SYNC_KEY = 'loopwright-plot';
const PANEL_HEIGHT = 190;

/** One drawn curve: a signal of a run. */
export interface SeriesMeta {
  /** Index into report.runs. */
  run: number;
  runLabel: string;
  runKind: RunResult['kind'];
  signal: string;
  unit: string;
  stroke: string;
  dash: number[];
  width: number;
  show: boolean;
}

/** A limit line as last drawn (y in CSS px from the top of the panel's canvas). */
export interface LimitDrawn {
  signal: string;
  which: 'lo' | 'hi';
  value: number;
  y: number;
  colour: string;
}

/** An at-limit interval as last drawn (x in CSS px from the left of the panel's canvas). */
export interface BandDrawn {
  signal: string;
  run: number;
  t0: number;
  t1: number;
  x0: number;
  x1: number;
  colour: string;
}

/** A pinned reference curve as last drawn. */
export interface ReferenceDrawn {
  signal: string;
  runLabel: string;
  stroke: string;
  alpha: number;
  width: number;
  /** Samples drawn (inside the x range). */
  points: number;
}

export interface Panel {
  group: string;
  root: HTMLElement;
  plot: uPlot;
  signals: SignalInfo[];
  series: SeriesMeta[];
  limits: LimitDrawn[];
  bands: BandDrawn[];
  reference: ReferenceDrawn[];
}

/** Look of the pinned reference: the live colours, faint and thin. */
export const REFERENCE_ALPHA = 0.35;
export const REFERENCE_WIDTH = 1;

export interface PlotsOptions {
  report: LoopRunReport;
  theme: Theme;
  zoom: Zoom;
  hidden: Hidden;
  pinned: Pinned | null;
  container: HTMLElement;
  width: number;
  onZoom(zoom: Zoom): void;
  onCursor(idx: number | null): void;
  /** Called once after each burst of panel draws (building, zooming, toggling, resizing). */
  onDrawn(): void;
}

/** The time grid shared by all panels and each run's samples on it. */
export interface Aligned {
  x: number[];
  /** columns[run][signal] → samples on `x` (null where the run has none). */
  columns: Array<Record<string, (number | null)[]>>;
}

function sameGrid(a: number[], b: number[]): boolean {
  if (a === b) return true;
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

/** Puts all runs on one x array: shared as is when every run has the same grid, else joined. */
export function align(report: LoopRunReport): Aligned {
  const runs = report.runs.filter((r) => r.t.length > 0);
  if (runs.length === 0) return { x: [], columns: report.runs.map(() => ({})) };
  if (report.runs.every((r) => r.t.length === 0 || sameGrid(r.t, runs[0].t))) {
    return { x: runs[0].t, columns: report.runs.map((r) => (r.t.length > 0 ? r.signals : {})) };
  }
  const names = report.runs.map((r) => Object.keys(r.signals));
  const tables = report.runs.map((r, i) => [r.t, ...names[i].map((n) => r.signals[n])] as uPlot.AlignedData);
  const joined = uPlot.join(tables);
  const columns: Aligned['columns'] = [];
  let k = 1;
  report.runs.forEach((_, i) => {
    const cols: Record<string, (number | null)[]> = {};
    for (const n of names[i]) cols[n] = joined[k++] as (number | null)[];
    columns.push(cols);
  });
  return { x: joined[0] as number[], columns };
}

/** Groups in order of first appearance, keeping only signals that some run has samples of. */
export function groupsOf(report: LoopRunReport): Array<{ group: string; signals: SignalInfo[] }> {
  const out: Array<{ group: string; signals: SignalInfo[] }> = [];
  for (const s of report.signals) {
    if (!report.runs.some((r) => r.t.length > 0 && r.signals[s.name])) continue;
    let g = out.find((o) => o.group === s.group);
    if (!g) out.push((g = { group: s.group, signals: [] }));
    g.signals.push(s);
  }
  return out;
}

/** Colour and dash of every (run, signal) pair: the page's single styling rule. */
export function styleOf(report: LoopRunReport, run: number, signal: SignalInfo, groupSignals: SignalInfo[], theme: Theme): { stroke: string; dash: number[] } {
  const r = report.runs[run];
  if (r.kind === 'sweep' && r.sweep) {
    const values = report.runs.filter((x) => x.kind === 'sweep' && x.sweep).map((x) => x.sweep!.value);
    const lo = Math.min(...values);
    const hi = Math.max(...values);
    const u = hi > lo ? (r.sweep.value - lo) / (hi - lo) : 0.5;
    const k = groupSignals.indexOf(signal);
    return { stroke: sequential(u, theme.variant), dash: [...DASHES[k % DASHES.length]] };
  }
  const base = signalStyle(report.signals.indexOf(signal), theme.variant);
  return r.kind === 'linear' ? { stroke: base.stroke, dash: [...LINEAR_DASH] } : base;
}

/** What decides the panels and their series: equal plans can take new data in place. */
export function planKey(report: LoopRunReport): string {
  const groups = groupsOf(report).map((g) => [
    g.group,
    g.signals.map((s) => [s.name, s.unit, s.limit?.lo ?? null, s.limit?.hi ?? null, report.runs.map((r) => (r.t.length > 0 && r.signals[s.name] ? 1 : 0)).join('')]),
  ]);
  const runs = report.runs.map((r) => [r.label, r.kind, r.sweep?.value ?? null]);
  return JSON.stringify([groups, runs, report.signals.map((s) => s.name)]);
}

export class Plots {
  readonly panels: Panel[] = [];
  aligned: Aligned;
  private report: LoopRunReport;
  private pinned: Pinned | null;
  private key: string;
  private syncing = false;
  private drawnQueued = false;
  private fullRange: { min: number; max: number } | null;

  constructor(private readonly o: PlotsOptions) {
    this.report = o.report;
    this.pinned = o.pinned;
    this.key = planKey(o.report);
    this.aligned = align(o.report);
    const x = this.aligned.x;
    this.fullRange = x.length > 0 ? { min: x[0], max: x[x.length - 1] } : null;
    const groups = groupsOf(o.report);
    groups.forEach((g, i) => this.panels.push(this.buildPanel(g.group, g.signals, i === groups.length - 1)));
    if (o.zoom && this.fullRange) this.applyZoom(o.zoom);
  }

  private buildPanel(group: string, signals: SignalInfo[], last: boolean): Panel {
    const { theme, hidden, container } = this.o;
    const report = this.report;
    const root = document.createElement('section');
    root.className = 'lw-panel';
    root.dataset.group = group;
    const heading = document.createElement('h2');
    heading.className = 'lw-panel-title';
    const units = [...new Set(signals.map((s) => s.unit).filter((u) => u))];
    heading.textContent = units.length ? `${group} [${units.join(', ')}]` : group;
    root.setAttribute('aria-label', heading.textContent);
    root.append(heading);
    container.append(root);

    const series: SeriesMeta[] = [];
    const data: (number | null)[][] = [this.aligned.x];
    const uSeries: uPlot.Series[] = [{ label: 't' }];
    for (const s of signals) {
      report.runs.forEach((run, ri) => {
        const col = this.aligned.columns[ri][s.name];
        if (!col) return;
        const st = styleOf(report, ri, s, signals, theme);
        const show = !hidden.signals.includes(s.name) && !hidden.runs.includes(run.label);
        const meta: SeriesMeta = { run: ri, runLabel: run.label, runKind: run.kind, signal: s.name, unit: s.unit, stroke: st.stroke, dash: st.dash, width: 1.5, show };
        series.push(meta);
        data.push(col);
        uSeries.push({ label: `${s.name} (${run.label})`, stroke: st.stroke, dash: st.dash, width: meta.width, show, spanGaps: true, points: { show: false } });
      });
    }

    const panel: Panel = { group, root, plot: null as unknown as uPlot, signals, series, limits: [], bands: [], reference: [] };
    const limited = signals.filter((s) => s.limit);
    const axisCommon = { stroke: theme.muted, font: theme.font, grid: { stroke: withAlpha(theme.grid, 0.35), width: 1 }, ticks: { stroke: withAlpha(theme.grid, 0.6), width: 1, size: 4 } };

    const opts: uPlot.Options = {
      width: this.o.width,
      height: PANEL_HEIGHT + (last ? 24 : 0),
      legend: { show: false },
      series: uSeries,
      scales: {
        x: { time: false },
        y: { range: (u, lo, hi) => this.yRange(u, panel, lo, hi, limited) },
      },
      axes: [
        last
          ? { ...axisCommon, label: 't [s]', labelFont: theme.font, labelSize: 16, size: 30 }
          : { ...axisCommon, size: 8, values: (_u: uPlot, splits: number[]) => splits.map(() => '') },
        { ...axisCommon, size: 56, values: (_u: uPlot, splits: number[]) => splits.map((v) => fmt(v)) },
      ],
      cursor: {
        // Only the vertical line: a horizontal one would be meaningless on the other panels.
        y: false,
        drag: { x: true, y: false, setScale: true },
        points: { show: false },
        sync: { key: SYNC_KEY, setSeries: false, scales: ['x', null], filters: { pub: (type) => type === 'mousemove' } },
      },
      hooks: {
        drawClear: [(u) => {
          u.ctx.save();
          u.ctx.fillStyle = theme.background;
          u.ctx.fillRect(0, 0, u.ctx.canvas.width, u.ctx.canvas.height);
          u.ctx.restore();
        }],
        drawAxes: [(u) => {
          this.drawBands(u, panel);
          this.drawReference(u, panel);
        }],
        draw: [(u) => {
          this.drawLimits(u, panel);
          this.queueDrawn();
        }],
        setScale: [(u, key) => {
          if (key === 'x') this.zoomChanged(u);
        }],
        setCursor: [(u) => this.o.onCursor(u.cursor.idx ?? null)],
      },
    };
    panel.plot = new uPlot(opts, data as uPlot.AlignedData, root);
    return panel;
  }

  /** Data range widened to take in a limit that lies near the data, padded a little. */
  private yRange(u: uPlot, panel: Panel, lo: number | null, hi: number | null, limited: SignalInfo[]): uPlot.Range.MinMax {
    const ref = this.referenceExtent(u, panel);
    if (ref) {
      lo = lo === null || !Number.isFinite(lo) ? ref[0] : Math.min(lo, ref[0]);
      hi = hi === null || !Number.isFinite(hi) ? ref[1] : Math.max(hi, ref[1]);
    }
    if (lo === null || hi === null || !Number.isFinite(lo) || !Number.isFinite(hi)) return [0, 1];
    let a = lo;
    let b = hi;
    const span = Math.max(b - a, Math.abs(b) * 0.1, 1e-9);
    for (const s of limited) {
      for (const v of [s.limit!.lo, s.limit!.hi]) {
        if (v >= lo - span && v <= hi + span) {
          a = Math.min(a, v);
          b = Math.max(b, v);
        }
      }
    }
    return uPlot.rangeNum(a, b, 0.08, true);
  }

  /** The pinned curves of a panel that are shown, each with the live series it stands under. */
  private referenceCurves(panel: Panel): Array<{ meta: SeriesMeta; t: number[]; ys: (number | null)[] }> {
    const out: Array<{ meta: SeriesMeta; t: number[]; ys: (number | null)[] }> = [];
    if (!this.pinned) return out;
    for (const run of this.pinned.runs) {
      for (const s of panel.signals) {
        const ys = run.signals[s.name];
        if (!ys) continue;
        const meta = panel.series.find((m) => m.signal === s.name && m.runLabel === run.label) ?? panel.series.find((m) => m.signal === s.name && m.runKind === run.kind);
        if (!meta || !meta.show) continue;
        out.push({ meta, t: run.t, ys });
      }
    }
    return out;
  }

  /** y extent of the shown pinned curves inside the current x range, so that none is cut off. */
  private referenceExtent(u: uPlot, panel: Panel): [number, number] | null {
    if (!this.pinned) return null;
    const x0 = u.scales.x.min ?? -Infinity;
    const x1 = u.scales.x.max ?? Infinity;
    let lo = Infinity;
    let hi = -Infinity;
    for (const c of this.referenceCurves(panel)) {
      for (let i = 0; i < c.t.length; i++) {
        const y = c.ys[i];
        if (y === null || c.t[i] < x0 || c.t[i] > x1) continue;
        if (y < lo) lo = y;
        if (y > hi) hi = y;
      }
    }
    return lo <= hi ? [lo, hi] : null;
  }

  /** The pinned response, under the live curves (drawn before the series). */
  private drawReference(u: uPlot, panel: Panel): void {
    panel.reference = [];
    if (!this.pinned) return;
    const { left, top, width, height } = u.bbox;
    const ctx = u.ctx;
    const px = uPlot.pxRatio;
    const x0 = u.scales.x.min ?? -Infinity;
    const x1 = u.scales.x.max ?? Infinity;
    ctx.save();
    ctx.beginPath();
    ctx.rect(left, top, width, height);
    ctx.clip();
    ctx.lineWidth = REFERENCE_WIDTH * px;
    ctx.lineJoin = 'round';
    for (const c of this.referenceCurves(panel)) {
      ctx.strokeStyle = withAlpha(c.meta.stroke, REFERENCE_ALPHA);
      ctx.setLineDash(c.meta.dash.map((d) => d * px));
      ctx.beginPath();
      let pen = false;
      let points = 0;
      const n = c.t.length;
      for (let i = 0; i < n; i++) {
        const y = c.ys[i];
        // Keep one sample beyond each end of the range so the line reaches the edges.
        if (y === null || (i + 1 < n && c.t[i + 1] < x0) || (i > 0 && c.t[i - 1] > x1)) {
          pen = false;
          continue;
        }
        const X = u.valToPos(c.t[i], 'x', true);
        const Y = u.valToPos(y, 'y', true);
        if (pen) ctx.lineTo(X, Y);
        else ctx.moveTo(X, Y);
        pen = true;
        points++;
      }
      ctx.stroke();
      panel.reference.push({ signal: c.meta.signal, runLabel: c.meta.runLabel, stroke: c.meta.stroke, alpha: REFERENCE_ALPHA, width: REFERENCE_WIDTH, points });
    }
    ctx.restore();
  }

  private visible(panel: Panel, signal: string, run?: number): boolean {
    return panel.series.some((m) => m.signal === signal && m.show && (run === undefined || m.run === run));
  }

  private drawBands(u: uPlot, panel: Panel): void {
    panel.bands = [];
    const report = this.report;
    const { left, top, width, height } = u.bbox;
    const ctx = u.ctx;
    const px = uPlot.pxRatio;
    ctx.save();
    for (const s of panel.signals) {
      if (!s.limit) continue;
      report.runs.forEach((run, ri) => {
        const intervals = run.atLimit[s.name];
        if (!intervals || !this.visible(panel, s.name, ri)) return;
        const meta = panel.series.find((m) => m.run === ri && m.signal === s.name)!;
        ctx.fillStyle = withAlpha(meta.stroke, 0.16);
        for (const [t0, t1] of intervals) {
          const x0 = Math.max(left, u.valToPos(Math.min(t0, t1), 'x', true));
          const x1 = Math.min(left + width, u.valToPos(Math.max(t0, t1), 'x', true));
          if (!(x1 > x0)) continue;
          ctx.fillRect(x0, top, Math.max(1, x1 - x0), height);
          panel.bands.push({ signal: s.name, run: ri, t0, t1, x0: x0 / px, x1: x1 / px, colour: meta.stroke });
        }
      });
    }
    ctx.restore();
  }

  private drawLimits(u: uPlot, panel: Panel): void {
    panel.limits = [];
    const { theme } = this.o;
    const { left, top, width, height } = u.bbox;
    const ctx = u.ctx;
    const px = uPlot.pxRatio;
    ctx.save();
    ctx.lineWidth = Math.max(1, Math.round(px));
    ctx.setLineDash([3 * px, 3 * px]);
    ctx.font = theme.font.replace(/^(\d+)px/, (_, n) => `${Number(n) * px}px`);
    ctx.textAlign = 'right';
    for (const s of panel.signals) {
      if (!s.limit || !this.visible(panel, s.name)) continue;
      const meta = panel.series.find((m) => m.signal === s.name)!;
      const colour = meta.runKind === 'sweep' ? theme.foreground : meta.stroke;
      const values: Array<['lo' | 'hi', number]> = s.limit.lo === s.limit.hi ? [['hi', s.limit.hi]] : [['lo', s.limit.lo], ['hi', s.limit.hi]];
      for (const [which, v] of values) {
        const y = Math.round(u.valToPos(v, 'y', true)) + 0.5;
        if (y < top || y > top + height) continue;
        ctx.strokeStyle = colour;
        ctx.beginPath();
        ctx.moveTo(left, y);
        ctx.lineTo(left + width, y);
        ctx.stroke();
        ctx.fillStyle = colour;
        ctx.textBaseline = which === 'hi' ? 'bottom' : 'top';
        ctx.fillText(`${s.name} ${which} ${fmt(v)}${s.unit ? ' ' + s.unit : ''}`, left + width - 4 * px, which === 'hi' ? y - 2 * px : y + 2 * px);
        panel.limits.push({ signal: s.name, which, value: v, y: y / px, colour });
      }
    }
    ctx.restore();
  }

  /** One notification per burst of draws (a build, a zoom or a toggle redraws every panel). */
  private queueDrawn(): void {
    if (this.drawnQueued) return;
    this.drawnQueued = true;
    queueMicrotask(() => {
      this.drawnQueued = false;
      this.o.onDrawn();
    });
  }

  private zoomChanged(src: uPlot): void {
    const sc = src.scales.x;
    if (sc.min === undefined || sc.max === undefined || sc.min === null || sc.max === null) return;
    const range = { min: sc.min, max: sc.max };
    if (!this.syncing) {
      this.syncing = true;
      try {
        for (const p of this.panels) {
          if (p.plot === src || !p.plot) continue;
          const o = p.plot.scales.x;
          if (o.min !== range.min || o.max !== range.max) {
            p.plot.setScale('x', range);
          }
        }
      } finally {
        this.syncing = false;
      }
    }
    if (!this.syncing && src.status === 1) this.o.onZoom(this.isFull(range) ? null : range);
  }

  private isFull(r: { min: number; max: number }): boolean {
    const f = this.fullRange;
    if (!f) return true;
    const tol = (f.max - f.min) * 1e-9;
    return r.min <= f.min + tol && r.max >= f.max - tol;
  }

  /**
   * Takes a new report of the same plan (same panels and series) in place: zoom, cursor and
   * toggles stay. Returns false, changing nothing, when the plan differs (the caller rebuilds).
   */
  update(report: LoopRunReport, zoom: Zoom): boolean {
    const key = planKey(report);
    if (key !== this.key || this.panels.length === 0) return false;
    this.report = report;
    this.aligned = align(report);
    const x = this.aligned.x;
    this.fullRange = x.length > 0 ? { min: x[0], max: x[x.length - 1] } : null;
    this.syncing = true;
    try {
      for (const p of this.panels) {
        const data = [x, ...p.series.map((m) => this.aligned.columns[m.run][m.signal])] as uPlot.AlignedData;
        p.plot.batch(() => {
          p.plot.setData(data, true);
          if (zoom) p.plot.setScale('x', { min: zoom.min, max: zoom.max });
        });
      }
    } finally {
      this.syncing = false;
    }
    return true;
  }

  /** Sets or clears the pinned reference and redraws. */
  setPinned(pinned: Pinned | null): void {
    this.pinned = pinned;
    for (const p of this.panels) p.plot.redraw();
  }

  /** Sample index under the cursor (null when the pointer is off the plots). */
  cursorIdx(): number | null {
    for (const p of this.panels) {
      const c = p.plot.cursor;
      if (c.left !== undefined && c.left >= 0 && c.idx !== undefined && c.idx !== null) return c.idx;
    }
    return null;
  }

  applyZoom(z: Zoom): void {
    const f = this.fullRange;
    if (!f || this.panels.length === 0) return;
    const range = z ?? f;
    this.panels[0].plot.setScale('x', { min: range.min, max: range.max });
  }

  /** Shows or hides series after a legend toggle, without rebuilding. */
  setHidden(hidden: Hidden): void {
    for (const p of this.panels) {
      p.plot.batch(() => {
        p.series.forEach((m, i) => {
          const show = !hidden.signals.includes(m.signal) && !hidden.runs.includes(m.runLabel);
          if (show !== m.show) {
            m.show = show;
            p.plot.setSeries(i + 1, { show });
          }
        });
      });
    }
  }

  setWidth(width: number): void {
    for (const p of this.panels) p.plot.setSize({ width, height: p.plot.height });
  }

  destroy(): void {
    for (const p of this.panels) {
      p.plot.destroy();
      p.root.remove();
    }
    this.panels.length = 0;
  }
}
