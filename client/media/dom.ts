// Small DOM helpers. Text from the report only ever goes through textContent (or a property such
// as `title`), never through innerHTML, so markup in a name stays text.

export function el<K extends keyof HTMLElementTagNameMap>(tag: K, cls?: string, text?: string): HTMLElementTagNameMap[K] {
  const e = document.createElement(tag);
  if (cls) e.className = cls;
  if (text !== undefined) e.textContent = text;
  return e;
}

/** A line sample for legends: the colour and, when dashed, the dash. */
export function swatch(stroke: string, dash: readonly number[]): HTMLSpanElement {
  const s = el('span', 'lw-swatch');
  s.setAttribute('aria-hidden', 'true');
  s.style.borderTopColor = stroke;
  s.style.borderTopStyle = dash.length === 0 ? 'solid' : dash[0] <= 3 ? 'dotted' : 'dashed';
  return s;
}
