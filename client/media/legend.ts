// Legend (toggle buttons) and the cursor readout. A signal toggle applies to that signal in every
// run; a run toggle applies to every signal of that run.

import type { LoopRunReport, SignalInfo } from '../../language/src/protocol';
import { el, swatch } from './dom';
import { fmt } from './format';
import type { Hidden } from './messages';
import { groupsOf, styleOf, type Plots, type SeriesMeta } from './plots';
import { LINEAR_DASH } from './palette';
import type { Theme } from './theme';

export interface LegendOptions {
  report: LoopRunReport;
  theme: Theme;
  hidden: Hidden;
  signalsBox: HTMLElement;
  runsBox: HTMLElement;
  /** A legend entry was pressed: flip that signal (in every run) or that run. */
  onToggle(what: { signal: string } | { run: string }): void;
}

function toggleButton(pressed: boolean): HTMLButtonElement {
  const b = el('button', 'lw-legend-item');
  b.type = 'button';
  b.setAttribute('aria-pressed', String(pressed));
  return b;
}

export function renderLegend(o: LegendOptions): void {
  const { report, theme, hidden } = o;
  o.signalsBox.replaceChildren();
  o.runsBox.replaceChildren();
  const sweepRuns = report.runs.filter((r) => r.kind === 'sweep' && r.sweep);

  for (const g of groupsOf(report)) {
    for (const s of g.signals) {
      const b = toggleButton(!hidden.signals.includes(s.name));
      b.dataset.signal = s.name;
      const firstRun = report.runs.findIndex((r) => r.signals[s.name] && r.t.length > 0);
      const st = styleOf(report, firstRun, s, g.signals, theme);
      b.append(swatch(sweepRuns.length > 0 ? theme.foreground : st.stroke, st.dash), el('span', 'lw-legend-name', s.name));
      if (s.unit) b.append(el('span', 'lw-legend-unit', s.unit));
      if (s.limit) b.append(el('span', 'lw-legend-limit', `limits ${fmt(s.limit.lo)} … ${fmt(s.limit.hi)}`));
      b.title = s.description ? `${s.description} — click to show or hide in every run` : 'Click to show or hide in every run';
      b.addEventListener('click', () => o.onToggle({ signal: s.name }));
      o.signalsBox.append(b);
    }
  }

  if (report.runs.length < 2) return;
  report.runs.forEach((run) => {
    const b = toggleButton(!hidden.runs.includes(run.label));
    b.dataset.run = run.label;
    let colour = theme.foreground;
    let dash: readonly number[] = [];
    if (run.kind === 'sweep' && run.sweep) {
      const any = report.signals.find((s) => run.signals[s.name]);
      if (any) colour = styleOf(report, report.runs.indexOf(run), any, [any], theme).stroke;
    } else if (run.kind === 'linear') dash = LINEAR_DASH;
    b.append(swatch(colour, dash), el('span', 'lw-legend-name', run.label));
    if (run.sweep) b.append(el('span', 'lw-legend-unit', `${run.sweep.target} = ${run.sweep.text}`));
    if (run.kind === 'sweep') {
      const mark = el('span', run.recovered ? 'lw-ok' : 'lw-bad', run.recovered ? '✓' : '✗');
      mark.title = run.recovered ? 'recovered' : 'not recovered';
      b.append(mark, el('span', 'lw-sr-only', run.recovered ? 'recovered' : 'not recovered'));
    }
    b.addEventListener('click', () => o.onToggle({ run: run.label }));
    o.runsBox.append(b);
  });
}

/** Brings the legend's pressed states in line with `hidden` (entries stay, so focus stays). */
export function updateLegend(boxes: HTMLElement[], hidden: Hidden): void {
  for (const box of boxes) {
    for (const b of box.querySelectorAll<HTMLButtonElement>('.lw-legend-item')) {
      const off = b.dataset.signal !== undefined ? hidden.signals.includes(b.dataset.signal) : hidden.runs.includes(b.dataset.run ?? '');
      b.setAttribute('aria-pressed', String(!off));
    }
  }
}

interface ReadoutItem {
  meta: SeriesMeta;
  col: (number | null)[];
  item: HTMLElement;
  value: HTMLElement;
}

/** Values of every shown series at the cursor, across all panels. */
export class Readout {
  private readonly time: HTMLElement;
  private readonly items: ReadoutItem[] = [];
  private lastIdx: number | null | undefined = undefined;

  constructor(private readonly box: HTMLElement, private readonly plots: Plots, signals: SignalInfo[]) {
    box.replaceChildren();
    this.time = el('span', 'lw-readout-time');
    box.append(this.time);
    for (const p of plots.panels) {
      for (const meta of p.series) {
        const item = el('span', 'lw-readout-item');
        const value = el('span', 'lw-readout-value');
        const s = signals.find((x) => x.name === meta.signal);
        item.append(swatch(meta.stroke, meta.dash), el('span', 'lw-readout-name', `${meta.signal} (${meta.runLabel})`), value);
        if (s?.unit) item.append(el('span', 'lw-readout-unit', s.unit));
        box.append(item);
        this.items.push({ meta, col: plots.aligned.columns[meta.run][meta.signal], item, value });
      }
    }
    this.update(null);
  }

  update(idx: number | null): void {
    if (idx === this.lastIdx) return;
    this.lastIdx = idx;
    const x = this.plots.aligned.x;
    this.time.textContent = idx === null ? 'Point at a plot to read the values; drag to zoom, double-click to show all.' : `t = ${fmt(x[idx], 5)} s`;
    for (const r of this.items) {
      r.item.hidden = idx === null || !r.meta.show;
      r.value.textContent = idx === null ? '—' : fmt(r.col[idx] ?? null, 5);
    }
  }

  refresh(): void {
    const i = this.lastIdx ?? null;
    this.lastIdx = undefined;
    this.update(i);
  }
}
