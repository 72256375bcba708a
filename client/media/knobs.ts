// The knob list of the tuning side panel: one slider (native range input, log scale around the
// current value) and one number field per param. Moving a knob posts `editParam`: during a drag
// `final: false` at most once per animation frame, then `final: true` on release, so the host can
// fold the whole drag into one undo step.
//
// Span bookkeeping: the host applies edits in the order it receives them, and every edit moves
// the text after it. The page therefore shifts its own copies of the spans by each edit's change
// in length, and adopts a report's spans only when the report was computed from a document that
// already holds the page's edits, so a report of an older document never puts a stale span under
// the next edit:
// - A report with its document version (live and command runs): the host answers every edit
//   with `edited` and the version it left. Such a report is adopted when no edit is waiting for
//   its answer and its version is at least the last answered one; it is held back while an edit
//   is waiting (and decided when the answer comes), and dropped when it is older (a newer one is
//   on its way). An undo in the editor makes a newer version, so its report is adopted at once,
//   text the page never posted included. An edit left unanswered for ANSWER_MS stops counting.
// - A report without a version (restored after a reload): adopted once it reflects the page's
//   last edit (its `text` of each edited param equals the last text posted) or after PENDING_MS
//   without an edit; one held back for coming sooner than that is adopted when PENDING_MS have
//   passed, unless a newer report or edit came meanwhile.

import type { Span } from '../../language/src/diagnostics';
import type { ParamKnob } from '../../language/src/protocol';
import { el } from './dom';
import { fmt } from './format';
import { formatLike, knobRange, parseNumberText, positionToValue, SLIDER_STEPS, unitSuffix, valueToPosition } from './literal';

export type EditParam = { type: 'editParam'; name: string; span: Span; newText: string; final: boolean };

const PENDING_MS = 1500;
/** How long an edit waits for the host's `edited` before it no longer holds reports back. */
const ANSWER_MS = 5000;

interface Knob {
  p: ParamKnob;
  /** Value and text the slider is centred on (the text sets the formatting style). */
  anchor: number;
  anchorText: string;
  row: HTMLElement;
  slider: HTMLInputElement;
  field: HTMLInputElement;
  error: HTMLElement;
  range: HTMLElement;
  dragging: boolean;
  /** Non-final edits posted since the last final one. */
  dirty: boolean;
  frame: number;
  lastPosted: string | null;
}

export interface KnobsOptions {
  box: HTMLElement;
  post(m: EditParam): void;
  showPlant: boolean;
  onShowPlant(show: boolean): void;
}

let ids = 0;

export class Knobs {
  private knobs: Knob[] = [];
  private readonly pending = new Map<string, string>();
  private lastEdit = 0;
  /** A report held back by the pending edits, and the timer that adopts it later. */
  private heldBack: ParamKnob[] | undefined;
  private heldTimer: ReturnType<typeof setTimeout> | undefined;
  /** Edits posted that the host has not answered yet (`edited`). */
  private unanswered = 0;
  /** The document version the host's last answer left. */
  private answeredVersion = -1;
  /** A report with a version, held back while an edit waits for its answer. */
  private heldVersioned: { params: ParamKnob[]; version: number } | undefined;
  private readonly main: HTMLElement;
  private readonly plant: HTMLElement;
  private readonly plantToggle: HTMLButtonElement;
  private showPlant: boolean;

  constructor(private readonly o: KnobsOptions) {
    this.showPlant = o.showPlant;
    const heading = el('h2', 'lw-side-title', 'Parameters');
    this.main = el('div', 'lw-knob-list');
    this.plantToggle = el('button', 'lw-button lw-plant-toggle');
    this.plantToggle.type = 'button';
    this.plant = el('div', 'lw-knob-list');
    this.plant.id = `lw-plant-knobs-${++ids}`;
    this.plantToggle.setAttribute('aria-controls', this.plant.id);
    this.plantToggle.addEventListener('click', () => {
      this.showPlant = !this.showPlant;
      this.syncPlantToggle();
      this.o.onShowPlant(this.showPlant);
    });
    o.box.replaceChildren(heading, this.main, this.plantToggle, this.plant);
    o.box.hidden = true;
  }

  setShowPlant(show: boolean): void {
    this.showPlant = show;
    this.syncPlantToggle();
  }

  get count(): number {
    return this.knobs.length;
  }

  /** Edits posted that the host has not answered yet. */
  get waiting(): number {
    return this.unanswered;
  }

  private syncPlantToggle(): void {
    const n = this.knobs.filter((k) => k.p.owner === 'plant').length;
    this.plantToggle.hidden = n === 0;
    this.plantToggle.textContent = `${this.showPlant ? '▾' : '▸'} Plant params (${n})`;
    this.plantToggle.setAttribute('aria-expanded', String(this.showPlant));
    this.plant.hidden = !this.showPlant || n === 0;
  }

  /**
   * Shows the params of a report; `sameLoop` keeps the knobs (and focus) where it can. `version`:
   * the document version the report was computed from, when the host sent it.
   */
  update(params: ParamKnob[], sameLoop: boolean, version?: number): void {
    this.heldBack = undefined;
    this.heldVersioned = undefined;
    if (this.heldTimer !== undefined) clearTimeout(this.heldTimer);
    this.heldTimer = undefined;
    const sameSet = sameLoop && params.length === this.knobs.length && params.every((p, i) => p.name === this.knobs[i].p.name && p.owner === this.knobs[i].p.owner);
    if (!sameSet) {
      for (const k of this.knobs) cancelAnimationFrame(k.frame);
      this.pending.clear();
      this.knobs = params.map((p) => this.build({ ...p, span: { ...p.span } }));
      this.main.replaceChildren(...this.knobs.filter((k) => k.p.owner !== 'plant').map((k) => k.row));
      this.plant.replaceChildren(...this.knobs.filter((k) => k.p.owner === 'plant').map((k) => k.row));
    } else if (version !== undefined) {
      if (this.unanswered > 0 && performance.now() - this.lastEdit > ANSWER_MS) this.unanswered = 0;
      if (this.unanswered > 0) {
        const held = (this.heldVersioned = { params, version });
        // decided by the answer; should none come, once the edit no longer counts
        this.heldTimer = setTimeout(() => {
          this.heldTimer = undefined;
          if (this.heldVersioned === held) this.update(held.params, true, held.version);
        }, ANSWER_MS - (performance.now() - this.lastEdit) + 50);
      } else if (version >= this.answeredVersion) {
        this.pending.clear();
        this.adopt(params);
      }
    } else {
      const current = [...this.pending].every(([name, text]) => params.find((p) => p.name === name)?.text === text);
      const since = performance.now() - this.lastEdit;
      const adopt = current || since > PENDING_MS;
      if (adopt) this.pending.clear();
      else {
        // adopted later if nothing newer comes (a later edit holds it back again)
        this.heldBack = params;
        this.heldTimer = setTimeout(() => {
          const held = this.heldBack;
          this.heldTimer = undefined;
          if (held) this.update(held, true);
        }, PENDING_MS - since + 50);
      }
      if (adopt) this.adopt(params);
    }
    this.o.box.hidden = this.knobs.length === 0;
    this.syncPlantToggle();
  }

  /** The report's params (same knobs, in order) become the knobs' own: spans, texts, values. */
  private adopt(params: ParamKnob[]): void {
    params.forEach((p, i) => {
      const k = this.knobs[i];
      k.p = { ...p, span: { ...p.span } };
      k.lastPosted = null;
      if (!k.dragging && document.activeElement !== k.field) this.anchor(k, p.value, p.text);
    });
  }

  /** The host's answer to the oldest unanswered edit: the document is now at `version`. */
  edited(version: number): void {
    this.unanswered = Math.max(0, this.unanswered - 1);
    this.answeredVersion = Math.max(this.answeredVersion, version);
    const held = this.heldVersioned;
    if (this.unanswered === 0 && held) this.update(held.params, true, held.version);
  }

  private build(p: ParamKnob): Knob {
    const id = `lw-knob-${++ids}`;
    const row = el('div', 'lw-knob');
    row.dataset.param = p.name;
    const head = el('div', 'lw-knob-head');
    const label = el('label', 'lw-knob-name', p.name);
    label.htmlFor = `${id}-field`;
    const field = el('input', 'lw-knob-field');
    field.type = 'text';
    field.id = `${id}-field`;
    field.inputMode = 'decimal';
    field.spellcheck = false;
    field.autocomplete = 'off';
    field.setAttribute('aria-label', `${p.name} value${p.unit ? ` in ${p.unit}` : ''}`);
    const unit = el('span', 'lw-knob-unit', p.unit);
    head.append(label, field, unit);
    const slider = el('input', 'lw-knob-slider');
    slider.type = 'range';
    slider.min = '0';
    slider.max = String(SLIDER_STEPS);
    slider.step = '1';
    slider.setAttribute('aria-label', p.unit ? `${p.name} [${p.unit}]` : p.name);
    const range = el('div', 'lw-knob-range');
    const error = el('div', 'lw-knob-error');
    error.id = `${id}-error`;
    error.setAttribute('role', 'alert');
    error.hidden = true;
    field.setAttribute('aria-describedby', error.id);
    row.append(head, slider, range, error);
    const k: Knob = { p, anchor: p.value, anchorText: p.text, row, slider, field, error, range, dragging: false, dirty: false, frame: 0, lastPosted: null };
    this.anchor(k, p.value, p.text);

    slider.addEventListener('pointerdown', () => (k.dragging = true));
    slider.addEventListener('input', () => {
      this.showValue(k);
      if (k.frame) return;
      k.frame = requestAnimationFrame(() => {
        k.frame = 0;
        this.emit(k, false);
      });
    });
    slider.addEventListener('change', () => this.release(k));
    const up = () => setTimeout(() => {
      if (k.dirty) this.release(k);
      k.dragging = false;
    }, 0);
    slider.addEventListener('pointerup', up);
    slider.addEventListener('pointercancel', up);
    field.addEventListener('keydown', (e) => {
      if (e.key === 'Enter') this.commitField(k);
      else if (e.key === 'Escape') {
        field.value = k.p.text;
        this.setError(k, null);
      }
    });
    field.addEventListener('blur', () => this.commitField(k));
    return k;
  }

  /** Centres the slider on `value`, with `text` as the formatting style of its edits. */
  private anchor(k: Knob, value: number, text: string): void {
    k.anchor = value;
    k.anchorText = text;
    k.slider.value = String(SLIDER_STEPS / 2);
    k.field.value = text;
    this.setError(k, null);
    const { lo, hi } = knobRange(value);
    k.range.textContent = `${fmt(lo)} … ${fmt(hi)}${k.p.unit ? ` ${k.p.unit}` : ''}${value === 0 ? ' (linear)' : ' (log)'}`;
  }

  private sliderText(k: Knob): string {
    const pos = Number(k.slider.value);
    if (pos === SLIDER_STEPS / 2) return k.anchorText;
    return formatLike(k.anchorText, positionToValue(k.anchor, pos), k.anchor === 0);
  }

  private showValue(k: Knob): void {
    k.field.value = this.sliderText(k);
    this.setError(k, null);
  }

  private release(k: Knob): void {
    cancelAnimationFrame(k.frame);
    k.frame = 0;
    this.emit(k, true);
    k.dragging = false;
  }

  private emit(k: Knob, final: boolean): void {
    const text = this.sliderText(k);
    if (!final && text === (k.lastPosted ?? k.p.text)) return;
    if (final && !k.dirty && text === k.p.text) return;
    this.post(k, text, final);
  }

  private commitField(k: Knob): void {
    const typed = k.field.value.trim();
    if (typed === k.p.text) {
      this.setError(k, null);
      return;
    }
    const v = parseNumberText(typed);
    if (v === null) {
      this.setError(k, `“${typed}” is not a number; write it like 2.5, -0.3 or 1e-3${k.p.unit ? ` (the unit ${k.p.unit} stays)` : ''}.`);
      return;
    }
    this.setError(k, null);
    this.post(k, typed, true);
    this.anchor(k, v, typed);
  }

  private setError(k: Knob, text: string | null): void {
    k.error.hidden = text === null;
    k.error.textContent = text ?? '';
    k.field.setAttribute('aria-invalid', String(text !== null));
  }

  private post(k: Knob, numberText: string, final: boolean): void {
    const span = k.p.span;
    const suffix = unitSuffix(k.p.unit, k.p.text.length, span.end - span.start);
    // When the document spells the unit in a way the span does not reveal, only the number is
    // replaced, which leaves the unit exactly as written.
    const edit = suffix === null ? { span: { start: span.start, end: span.start + k.p.text.length }, newText: numberText } : { span: { ...span }, newText: numberText + suffix };
    this.o.post({ type: 'editParam', name: k.p.name, span: edit.span, newText: edit.newText, final });
    const delta = edit.newText.length - (edit.span.end - edit.span.start);
    for (const other of this.knobs) {
      if (other === k) continue;
      if (other.p.span.start >= edit.span.end) other.p.span = { start: other.p.span.start + delta, end: other.p.span.end + delta };
    }
    k.p = { ...k.p, span: { start: span.start, end: span.end + delta }, text: numberText, value: parseNumberText(numberText) ?? k.p.value };
    k.lastPosted = numberText;
    k.dirty = !final;
    this.pending.set(k.p.name, numberText);
    this.unanswered++;
    this.lastEdit = performance.now();
  }

  describe() {
    return this.knobs.map((k) => ({
      name: k.p.name,
      owner: k.p.owner,
      unit: k.p.unit,
      value: k.p.value,
      text: k.p.text,
      span: { ...k.p.span },
      anchor: k.anchor,
      anchorText: k.anchorText,
      position: Number(k.slider.value),
      steps: SLIDER_STEPS,
      visible: !k.row.closest('[hidden]'),
      error: k.error.hidden ? null : k.error.textContent,
    }));
  }
}
