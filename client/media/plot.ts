// Entry of the response-plot page (bundled to dist/media/plot.js). It says `ready`, then draws
// each LoopRunReport it receives; a reload redraws the last one at once from the saved state.
// The same bundle drives the standalone HTML report, which embeds its report in the page.

import type { LoopRunReport } from '../../language/src/protocol';
import { reportToCsv } from './csv';
import { el } from './dom';
import { connectHost } from './host';
import { Readout, renderLegend, updateLegend } from './legend';
import { Knobs } from './knobs';
import { EMBEDDED_REPORT_ID, parseHostMessage, parseState, type Hidden, type HostToPage, type Pinned, type PlotState, type Zoom } from './messages';
import { planKey, Plots } from './plots';
import { PoleMap } from './polemap';
import { composePng } from './png';
import { runErrorText, renderResults } from './tables';
import { readTheme, watchTheme, type Theme } from './theme';

interface Layout {
  title: HTMLElement;
  status: HTMLElement;
  problem: HTMLElement;
  stale: HTMLElement;
  alerts: HTMLElement;
  legend: HTMLElement;
  runs: HTMLElement;
  readout: HTMLElement;
  panels: HTMLElement;
  empty: HTMLElement;
  side: HTMLElement;
  knobs: HTMLElement;
  poles: HTMLElement;
  results: HTMLElement;
  csv: HTMLButtonElement;
  png: HTMLButtonElement;
  reset: HTMLButtonElement;
  pin: HTMLButtonElement;
}

function button(text: string, id: string, hint: string): HTMLButtonElement {
  const b = el('button', 'lw-button', text);
  b.type = 'button';
  b.id = id;
  b.title = hint;
  b.disabled = true;
  return b;
}

function buildLayout(root: HTMLElement): Layout {
  const app = el('div', 'lw-app');
  const bar = el('header', 'lw-toolbar');
  const title = el('h1', 'lw-title', 'Loopwright');
  const status = el('span', 'lw-status');
  status.setAttribute('role', 'status');
  status.setAttribute('aria-live', 'polite');
  const actions = el('div', 'lw-actions');
  const reset = button('Reset zoom', 'lw-reset-zoom', 'Show the whole run (or double-click a plot)');
  const csv = button('Export CSV', 'lw-export-csv', 'Every run as comma-separated values');
  const png = button('Export PNG', 'lw-export-png', 'All panels as one image');
  const pin = button('Pin', 'lw-pin', 'Keep this response as a faint reference under the next runs');
  pin.setAttribute('aria-pressed', 'false');
  actions.append(pin, reset, csv, png);
  bar.append(title, status, actions);

  const problem = el('div', 'lw-problem');
  problem.setAttribute('role', 'alert');
  problem.hidden = true;
  // "Not re-run": the document has an error, the plot below is the last good run.
  const stale = el('div', 'lw-stale');
  stale.setAttribute('role', 'status');
  stale.hidden = true;
  const alerts = el('div', 'lw-alerts');

  const body = el('div', 'lw-body');
  const plots = el('div', 'lw-plots');
  const legend = el('div', 'lw-legend');
  legend.setAttribute('role', 'group');
  legend.setAttribute('aria-label', 'Signals (toggle in every run)');
  const runs = el('div', 'lw-legend lw-legend-runs');
  runs.setAttribute('role', 'group');
  runs.setAttribute('aria-label', 'Runs');
  const readout = el('div', 'lw-readout');
  const panels = el('div', 'lw-panels');
  const empty = el('p', 'lw-empty', 'Waiting for a run…');
  plots.append(legend, runs, readout, panels, empty);
  // The tuning side panel (parameter knobs, s-plane pole map): beside the plots, hidden until
  // the report has params or poles.
  const side = el('aside', 'lw-side');
  side.setAttribute('aria-label', 'Tuning');
  side.hidden = true;
  const knobs = el('section', 'lw-knobs');
  knobs.setAttribute('aria-label', 'Parameters');
  const poles = el('section', 'lw-poles');
  poles.setAttribute('aria-label', 'Pole map');
  side.append(knobs, poles);
  body.append(plots, side);

  const results = el('section', 'lw-results');
  results.setAttribute('aria-label', 'Run results');
  app.append(bar, problem, stale, alerts, body, results);
  root.replaceChildren(app);
  return { title, status, problem, stale, alerts, legend, runs, readout, panels, empty, side, knobs, poles, results, csv, png, reset, pin };
}

class App {
  private readonly ui: Layout;
  private state: PlotState | null = null;
  private plots: Plots | null = null;
  private readout: Readout | null = null;
  private theme: Theme = readTheme();
  private drawCount = 0;
  private buildStart = 0;
  private readonly host = connectHost(() => (this.state?.report.loop || 'loop').replace(/[^\w.-]+/g, '_'));
  private readonly knobs: Knobs;
  private readonly poleMap: PoleMap;
  private legendKey = '';
  /** The last report shown was of this loop (knobs and pole map keep their state for it). */
  private shownLoop: string | null = null;
  /** The document version the shown report was computed from, when the host sent it. */
  private reportVersion: number | undefined;

  constructor(root: HTMLElement) {
    this.ui = buildLayout(root);
    this.knobs = new Knobs({
      box: this.ui.knobs,
      post: (m) => this.host.post(m),
      showPlant: false,
      onShowPlant: (show) => {
        if (!this.state) return;
        this.state = { ...this.state, showPlant: show };
        this.save();
      },
    });
    this.poleMap = new PoleMap(this.ui.poles);
    this.ui.pin.addEventListener('click', () => this.togglePin());
    this.ui.csv.addEventListener('click', () => this.exportCsv());
    this.ui.png.addEventListener('click', () => this.exportPng());
    this.ui.reset.addEventListener('click', () => this.plots?.applyZoom(null));
    window.addEventListener('message', (e: MessageEvent) => this.receive(e.data));
    watchTheme(() => this.redraw());
    let width = 0;
    new ResizeObserver(() => {
      const w = this.panelWidth();
      if (w !== width) {
        width = w;
        this.plots?.setWidth(w);
      }
    }).observe(this.ui.panels);
  }

  start(): void {
    const embedded = document.getElementById(EMBEDDED_REPORT_ID);
    const saved = parseState(this.host.getState());
    if (saved) {
      try {
        this.show(saved);
      } catch (e) {
        this.problem(`Could not redraw the saved plot: ${e instanceof Error ? e.message : String(e)}`);
      }
    } else if (embedded) {
      let data: unknown;
      try {
        data = JSON.parse(embedded.textContent ?? '');
      } catch (e) {
        this.problem(`The embedded report is not valid JSON (${e instanceof Error ? e.message : String(e)}).`);
      }
      if (data !== undefined) this.receive({ type: 'report', report: data });
    }
    this.host.post({ type: 'ready' });
  }

  private receive(data: unknown): void {
    const parsed = parseHostMessage(data);
    if (!parsed.ok) {
      this.problem(`Ignored a malformed message: ${parsed.error}.`);
      return;
    }
    this.problem(null);
    try {
      this.handle(parsed.value);
    } catch (e) {
      this.problem(`Could not draw the report: ${e instanceof Error ? e.message : String(e)}`);
    }
  }

  private handle(m: HostToPage): void {
    switch (m.type) {
      case 'report': {
        const prev = this.state;
        this.reportVersion = m.version;
        this.setStale(null);
        if (prev && sameLoop(prev.report, m.report)) this.update(m.report);
        else this.show({ report: m.report, zoom: null, hidden: { signals: [], runs: [] }, ...(prev?.showPlant ? { showPlant: true } : {}) });
        break;
      }
      case 'edited':
        this.knobs.edited(m.version);
        break;
      case 'theme':
        this.redraw();
        break;
      case 'status':
        this.setStatus(m.kind, m.message, m.line);
        break;
    }
  }

  private setStatus(kind: 'running' | 'idle' | 'error', message?: string, line?: number): void {
    const s = this.ui.status;
    s.dataset.kind = kind;
    document.body.classList.toggle('lw-running', kind === 'running');
    if (kind === 'idle') s.textContent = '';
    else if (kind === 'running') {
      s.textContent = message ? `Running… ${message}` : 'Running…';
      // a banner names why an earlier version was not run; a later one is running now
      this.setStale(null);
    }
    else {
      s.textContent = `${line ? `Line ${line}: ` : ''}${message ?? 'The run failed.'}`;
      this.setStale(`Not re-run: ${line ? `line ${line}: ` : ''}${message ?? 'the run failed.'}`);
    }
  }

  /** The quiet banner over a plot that is no longer current; null clears it. */
  private setStale(text: string | null): void {
    this.ui.stale.hidden = text === null;
    this.ui.stale.textContent = text ?? '';
  }

  /** Shows a problem of the page itself (bad message, internal error); null clears it. */
  problem(text: string | null): void {
    this.ui.problem.hidden = text === null;
    this.ui.problem.textContent = text ?? '';
    if (text !== null) this.host.post({ type: 'error', message: text });
  }

  private panelWidth(): number {
    return Math.max(320, Math.floor(this.ui.panels.clientWidth || document.documentElement.clientWidth - 24));
  }

  private show(state: PlotState): void {
    this.state = state;
    this.render();
    this.save();
  }

  /** A new report of the loop on show: panels take the new data in place when they can. */
  private update(report: LoopRunReport): void {
    const st = this.state!;
    this.state = { ...st, report };
    if (!this.plots || this.plots.panels.length === 0 || !this.plots.update(report, st.zoom)) {
      this.render();
    } else {
      this.buildStart = performance.now();
      this.renderChrome(report);
      this.readout = new Readout(this.ui.readout, this.plots, report.signals);
      this.readout.update(this.plots.cursorIdx());
      this.renderSide(report);
    }
    this.save();
  }

  private renderChrome(report: LoopRunReport): void {
    const st = this.state!;
    document.title = `Loopwright — ${report.loop}`;
    this.ui.title.textContent = report.file ? `${report.loop} — ${report.file}` : report.loop;
    this.renderAlerts(report);
    // The legend is rebuilt only when its entries change, so a focused entry keeps its focus.
    const key = `${this.theme.variant}|${planKey(report)}|${report.runs.map((r) => `${r.label}:${r.recovered}`).join(',')}`;
    if (key !== this.legendKey) {
      this.legendKey = key;
      renderLegend({ report, theme: this.theme, hidden: st.hidden, signalsBox: this.ui.legend, runsBox: this.ui.runs, onToggle: (w) => this.toggle(w) });
    }
    renderResults(this.ui.results, report);
  }

  private renderSide(report: LoopRunReport): void {
    const same = this.shownLoop === loopKey(report);
    this.shownLoop = loopKey(report);
    // Knobs need a host that applies edits; the standalone report shows the pole map only.
    // Shown before drawing, so that the pole map measures its real width.
    this.ui.side.hidden = (this.host.standalone || !report.params?.length) && !(report.poles && report.poles.closed.length + report.poles.open.length > 0);
    this.knobs.setShowPlant(!!this.state?.showPlant);
    this.knobs.update(this.host.standalone ? [] : report.params ?? [], same, this.reportVersion);
    this.poleMap.update(report.poles, this.theme, same);
    this.ui.side.hidden = this.knobs.count === 0 && !this.poleMap.any;
  }

  private togglePin(): void {
    if (!this.state) return;
    const { pinned, ...rest } = this.state;
    const next: Pinned | undefined = pinned ? undefined : pinOf(this.state.report);
    this.state = next ? { ...rest, pinned: next } : rest;
    this.syncPin();
    this.plots?.setPinned(next ?? null);
    this.save();
  }

  private syncPin(): void {
    const on = !!this.state?.pinned;
    this.ui.pin.textContent = on ? 'Unpin' : 'Pin';
    this.ui.pin.setAttribute('aria-pressed', String(on));
    this.ui.pin.title = on ? 'Stop drawing the pinned reference' : 'Keep this response as a faint reference under the next runs';
  }

  private redraw(): void {
    this.theme = readTheme();
    if (this.state) this.render();
  }

  private render(): void {
    const st = this.state!;
    const { report } = st;
    this.buildStart = performance.now();
    this.plots?.destroy();
    this.plots = null;
    this.theme = readTheme();
    this.legendKey = '';
    this.renderChrome(report);
    // The side panel first: showing it narrows the plots.
    this.renderSide(report);
    this.syncPin();
    this.plots = new Plots({
      report,
      theme: this.theme,
      zoom: st.zoom,
      hidden: st.hidden,
      pinned: st.pinned ?? null,
      container: this.ui.panels,
      width: this.panelWidth(),
      onZoom: (z) => this.zoomed(z),
      onCursor: (idx) => this.readout?.update(idx),
      onDrawn: () => this.drawn(),
    });
    this.readout = new Readout(this.ui.readout, this.plots, report.signals);
    const any = this.plots.panels.length > 0;
    this.ui.empty.hidden = any;
    this.ui.empty.textContent = any ? '' : report.runs.length === 0 ? 'The report has no runs.' : 'The runs have no samples to plot.';
    this.ui.readout.hidden = !any;
    this.ui.csv.disabled = false;
    this.ui.png.disabled = !any;
    this.ui.reset.disabled = !any;
    this.ui.pin.disabled = !any;
  }

  private renderAlerts(report: LoopRunReport): void {
    this.ui.alerts.replaceChildren();
    for (const run of report.runs) {
      if (!run.error) continue;
      const a = el('div', 'lw-alert', runErrorText(run));
      a.setAttribute('role', 'alert');
      this.ui.alerts.append(a);
    }
  }

  private drawn(): void {
    this.drawCount++;
    document.body.dataset.drawCount = String(this.drawCount);
    const ms = performance.now() - this.buildStart;
    document.dispatchEvent(new CustomEvent('loopwright:drawn', { detail: { count: this.drawCount, ms } }));
  }

  private zoomed(zoom: Zoom): void {
    if (!this.state) return;
    this.state = { ...this.state, zoom };
    this.save();
  }

  private toggle(what: { signal: string } | { run: string }): void {
    if (!this.state || !this.plots) return;
    const flip = (list: string[], key: string) => (list.includes(key) ? list.filter((k) => k !== key) : [...list, key]);
    const h = this.state.hidden;
    const hidden: Hidden = 'signal' in what ? { ...h, signals: flip(h.signals, what.signal) } : { ...h, runs: flip(h.runs, what.run) };
    this.state = { ...this.state, hidden };
    this.plots.setHidden(hidden);
    updateLegend([this.ui.legend, this.ui.runs], hidden);
    this.readout?.refresh();
    this.save();
  }

  private save(): void {
    if (this.state) this.host.setState(this.state);
  }

  private exportCsv(): void {
    if (!this.state) return;
    this.host.post({ type: 'exportCsv', csv: reportToCsv(this.state.report) });
  }

  private exportPng(): void {
    if (!this.state || !this.plots) return;
    const title = this.ui.title.textContent ?? this.state.report.loop;
    this.host.post({ type: 'exportPng', dataUrl: composePng(title, this.plots.panels, this.theme) });
  }

  /** Plain-data view of what is drawn, for tests and for debugging from the devtools console. */
  describe() {
    return {
      drawCount: this.drawCount,
      theme: this.theme,
      zoom: this.state?.zoom ?? null,
      hidden: this.state?.hidden ?? null,
      pinned: !!this.state?.pinned,
      stale: this.ui.stale.hidden ? null : this.ui.stale.textContent,
      cursorIdx: this.plots?.cursorIdx() ?? null,
      knobs: this.knobs.describe(),
      /** Knob edits the host has not answered yet. */
      knobEditsWaiting: this.knobs.waiting,
      poles: this.poleMap.any ? this.poleMap.describe() : null,
      panels: (this.plots?.panels ?? []).map((p) => ({
        group: p.group,
        signals: p.signals.map((s) => s.name),
        series: p.series.map((m) => ({ ...m, dash: [...m.dash] })),
        limits: p.limits.map((l) => ({ ...l })),
        bands: p.bands.map((b) => ({ ...b })),
        reference: p.reference.map((r) => ({ ...r })),
        yRange: { min: p.plot.scales.y.min ?? null, max: p.plot.scales.y.max ?? null },
        xRange: { min: p.plot.scales.x.min ?? null, max: p.plot.scales.x.max ?? null },
        bbox: { ...p.plot.bbox },
      })),
    };
  }
}

/** Reports of one loop of one file: the page keeps zoom, toggles, pin and knobs between them. */
function loopKey(r: LoopRunReport): string {
  return JSON.stringify([r.file ?? '', r.loop]);
}

function sameLoop(a: LoopRunReport, b: LoopRunReport): boolean {
  return loopKey(a) === loopKey(b);
}

/** The pinned copy of a report's response (the arrays are shared: reports are never changed). */
function pinOf(report: LoopRunReport): Pinned {
  return { loop: loopKey(report), runs: report.runs.map((r) => ({ label: r.label, kind: r.kind, t: r.t, signals: r.signals })) };
}

function boot(): void {
  let root = document.getElementById('lw-root');
  if (!root) {
    root = el('div');
    root.id = 'lw-root';
    document.body.append(root);
  }
  const app = new App(root);
  const report = (e: unknown) => app.problem(`The page hit an internal error: ${e instanceof Error ? e.message : String(e)}`);
  window.addEventListener('error', (e) => report(e.error ?? e.message));
  window.addEventListener('unhandledrejection', (e) => report(e.reason));
  (window as unknown as { loopwrightPlot: { describe(): unknown } }).loopwrightPlot = { describe: () => app.describe() };
  app.start();
}

if (document.readyState === 'loading') document.addEventListener('DOMContentLoaded', boot, { once: true });
else boot();
