// Colours of the current VS Code theme, read from its CSS variables at draw time (style.css maps
// them, with fallbacks for the standalone report, onto --lw-* variables on the body).

import { parseHex, toHex, type Variant } from './palette';

export interface Theme {
  variant: Variant;
  background: string;
  foreground: string;
  muted: string;
  border: string;
  grid: string;
  /** Warning colour (errors, right-half-plane poles). */
  warning: string;
  font: string;
}

/** Any CSS colour → #rrggbb through a 1×1 canvas (the browser does the parsing). */
function normalise(colour: string, fallback: string): string {
  const probe = document.createElement('canvas').getContext('2d');
  if (!probe || !colour.trim()) return fallback;
  probe.fillStyle = fallback;
  probe.fillStyle = colour.trim();
  const v = String(probe.fillStyle);
  if (/^#[0-9a-f]{6}$/i.test(v)) return v.toUpperCase();
  const m = /rgba?\(([^)]+)\)/.exec(v);
  if (!m) return fallback;
  const [r, g, b] = m[1].split(',').map((x) => Number.parseFloat(x));
  return toHex([r, g, b]);
}

export function relativeLuminance(hex: string): number {
  const lin = (c: number) => {
    const s = c / 255;
    return s <= 0.04045 ? s / 12.92 : ((s + 0.055) / 1.055) ** 2.4;
  };
  const [r, g, b] = parseHex(hex).map(lin);
  return 0.2126 * r + 0.7152 * g + 0.0722 * b;
}

export function readTheme(): Theme {
  const css = getComputedStyle(document.body);
  const v = (name: string) => css.getPropertyValue(name);
  const background = normalise(v('--lw-bg'), '#1E1E1E');
  const foreground = normalise(v('--lw-fg'), '#CCCCCC');
  const variant: Variant = relativeLuminance(background) > 0.3 ? 'light' : 'dark';
  const family = v('--lw-font-family').trim() || 'system-ui, sans-serif';
  return {
    variant,
    background,
    foreground,
    muted: normalise(v('--lw-muted'), foreground),
    border: normalise(v('--lw-border'), foreground),
    grid: normalise(v('--lw-grid'), foreground),
    warning: normalise(v('--lw-error'), '#F48771'),
    font: `11px ${family}`,
  };
}

/** Calls `onChange` when VS Code switches theme (it rewrites the body's class list). */
export function watchTheme(onChange: () => void): MutationObserver {
  let last = document.body.className;
  const obs = new MutationObserver(() => {
    if (document.body.className !== last) {
      last = document.body.className;
      onChange();
    }
  });
  obs.observe(document.body, { attributes: true, attributeFilter: ['class'] });
  return obs;
}
