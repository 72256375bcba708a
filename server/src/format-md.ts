// Small Markdown and number helpers for hovers and hints.

/** A number for people: up to `digits` significant digits, no trailing zeros, `−` for minus. */
export function num(x: number, digits = 4): string {
  if (!Number.isFinite(x)) return Number.isNaN(x) ? 'NaN' : x > 0 ? '∞' : '−∞';
  if (x === 0) return '0';
  const ax = Math.abs(x);
  let s: string;
  if (ax >= 1e-3 && ax < 1e6) s = String(Number(x.toPrecision(digits)));
  else {
    const [m, e] = x.toExponential(digits - 1).split('e');
    s = `${String(Number(m))}e${Number(e)}`;
  }
  return s.replace(/^-/, '−');
}

/** A complex number `a ± bj`. */
export function complex(re: number, im: number, digits = 4): string {
  if (Math.abs(im) < 1e-12 * Math.max(1, Math.abs(re))) return num(re, digits);
  const sign = im < 0 ? '−' : '+';
  return `${num(re, digits)} ${sign} ${num(Math.abs(im), digits)}j`;
}

/** Escapes the characters that would start Markdown syntax inside table cells and text. */
export function esc(s: string): string {
  return s.replace(/([\\`*_{}\[\]<>|#])/g, '\\$1');
}

export function code(s: string): string {
  const ticks = s.includes('`') ? '``' : '`';
  return `${ticks}${s}${ticks}`;
}

/** A Markdown table; `header` and every row must have the same length. */
export function table(header: string[], rows: string[][]): string {
  const line = (cells: string[]) => `| ${cells.map((c) => c.replace(/\|/g, '\\|').replace(/\n/g, ' ')).join(' | ')} |`;
  return [line(header), `|${header.map(() => '---').join('|')}|`, ...rows.map(line)].join('\n');
}
