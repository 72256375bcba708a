// What is at an offset: the resolved name, the token, the block and the member. Shared by hover,
// definition, references, rename and completion.

import type { IToken } from 'chevrotain';
import type { Analysis } from '../../language/src/analysis';
import type { Reference } from '../../language/src/check/symbols';
import type { Block, LoopMember, SystemMember } from '../../language/src/syntax/ast';

/** The reference whose span holds `offset`; a cursor just after a name also counts. */
export function refAt(a: Analysis, offset: number): Reference | undefined {
  const refs = a.symbols.refs;
  let lo = 0;
  let hi = refs.length - 1;
  let best = -1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    if (refs[mid].span.start <= offset) {
      best = mid;
      lo = mid + 1;
    } else hi = mid - 1;
  }
  // Several refs may start at the same offset; scan back over those that could hold the offset.
  for (let i = best; i >= 0 && i > best - 4; i--) {
    const r = refs[i];
    if (r.span.start <= offset && offset < r.span.end) return r;
  }
  for (let i = best; i >= 0 && i > best - 4; i--) {
    const r = refs[i];
    if (r.span.end === offset && r.span.end > r.span.start) return r;
  }
  return undefined;
}

function tokenEnd(t: IToken): number {
  return t.startOffset + t.image.length;
}

/** Index of the last token starting at or before `offset`, or -1. */
export function tokenIndexAt(a: Analysis, offset: number): number {
  const toks = a.tokens;
  let lo = 0;
  let hi = toks.length - 1;
  let best = -1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    if (toks[mid].startOffset <= offset) {
      best = mid;
      lo = mid + 1;
    } else hi = mid - 1;
  }
  return best;
}

/** The token holding `offset` (or ending right at it). */
export function tokenAt(a: Analysis, offset: number): IToken | undefined {
  const i = tokenIndexAt(a, offset);
  if (i < 0) return undefined;
  const t = a.tokens[i];
  if (offset < tokenEnd(t)) return t;
  if (offset === tokenEnd(t)) return t;
  return undefined;
}

export function blockAt(a: Analysis, offset: number): Block | undefined {
  return a.ast.blocks.find((b) => b.span.start <= offset && offset <= b.span.end);
}

export function memberAt(block: Block, offset: number): SystemMember | LoopMember | undefined {
  const members = block.members as Array<SystemMember | LoopMember>;
  return members.find((m) => m.span.start <= offset && offset <= m.span.end);
}

/** The text of a span (for showing expressions as written). */
export function textOf(a: Analysis, span: { start: number; end: number }): string {
  return a.text.slice(span.start, span.end);
}

/** The comment on the same line after `offset`, without `#`: used as a member's description. */
export function trailingComment(a: Analysis, offset: number): string | undefined {
  const nl = a.text.indexOf('\n', offset);
  const lineEnd = nl < 0 ? a.text.length : nl;
  const comments = a.ast.comments;
  let lo = 0;
  let hi = comments.length - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const c = comments[mid];
    if (c.span.start < offset) lo = mid + 1;
    else if (c.span.start > lineEnd) hi = mid - 1;
    else return c.text.replace(/^#+\s?/, '').trim() || undefined;
  }
  return undefined;
}
