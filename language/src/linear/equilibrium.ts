// The operating-point checks `check` reports (LANGUAGE.md §5), as plain diagnostics:
//
//  LW601  an operating point that is not an equilibrium: some state derivative is not negligible
//         against its terms (model-residual.ts). The message names each such state and its
//         derivative there, in the state's unit per second. Quick fixes from trim (trim.ts):
//         first each input alone that holds the point (in declaration order), else all inputs
//         together; each rewrites the operating point's input values in the unit the entry is
//         written in (else the input's declared unit), with the fewest significant digits that
//         still pass the test.
//  LW602  an operating point on or outside a limit: the linear model there would see slope 0 (or
//         a kink), so the linearization does not describe small motions.
//
// A system with an error diagnostic inside it is skipped (its values cannot be trusted), and so
// is a point with an entry that cannot be evaluated.
//
// API
//   checkOperatingPoints(analysis) → Diagnostic[]
//   trimFixes(analysis, model, point) → QuickFix[]
//   and, re-exported from model-residual.ts: equilibriumAt, judgeState, StateResidual

import type { Analysis } from '../analysis';
import type { Diagnostic, QuickFix, Span, TextEdit } from '../diagnostics';
import type { SystemSymbol } from '../check/symbols';
import type { Expr } from '../syntax/ast';
import { parseUnit } from '../units/registry';
import { systemModel, toDisplay, toSi, type OperatingPointValues, type SystemModel, type UnitOf } from './model-system';
import { equilibriumAt, type StateResidual } from './model-residual';
import { trim } from './trim';

export { equilibriumAt, judgeState, type StateResidual } from './model-residual';

/** `rad/s` → `rad/s^2`, `m` → `m/s`, '' → `1/s`. */
export function derivativeUnit(unit: string): string {
  if (unit === '' || unit === '1') return '1/s';
  const m = /^(.*)\/s(\^(\d+))?$/.exec(unit);
  if (m && !/[()]/.test(m[1])) return `${m[1]}/s^${Number(m[3] ?? 1) + 1}`;
  return `${unit}/s`;
}

/** A number with `digits` significant digits, without trailing noise. */
function numberText(v: number, digits: number): string {
  if (v === 0) return '0';
  const t = Number(v.toPrecision(digits));
  const s = String(t);
  return s.includes('e') ? t.toExponential().replace('e+', 'e') : s;
}

const usable = (s: Span | undefined): s is Span => !!s && s.end > s.start;

/** The operating point's range: `operating point NAME { ... }` (rebuilt from its parts when the
 * node carries no range of its own). */
export function pointSpan(text: string, point: OperatingPointValues): Span {
  const d = point.decl;
  if (usable(d.span)) return d.span;
  const kw = text.lastIndexOf('operating', d.name.span.start);
  const start = kw >= 0 ? kw : d.name.span.start;
  const lastEnd = d.entries.length ? d.entries[d.entries.length - 1].value.span.end : d.name.span.end;
  const close = text.indexOf('}', lastEnd);
  return { start, end: close >= 0 ? close + 1 : lastEnd };
}

/** The block's range (from its keyword to the closing brace when the node has none). */
function blockSpan(sym: SystemSymbol): Span {
  const b = sym.block;
  if (usable(b.span)) return b.span;
  return { start: b.keywordSpan.start, end: b.bodySpan.end + 1 };
}

/** An error diagnostic within the span (its values cannot be trusted). */
export function hasErrorInside(analysis: Analysis, span: Span): boolean {
  return analysis.diagnostics.some((d) => d.severity === 'error' && d.span.start >= span.start && d.span.end <= span.end);
}

/** Unit an entry is written in: its literal's unit, else the declared one. */
function entryUnit(value: Expr | undefined, declared: UnitOf): UnitOf {
  let e = value;
  while (e && e.kind === 'unary' && (e.op === '-' || e.op === '+')) e = e.operand;
  if (e?.kind === 'quantity') {
    const r = parseUnit(e.unit.text);
    if (r.ok) return { text: e.unit.text, scale: r.unit.scale, offset: r.unit.offset * r.unit.scale };
  }
  return declared;
}

interface Change {
  input: number;
  si: number;
}

/** Text edits that write new input values into an operating point, with `digits` digits. */
function editsFor(analysis: Analysis, model: SystemModel, point: OperatingPointValues, changes: Change[], digits: number): { edits: TextEdit[]; values: number[]; texts: string[] } {
  const edits: TextEdit[] = [];
  const values = point.u.slice();
  const texts: string[] = [];
  const inserts: string[] = [];
  for (const c of changes) {
    const decl = model.inputs[c.input];
    const name = decl.name.name;
    const entry = point.decl.entries.find((e) => e.name.name === name);
    const unit = entryUnit(entry?.value, model.inputUnits[c.input]);
    const shown = toDisplay(c.si, unit);
    const text = `${numberText(shown, digits)}${unit.text ? ` [${unit.text}]` : ''}`;
    values[c.input] = toSi(Number(numberText(shown, digits)), unit);
    texts.push(`${name} = ${text}`);
    if (entry) edits.push({ span: entry.value.span, newText: text });
    else inserts.push(`${name} = ${text}`);
  }
  if (inserts.length) {
    const entries = point.decl.entries;
    if (entries.length) {
      const end = entries[entries.length - 1].value.span.end;
      edits.push({ span: { start: end, end }, newText: `, ${inserts.join(', ')}` });
    } else {
      const brace = analysis.text.indexOf('{', point.decl.name.span.end);
      if (brace >= 0 && brace < pointSpan(analysis.text, point).end) edits.push({ span: { start: brace + 1, end: brace + 1 }, newText: ` ${inserts.join(', ')} ` });
    }
  }
  return { edits, values, texts };
}

/** Quick fixes that trim the point's inputs: each input alone, else all of them together. */
export function trimFixes(analysis: Analysis, model: SystemModel, point: OperatingPointValues): QuickFix[] {
  const names = model.inputs.map((d) => d.name.name);
  const tries: string[][] = names.length > 1 ? [...names.map((n) => [n]), names] : [names];
  const fixes: QuickFix[] = [];
  for (const free of tries) {
    if (fixes.length && free.length > 1) break;
    const r = trim(model, point, { inputs: free });
    if (!r.ok) continue;
    const changes: Change[] = free.map((n) => names.indexOf(n)).filter((i) => r.u[i] !== point.u[i]).map((i) => ({ input: i, si: r.u[i] }));
    if (!changes.length) continue;
    // The fewest digits whose rounded values still hold the point.
    for (let digits = 6; digits <= 17; digits++) {
      const e = editsFor(analysis, model, point, changes, digits);
      const holds = equilibriumAt(model, point.x, e.values).every((s) => s.negligible);
      if (holds || digits === 17) {
        fixes.push({ title: `Trim: set ${e.texts.join(', ')} to hold '${point.name}'`, edits: e.edits, preferred: fixes.length === 0 });
        break;
      }
    }
  }
  return fixes;
}

function checkPoint(analysis: Analysis, model: SystemModel, point: OperatingPointValues, out: Diagnostic[]): void {
  if (!point.x.every(Number.isFinite) || !point.u.every(Number.isFinite)) return;
  const span = pointSpan(analysis.text, point);
  // LW602: on or outside a limit.
  const y = model.evaluate(point.x, point.u, { ignoreLimits: true }).y;
  for (const l of model.limits) {
    if (!(l.lo <= l.hi)) continue;
    const v = l.on === 'input' ? point.u[l.index] : y[l.index]?.v;
    if (v === undefined || !Number.isFinite(v)) continue;
    if (v > l.lo && v < l.hi) continue;
    const unit = l.on === 'input' ? model.inputUnits[l.index] : model.outputUnits[l.index];
    const where = v < l.lo || v > l.hi ? 'outside' : 'on';
    const at = l.on === 'input' ? point.entrySpans.get(l.name) : undefined;
    out.push({
      code: 'LW602',
      severity: 'warning',
      span: at ?? point.decl.name.span,
      message: `operating point '${point.name}' puts ${l.on} ${l.name} = ${numberText(toDisplay(v, unit), 6)}${unit.text ? ` [${unit.text}]` : ''} ${where} its limit ${numberText(toDisplay(l.lo, unit), 6)} .. ${numberText(toDisplay(l.hi, unit), 6)}: the linear model sees ${where === 'on' ? 'a corner' : 'slope 0'} there`,
      related: [{ span: l.span, message: `the limit on ${l.name}` }],
    });
  }
  // LW601: not an equilibrium.
  const res = equilibriumAt(model, point.x, point.u);
  const bad = res.filter((r) => r.evaluable && !r.negligible);
  if (!bad.length) return;
  const fixes = trimFixes(analysis, model, point);
  const list = bad.map((r) => `${r.state}' = ${numberText(r.display, 4)} [${derivativeUnit(model.stateUnits[r.index].text)}]`).join(', ');
  const hint = fixes.length ? '' : model.inputs.length ? '; no input holds it (some state would have to change)' : '; the plant has no input to hold it';
  out.push({
    code: 'LW601',
    severity: 'warning',
    span,
    message: `operating point '${point.name}' is not an equilibrium: ${list} there${hint}`,
    ...(fixes.length ? { fixes } : {}),
  });
}

/** Diagnostics of every plant operating point in the file (LW601, LW602). Never throws. */
export function checkOperatingPoints(analysis: Analysis): Diagnostic[] {
  const out: Diagnostic[] = [];
  const seen = new Set<SystemSymbol>();
  for (const sym of analysis.symbols.systems.values()) {
    if (seen.has(sym) || sym.kind !== 'plant' || sym.points.length === 0) continue;
    seen.add(sym);
    if (hasErrorInside(analysis, blockSpan(sym))) continue;
    try {
      const model = systemModel(analysis, sym);
      for (const p of model.points) checkPoint(analysis, model, p, out);
    } catch (err) {
      out.push({ code: 'LW601', severity: 'warning', span: sym.nameSpan, message: `operating points of ${sym.name} could not be checked (internal error, please report): ${(err as Error).message}` });
    }
  }
  return out;
}
