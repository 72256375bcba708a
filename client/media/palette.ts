// Series colours. Our own choice, checked by test/webview/palette.test.ts:
//
// Categorical (one colour per signal), six colours per background:
//   dark  backgrounds: #4DA3FF blue, #FFB02E amber, #F2F2A6 pale yellow, #D95F3B brick,
//                      #A6E3FF pale sky, #E58AE0 orchid
//   light backgrounds: #2166CC blue, #C27400 ochre, #18244F navy, #A33C12 rust,
//                      #2E93C6 cerulean, #B8419E plum
// Why these: protanopia and deuteranopia fold the red–green axis, leaving lightness and the
// blue–yellow axis. The six hues were placed so that each pair differs on one of those two axes
// (blue vs. yellow family, and within a family by lightness), so that every pair stays at least
// 14 CIELAB ΔE apart after simulating either deficiency (Viénot–Brettel–Mollon 1999 matrices),
// and every colour keeps a contrast ratio of at least 3:1 against its background (#1e1e1e /
// #ffffff and the usual editor backgrounds near them). The light variant is not the dark one
// darkened: the pale colours become deep ones (pale yellow → navy) so that the lightness
// spread, which carries most of the separation, survives on white.
// A seventh signal and beyond reuse the colours with a dash pattern (see `signalStyle`).
//
// Sequential (sweep runs, coloured by the swept value): three stops from a blue through a teal to
// a yellow, with lightness rising monotonically (a blue→yellow ramp reads the same with the
// red–green axis folded). Dark: #6C7BFF → #3FB8C4 → #F4E76E. Light: #1B2A6B → #22707F → #B87E00
// (kept dark enough to show on white).

export type Variant = 'dark' | 'light';

export const CATEGORICAL: Record<Variant, readonly string[]> = {
  dark: ['#4DA3FF', '#FFB02E', '#F2F2A6', '#D95F3B', '#A6E3FF', '#E58AE0'],
  light: ['#2166CC', '#C27400', '#18244F', '#A33C12', '#2E93C6', '#B8419E'],
};

export const SEQUENTIAL: Record<Variant, readonly string[]> = {
  dark: ['#6C7BFF', '#3FB8C4', '#F4E76E'],
  light: ['#1B2A6B', '#22707F', '#B87E00'],
};

/** Dash patterns (CSS px) used once the categorical colours run out, and for extra runs. */
export const DASHES: readonly (readonly number[])[] = [[], [8, 4], [2, 3], [10, 3, 2, 3]];

/** The dash of a linearized run in compare mode. */
export const LINEAR_DASH: readonly number[] = [7, 5];

export function parseHex(hex: string): [number, number, number] {
  const m = /^#([0-9a-f]{6})$/i.exec(hex);
  if (!m) throw new Error(`not a #rrggbb colour: ${hex}`);
  const n = parseInt(m[1], 16);
  return [(n >> 16) & 255, (n >> 8) & 255, n & 255];
}

export function toHex([r, g, b]: readonly number[]): string {
  const c = (v: number) => Math.round(Math.min(255, Math.max(0, v))).toString(16).padStart(2, '0');
  return `#${c(r)}${c(g)}${c(b)}`.toUpperCase();
}

/** Colour and dash of the i-th signal (index into the report's signal list). */
export function signalStyle(i: number, variant: Variant): { stroke: string; dash: number[] } {
  const colours = CATEGORICAL[variant];
  const k = ((i % colours.length) + colours.length) % colours.length;
  const round = Math.floor(i / colours.length) % DASHES.length;
  return { stroke: colours[k], dash: [...DASHES[round]] };
}

/** Colour at position u ∈ [0, 1] of the sequential scale (piecewise linear in sRGB). */
export function sequential(u: number, variant: Variant): string {
  const stops = SEQUENTIAL[variant].map(parseHex);
  const x = Math.min(1, Math.max(0, Number.isFinite(u) ? u : 0)) * (stops.length - 1);
  const i = Math.min(stops.length - 2, Math.floor(x));
  const f = x - i;
  return toHex(stops[i].map((a, k) => a + (stops[i + 1][k] - a) * f));
}

/** `#rrggbb` plus alpha as an rgba() string. */
export function withAlpha(hex: string, alpha: number): string {
  const [r, g, b] = parseHex(hex);
  return `rgba(${r}, ${g}, ${b}, ${alpha})`;
}
