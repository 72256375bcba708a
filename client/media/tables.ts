// Per-run results: the error (prominent), the metrics table with units, expects with pass/fail.

import type { LoopRunReport, RunResult, SignalInfo, SignalMetrics } from '../../language/src/protocol';
import { el } from './dom';
import { fmt } from './format';

interface Column {
  head: string;
  unit: (s: SignalInfo) => string;
  value: (m: SignalMetrics) => number | null | undefined;
}

const COLUMNS: Column[] = [
  { head: 'Rise (10–90 %)', unit: () => 's', value: (m) => m.rise },
  { head: 'Overshoot', unit: () => '%', value: (m) => (m.overshoot === null ? null : m.overshoot * 100) },
  { head: 'Settling (2 %)', unit: () => 's', value: (m) => m.settling },
  { head: 'Peak', unit: (s) => s.unit, value: (m) => m.peak },
  { head: 'Final', unit: (s) => s.unit, value: (m) => m.final },
  { head: 'IAE', unit: (s) => (s.unit ? `${s.unit}·s` : 's'), value: (m) => m.iae },
  { head: 'Time at limit', unit: () => '%', value: (m) => (m.timeAtLimit === undefined ? undefined : m.timeAtLimit * 100) },
];

export function runTitle(run: RunResult): string {
  const sweep = run.sweep ? ` — ${run.sweep.target} = ${run.sweep.text}` : '';
  return `${run.label} (${run.kind})${sweep}`;
}

export function runErrorText(run: RunResult): string {
  const e = run.error!;
  const state = e.state ? `, state ${e.state}` : '';
  return `Run “${run.label}” stopped at t = ${fmt(e.time)} s${state}: ${e.message} [${e.code}]`;
}

function metricsTable(report: LoopRunReport, run: RunResult): HTMLTableElement | null {
  const rows = report.signals.filter((s) => run.metrics[s.name]);
  if (rows.length === 0) return null;
  const table = el('table', 'lw-metrics');
  table.append(el('caption', undefined, `Metrics — ${run.label}`));
  const head = table.createTHead().insertRow();
  const th0 = el('th', undefined, 'Signal');
  th0.scope = 'col';
  head.append(th0);
  for (const c of COLUMNS) {
    const th = el('th', undefined, c.head);
    th.scope = 'col';
    head.append(th);
  }
  const body = table.createTBody();
  for (const s of rows) {
    const m = run.metrics[s.name];
    const tr = body.insertRow();
    const th = el('th', undefined, s.name);
    th.scope = 'row';
    if (s.description) th.title = s.description;
    tr.append(th);
    for (const c of COLUMNS) {
      const v = c.value(m);
      const unit = c.unit(s);
      const td = el('td', 'lw-num', v === undefined ? '' : v === null ? '—' : unit ? `${fmt(v)} ${unit}` : fmt(v));
      tr.append(td);
    }
  }
  return table;
}

function expectsTable(run: RunResult): HTMLTableElement | null {
  if (run.expects.length === 0) return null;
  const table = el('table', 'lw-expects');
  table.append(el('caption', undefined, `Expectations — ${run.label}`));
  const head = table.createTHead().insertRow();
  for (const h of ['Expect', 'Measured', 'Result']) {
    const th = el('th', undefined, h);
    th.scope = 'col';
    head.append(th);
  }
  const body = table.createTBody();
  for (const x of run.expects) {
    const tr = body.insertRow();
    tr.className = x.pass ? 'lw-pass' : 'lw-fail';
    const code = el('code', undefined, x.text);
    const td0 = el('td');
    td0.append(code);
    const measured = x.error ? `${x.measuredText || '—'} (${x.error})` : x.measuredText || '—';
    tr.append(td0, el('td', undefined, measured), el('td', 'lw-verdict', x.pass ? '✓ pass' : '✗ fail'));
  }
  return table;
}

export function renderResults(container: HTMLElement, report: LoopRunReport): void {
  container.replaceChildren();
  if (report.warnings.length > 0) {
    const box = el('div', 'lw-warnings');
    box.append(el('h2', undefined, 'Warnings'));
    const ul = el('ul');
    for (const w of report.warnings) ul.append(el('li', undefined, w));
    box.append(ul);
    container.append(box);
  }
  report.runs.forEach((run) => {
    const card = el('article', 'lw-run');
    card.dataset.kind = run.kind;
    const h = el('h2', undefined, runTitle(run));
    card.append(h);
    const facts = el('p', 'lw-run-facts');
    const rec = el('span', run.recovered ? 'lw-ok' : 'lw-bad', run.recovered ? '✓ recovered' : '✗ not recovered');
    const s = run.stats;
    facts.append(rec, document.createTextNode(` · ${s.steps} steps, ${s.rejected} rejected, ${s.evaluations} evaluations, ${fmt(s.ms, 3)} ms`));
    card.append(facts);
    if (run.error) {
      const err = el('div', 'lw-run-error', runErrorText(run));
      err.setAttribute('role', 'alert');
      card.append(err);
    }
    const mt = metricsTable(report, run);
    if (mt) card.append(mt);
    const et = expectsTable(run);
    if (et) card.append(et);
    container.append(card);
  });
}
