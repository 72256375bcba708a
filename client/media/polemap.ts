// The s-plane pole map of the tuning side panel (SVG): closed-loop poles at the operating point
// as filled dots, the plants' open-loop poles as crosses, guide rays of constant damping ratio and
// half circles of constant natural frequency, the imaginary axis drawn strong, the right half
// plane tinted, and poles there drawn bigger in the warning colour. Markers are focusable; hover
// or focus shows ζ, ωn, the time constant and re ± im.
//
// Scale: one scale for both axes (so the damping rays keep their true angles), the real axis in
// the middle, the origin always in view, a margin of 12 % of the poles' extent. When the poles'
// distances from the origin span more than SPREAD_FOR_ZOOM, a "Zoom to slow poles" toggle fits
// the view to the poles within SLOW_FACTOR of the slowest closed-loop pole instead; poles then
// outside the view are drawn as arrows on the edge, pointing their way, and a note counts them.

import type { PoleInfo } from '../../language/src/protocol';
import { el } from './dom';
import { fmt } from './format';
import { CATEGORICAL, withAlpha } from './palette';
import type { Theme } from './theme';

const SVG = 'http://www.w3.org/2000/svg';
export const DAMPING_RAYS = [0.2, 0.4, 0.6, 0.8];
const SPREAD_FOR_ZOOM = 30;
const SLOW_FACTOR = 10;
const MARGIN = 0.12;
const PAD = { left: 40, right: 8, top: 8, bottom: 30 };

export type PoleSet = 'closed' | 'open';

export interface MarkerDrawn {
  set: PoleSet;
  index: number;
  re: number;
  im: number;
  /** Centre in CSS px from the SVG's top-left corner (on the edge when outside the view). */
  x: number;
  y: number;
  size: number;
  rhp: boolean;
  colour: string;
  inView: boolean;
}

export interface View {
  reMin: number;
  reMax: number;
  imMin: number;
  imMax: number;
}

function niceStep(raw: number): number {
  if (!(raw > 0) || !Number.isFinite(raw)) return 1;
  const e = 10 ** Math.floor(Math.log10(raw));
  const f = raw / e;
  return (f <= 1 ? 1 : f <= 2 ? 2 : f <= 5 ? 5 : 10) * e;
}

function node<K extends keyof SVGElementTagNameMap>(tag: K, attrs: Record<string, string | number>): SVGElementTagNameMap[K] {
  const e = document.createElementNS(SVG, tag);
  for (const [k, v] of Object.entries(attrs)) e.setAttribute(k, String(v));
  return e;
}

function complexText(re: number, im: number): string {
  if (im === 0) return fmt(re);
  return `${fmt(re)} ± ${fmt(Math.abs(im))}j`;
}

export class PoleMap {
  private readonly svg: SVGSVGElement;
  private readonly readout: HTMLElement;
  private readonly note: HTMLElement;
  private readonly zoomButton: HTMLButtonElement;
  private readonly key: HTMLElement;
  private mode: 'all' | 'slow' = 'all';
  private poles: { closed: PoleInfo[]; open: PoleInfo[] } | null = null;
  private theme: Theme | null = null;
  private markers: MarkerDrawn[] = [];
  private view: View | null = null;
  private frame = { left: 0, top: 0, width: 0, height: 0 };
  private circles: number[] = [];
  private focused: { set: PoleSet; index: number } | null = null;

  constructor(private readonly box: HTMLElement) {
    const heading = el('h2', 'lw-side-title', 'Poles (s-plane)');
    this.svg = node('svg', { class: 'lw-polemap', role: 'group', 'aria-label': 'Pole map: closed-loop and open-loop plant poles' });
    this.readout = el('p', 'lw-pole-readout');
    this.readout.setAttribute('aria-live', 'polite');
    this.note = el('p', 'lw-pole-note');
    this.zoomButton = el('button', 'lw-button lw-pole-zoom', 'Zoom to slow poles');
    this.zoomButton.type = 'button';
    this.zoomButton.setAttribute('aria-pressed', 'false');
    this.zoomButton.addEventListener('click', () => {
      this.mode = this.mode === 'all' ? 'slow' : 'all';
      this.draw();
    });
    this.key = el('p', 'lw-pole-key');
    let width = 0;
    new ResizeObserver(() => {
      const w = this.box.clientWidth;
      if (w > 0 && w !== width && this.any) {
        width = w;
        this.draw();
      }
    }).observe(box);
    box.replaceChildren(heading, this.svg, this.readout, this.key, this.zoomButton, this.note);
    box.hidden = true;
  }

  get any(): boolean {
    return !!this.poles && this.poles.closed.length + this.poles.open.length > 0;
  }

  /** New poles (or a new theme); `sameLoop` keeps the zoom mode. */
  update(poles: { closed: PoleInfo[]; open: PoleInfo[] } | undefined, theme: Theme, sameLoop: boolean): void {
    this.poles = poles ?? null;
    this.theme = theme;
    if (!sameLoop) {
      this.mode = 'all';
      this.focused = null;
    }
    this.box.hidden = !this.any;
    if (this.any) this.draw();
  }

  private all(): Array<{ set: PoleSet; index: number; p: PoleInfo }> {
    if (!this.poles) return [];
    return [...this.poles.closed.map((p, index) => ({ set: 'closed' as const, index, p })), ...this.poles.open.map((p, index) => ({ set: 'open' as const, index, p }))];
  }

  private draw(): void {
    const theme = this.theme!;
    const poles = this.all();
    const hadFocus = this.svg.contains(document.activeElement);
    const width = Math.min(360, Math.max(200, Math.floor(this.box.clientWidth || 276)));
    const height = Math.round(width * 0.92);
    this.svg.setAttribute('width', String(width));
    this.svg.setAttribute('height', String(height));
    this.svg.setAttribute('viewBox', `0 0 ${width} ${height}`);
    const f = { left: PAD.left, top: PAD.top, width: width - PAD.left - PAD.right, height: height - PAD.top - PAD.bottom };
    this.frame = f;

    // Which poles the view fits.
    const mod = (p: PoleInfo) => Math.hypot(p.re, p.im);
    const nonzero = poles.map((q) => mod(q.p)).filter((m) => m > 0);
    const spread = nonzero.length ? Math.max(...nonzero) / Math.min(...nonzero) : 1;
    const zoomable = spread > SPREAD_FOR_ZOOM;
    if (!zoomable) this.mode = 'all';
    let fit = poles;
    if (this.mode === 'slow') {
      const closed = poles.filter((q) => q.set === 'closed' && mod(q.p) > 0).map((q) => mod(q.p));
      const slowest = closed.length ? Math.min(...closed) : Math.min(...nonzero);
      fit = poles.filter((q) => mod(q.p) <= SLOW_FACTOR * slowest);
    }
    let reMin = Math.min(0, ...fit.map((q) => q.p.re));
    let reMax = Math.max(0, ...fit.map((q) => q.p.re));
    let imHalf = Math.max(0, ...fit.map((q) => Math.abs(q.p.im)));
    const extent = Math.max(reMax - reMin, 2 * imHalf) || 2;
    reMin -= MARGIN * extent;
    reMax += MARGIN * extent;
    imHalf += MARGIN * extent;
    // One scale for both axes: widen the direction that has room to spare.
    const k = Math.min(f.width / (reMax - reMin), f.height / (2 * imHalf));
    const mid = (reMin + reMax) / 2;
    const view: View = { reMin: mid - f.width / (2 * k), reMax: mid + f.width / (2 * k), imMin: -f.height / (2 * k), imMax: f.height / (2 * k) };
    this.view = view;
    const X = (re: number) => f.left + ((re - view.reMin) / (view.reMax - view.reMin)) * f.width;
    const Y = (im: number) => f.top + ((view.imMax - im) / (view.imMax - view.imMin)) * f.height;

    const warn = theme.warning;
    const closedColour = CATEGORICAL[theme.variant][0];
    const openColour = theme.foreground;
    const clipId = `lw-pole-clip-${Math.random().toString(36).slice(2, 10)}`;
    const parts: SVGElement[] = [];
    const defs = node('defs', {});
    const clip = node('clipPath', { id: clipId });
    clip.append(node('rect', { x: f.left, y: f.top, width: f.width, height: f.height }));
    defs.append(clip);
    parts.push(defs, node('rect', { x: 0, y: 0, width, height, fill: theme.background }));
    const plot = node('g', { 'clip-path': `url(#${clipId})` });
    const x0 = X(0);
    // Right half plane tint.
    if (x0 < f.left + f.width) plot.append(node('rect', { x: Math.max(f.left, x0), y: f.top, width: f.left + f.width - Math.max(f.left, x0), height: f.height, fill: withAlpha(warn, 0.07) }));

    // Grid ticks (same step on both axes: the scale is shared).
    const step = niceStep((view.reMax - view.reMin) / 5);
    const gridColour = withAlpha(theme.grid, 0.3);
    const ticks = node('g', { class: 'lw-pole-ticks', fill: theme.muted, 'font-size': 10, 'font-family': theme.font.replace(/^\d+px\s*/, '') });
    for (let v = Math.ceil(view.reMin / step) * step; v <= view.reMax + 1e-9 * step; v += step) {
      const x = X(v);
      plot.append(node('line', { x1: x, y1: f.top, x2: x, y2: f.top + f.height, stroke: gridColour, 'stroke-width': 1 }));
      ticks.append(node('line', { x1: x, y1: f.top + f.height, x2: x, y2: f.top + f.height + 4, stroke: theme.muted }));
      const t = node('text', { x, y: f.top + f.height + 14, 'text-anchor': 'middle' });
      t.textContent = fmt(Math.abs(v) < step * 1e-9 ? 0 : v);
      ticks.append(t);
    }
    for (let v = Math.ceil(view.imMin / step) * step; v <= view.imMax + 1e-9 * step; v += step) {
      const y = Y(v);
      plot.append(node('line', { x1: f.left, y1: y, x2: f.left + f.width, y2: y, stroke: gridColour, 'stroke-width': 1 }));
      ticks.append(node('line', { x1: f.left - 4, y1: y, x2: f.left, y2: y, stroke: theme.muted }));
      const t = node('text', { x: f.left - 6, y: y + 3.5, 'text-anchor': 'end' });
      t.textContent = fmt(Math.abs(v) < step * 1e-9 ? 0 : v);
      ticks.append(t);
    }
    const xLabel = node('text', { x: f.left + f.width / 2, y: height - 3, 'text-anchor': 'middle' });
    xLabel.textContent = 'Re [rad/s]';
    const yLabel = node('text', { x: 10, y: f.top + f.height / 2, 'text-anchor': 'middle', transform: `rotate(-90 10 ${f.top + f.height / 2})` });
    yLabel.textContent = 'Im [rad/s]';
    ticks.append(xLabel, yLabel);

    // Constant natural frequency: left half circles at round values covering the poles.
    const guide = withAlpha(theme.muted, 0.55);
    const reach = Math.max(...fit.map((q) => mod(q.p)), 0) || (view.reMax - view.reMin) / 4;
    const cstep = niceStep(reach / 3);
    this.circles = [];
    for (let r = cstep; r < reach + cstep * 0.999 && this.circles.length < 8; r += cstep) {
      this.circles.push(r);
      const rp = r * k;
      plot.append(node('path', { d: `M ${x0} ${Y(0) - rp} A ${rp} ${rp} 0 0 0 ${x0} ${Y(0) + rp}`, fill: 'none', stroke: guide, 'stroke-width': 1, 'stroke-dasharray': '2 3' }));
      const label = node('text', { x: X(-r) + 2, y: Y(0) - 3, fill: theme.muted, 'font-size': 9 });
      label.textContent = `${fmt(r)}`;
      plot.append(label);
    }
    // Constant damping ratio: rays from the origin into the left half plane.
    const far = 4 * Math.max(view.reMax - view.reMin, view.imMax - view.imMin);
    for (const z of DAMPING_RAYS) {
      const dx = -z;
      const dy = Math.sqrt(1 - z * z);
      for (const s of [1, -1]) plot.append(node('line', { x1: x0, y1: Y(0), x2: X(far * dx), y2: Y(s * far * dy), stroke: guide, 'stroke-width': 1, 'stroke-dasharray': '4 3' }));
    }
    // Labels of the upper rays on one arc inside the frame, so that they spread out.
    const rLabel = 0.88 * Math.min(-view.reMin, view.imMax);
    if (rLabel > 0) {
      for (const z of DAMPING_RAYS) {
        const label = node('text', { x: X(-rLabel * z), y: Y(rLabel * Math.sqrt(1 - z * z)) - 2, fill: theme.muted, 'font-size': 9, 'text-anchor': 'middle' });
        label.textContent = z === DAMPING_RAYS[0] ? `ζ ${z}` : String(z);
        plot.append(label);
      }
    }
    // Axes: the real axis plain, the imaginary axis (the stability boundary) strong.
    plot.append(node('line', { x1: f.left, y1: Y(0), x2: f.left + f.width, y2: Y(0), stroke: withAlpha(theme.muted, 0.8), 'stroke-width': 1 }));
    plot.append(node('line', { x1: x0, y1: f.top, x2: x0, y2: f.top + f.height, stroke: theme.foreground, 'stroke-width': 2 }));
    parts.push(plot, ticks, node('rect', { x: f.left + 0.5, y: f.top + 0.5, width: f.width - 1, height: f.height - 1, fill: 'none', stroke: theme.border }));

    // Markers: open-loop plant poles first, closed-loop on top.
    this.markers = [];
    const layer = node('g', { class: 'lw-pole-layer' });
    for (const q of [...poles.filter((q) => q.set === 'open'), ...poles.filter((q) => q.set === 'closed')]) {
      const { re, im } = q.p;
      const rhp = re > 0;
      const inView = re >= view.reMin && re <= view.reMax && im >= view.imMin && im <= view.imMax;
      const x = Math.min(f.left + f.width, Math.max(f.left, X(re)));
      const y = Math.min(f.top + f.height, Math.max(f.top, Y(im)));
      const colour = rhp ? warn : q.set === 'closed' ? closedColour : openColour;
      const size = (q.set === 'closed' ? 4.5 : 5) * (rhp ? 1.6 : 1);
      const g = node('g', { class: `lw-pole lw-pole-${q.set}${rhp ? ' lw-pole-rhp' : ''}`, tabindex: 0, role: 'img', transform: `translate(${x} ${y})` });
      g.dataset.set = q.set;
      g.dataset.index = String(q.index);
      g.setAttribute('aria-label', `${q.set === 'closed' ? 'Closed-loop' : 'Open-loop plant'} pole ${complexText(re, im)} rad/s${rhp ? ', right half plane (unstable)' : ''}`);
      g.append(node('circle', { class: 'lw-pole-hit', r: 10, fill: 'transparent' }));
      g.append(node('circle', { class: 'lw-pole-ring', r: size + 4, fill: 'none', stroke: theme.foreground, 'stroke-width': 1.5 }));
      if (!inView) {
        // Screen angle from the frame's centre towards the pole (y grows downwards).
        const deg = (Math.atan2(Y(im) - (f.top + f.height / 2), X(re) - (f.left + f.width / 2)) * 180) / Math.PI;
        g.append(node('path', { d: 'M 6 0 L -4 -5 L -4 5 Z', fill: colour, transform: `rotate(${deg})` }));
      } else if (q.set === 'closed') {
        g.append(node('circle', { r: size, fill: colour, stroke: theme.background, 'stroke-width': 1 }));
      } else {
        const s = size;
        g.append(node('path', { d: `M ${-s} ${-s} L ${s} ${s} M ${-s} ${s} L ${s} ${-s}`, stroke: colour, 'stroke-width': rhp ? 2.4 : 1.8, 'stroke-linecap': 'round', fill: 'none' }));
      }
      const show = () => {
        this.focused = { set: q.set, index: q.index };
        this.showReadout(q.set, q.p);
      };
      g.addEventListener('mouseenter', show);
      g.addEventListener('focus', show);
      g.addEventListener('mouseleave', () => {
        if (document.activeElement !== g) this.showReadout(null);
      });
      g.addEventListener('blur', () => this.showReadout(null));
      layer.append(g);
      this.markers.push({ set: q.set, index: q.index, re, im, x, y, size, rhp, colour, inView });
    }
    parts.push(layer);
    this.svg.replaceChildren(...parts);
    // A keyboard user on a marker stays on the same pole through the redraw.
    if (hadFocus && this.focused) {
      const again = layer.querySelector<SVGGElement>(`.lw-pole[data-set="${this.focused.set}"][data-index="${this.focused.index}"]`);
      again?.focus();
    }

    const out = this.markers.filter((m) => !m.inView);
    this.zoomButton.hidden = !zoomable;
    this.zoomButton.textContent = this.mode === 'slow' ? 'Show all poles' : 'Zoom to slow poles';
    this.zoomButton.setAttribute('aria-pressed', String(this.mode === 'slow'));
    this.note.textContent = out.length
      ? `${out.length} fast pole${out.length > 1 ? 's' : ''} outside the view (arrows on the edge), up to ${fmt(Math.max(...out.map((m) => Math.hypot(m.re, m.im))))} rad/s.`
      : zoomable ? `The poles span ${fmt(spread, 2)}× in speed: the slow ones sit near the origin.` : '';
    this.note.hidden = this.note.textContent === '';
    const rhpCount = this.markers.filter((m) => m.rhp && m.set === 'closed').length;
    this.key.replaceChildren();
    const dot = el('span', 'lw-key-mark', '●');
    dot.style.color = closedColour;
    const cross = el('span', 'lw-key-mark', '×');
    cross.style.color = openColour;
    this.key.append(dot, ' closed loop  ', cross, ' open-loop plant');
    if (rhpCount) {
      const w = el('span', 'lw-key-warn', ` · ${rhpCount} closed-loop pole${rhpCount > 1 ? 's' : ''} in the right half plane: unstable`);
      w.style.color = warn;
      this.key.append(w);
    }
    const f0 = this.focused;
    const p = f0 && (f0.set === 'closed' ? this.poles!.closed : this.poles!.open)[f0.index];
    this.showReadout(p ? f0!.set : null, p ?? undefined);
  }

  private showReadout(set: PoleSet | null, p?: PoleInfo): void {
    if (set === null || !p) {
      this.readout.textContent = 'Point at or tab to a pole for its figures.';
      this.readout.classList.remove('lw-pole-readout-on');
      return;
    }
    const tau = p.timeConstant === null ? '∞ (on the imaginary axis)' : `${fmt(p.timeConstant)} s`;
    this.readout.textContent = `${set === 'closed' ? 'Closed loop' : 'Open-loop plant'}: ${complexText(p.re, p.im)} rad/s · ζ ${fmt(p.damping, 3)} · ωn ${fmt(p.natural)} rad/s · τ ${tau}${p.re > 0 ? ' · unstable' : ''}`;
    this.readout.classList.add('lw-pole-readout-on');
  }

  describe() {
    return {
      mode: this.mode,
      view: this.view ? { ...this.view } : null,
      frame: { ...this.frame },
      circles: [...this.circles],
      dampingRays: [...DAMPING_RAYS],
      markers: this.markers.map((m) => ({ ...m })),
      readout: this.readout.textContent,
      note: this.note.textContent,
    };
  }
}
