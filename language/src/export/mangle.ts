// Names and text for generated C. Identifiers come from AST names but never reach the output as
// written: each is reduced to ASCII letters, digits and '_', kept clear of C keywords and
// reserved spellings, and made unique within its scope. Free text (descriptions, unit texts,
// source excerpts) only ever goes into comments, after `commentText` has neutralised whatever
// could end or disturb a comment.

/** C99 keywords plus names the generated file itself uses or that <math.h>/<stdint.h> may define. */
const RESERVED = new Set([
  'auto', 'break', 'case', 'char', 'const', 'continue', 'default', 'do', 'double', 'else', 'enum',
  'extern', 'float', 'for', 'goto', 'if', 'inline', 'int', 'long', 'register', 'restrict', 'return',
  'short', 'signed', 'sizeof', 'static', 'struct', 'switch', 'typedef', 'union', 'unsigned', 'void',
  'volatile', 'while', '_Bool', '_Complex', '_Imaginary',
  // macros and names of <math.h> a field or parameter must not shadow or collide with
  'NAN', 'INFINITY', 'HUGE_VAL', 'HUGE_VALF', 'HUGE_VALL', 'EDOM', 'ERANGE', 'errno', 'math_errhandling',
  'FP_NAN', 'FP_INFINITE', 'FP_ZERO', 'FP_SUBNORMAL', 'FP_NORMAL', 'isnan', 'isinf', 'isfinite',
  'signbit', 'fpclassify', 'isnormal', 'assert', 'NULL', 'bool', 'true', 'false',
  // the generated code's own names
  's', 'in', 'out', 'x', 'u', 'y', 'main',
]);

/** Does the name look like an identifier C reserves (`_X...`, `__...`) or a <stdint.h> type? */
function reservedShape(name: string): boolean {
  return /^_[A-Z_]/.test(name) || /^u?int(_least|_fast)?\d+_t$/.test(name) || /^u?int(max|ptr)_t$/.test(name) || /^(INT|UINT)\w*_(MAX|MIN|C)$/.test(name);
}

/** An ASCII C identifier derived from any text: letters, digits, '_'; others as `_xHHHH`. */
export function cIdent(raw: string): string {
  let out = '';
  for (const ch of raw) {
    if (/[A-Za-z0-9_]/.test(ch)) out += ch;
    else if (/\s|[#:./*\-+()[\]]/.test(ch)) out += '_';
    else out += `_x${ch.codePointAt(0)!.toString(16)}`;
  }
  out = out.replace(/_+/g, '_').replace(/^_+|_+$/g, '');
  if (out === '') out = 'v';
  if (/^[0-9]/.test(out)) out = `n${out}`;
  if (RESERVED.has(out) || reservedShape(out)) out += '_';
  return out;
}

/** Unique identifiers within one scope (struct fields, file-level names). */
export class NameScope {
  private readonly used = new Set<string>();
  constructor(taken: Iterable<string> = []) {
    for (const t of taken) this.used.add(t);
  }
  /** A fresh identifier for `raw`; repeated requests give `name_2`, `name_3`, ... */
  take(raw: string): string {
    const base = cIdent(raw);
    let name = base;
    for (let k = 2; this.used.has(name); k++) name = `${base}_${k}`;
    this.used.add(name);
    return name;
  }
}

/**
 * Text that is safe inside a C block comment on one line: no control characters or line
 * separators, no comment delimiters, no trigraphs (C99 replaces `??/` and friends even inside
 * comments), and no backslash that could splice lines.
 */
export function commentText(raw: string): string {
  return raw
    .replace(/[\u0000-\u001f\u007f-\u009f\u2028\u2029]/g, ' ')
    .replace(/\\/g, '/')
    .replace(/\*\//g, '* /')
    .replace(/\/\*/g, '/ *')
    .replace(/\?\?/g, '? ?')
    .replace(/\s+/g, ' ')
    .trim();
}

/** A double as a C literal that reads back to the same value (JS String() round-trips). */
export function cNumber(v: number): string {
  if (Number.isNaN(v)) return 'NAN';
  if (v === Infinity) return 'HUGE_VAL';
  if (v === -Infinity) return '(-HUGE_VAL)';
  let s = String(v);
  if (!/[.eE]/.test(s)) s += '.0';
  return v < 0 || Object.is(v, -0) ? `(${Object.is(v, -0) ? '-0.0' : s})` : s;
}
