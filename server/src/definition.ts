// Go to definition and find references, both through the symbol table's references grouped by
// `targetKey`. Built-ins, functions and option words have no declaration in the file.

import type { Analysis } from '../../language/src/analysis';
import { targetKey, type Reference, type Target } from '../../language/src/check/symbols';
import type { Span } from '../../language/src/diagnostics';
import { refAt } from './locate';

const FILE_LESS = new Set<Target['kind']>(['builtin', 'function', 'option']);

/** Every reference with the same target as `ref`, in document order. */
export function sameTarget(a: Analysis, ref: Reference): Reference[] {
  const key = targetKey(ref.target);
  return a.symbols.refs.filter((r) => targetKey(r.target) === key);
}

/** Span of the declaration of the thing at `offset`, if it is declared in this file. */
export function definition(a: Analysis, offset: number): Span | undefined {
  const ref = refAt(a, offset);
  if (!ref || FILE_LESS.has(ref.target.kind)) return undefined;
  const decl = sameTarget(a, ref).find((r) => r.decl);
  return decl?.span;
}

export function references(a: Analysis, offset: number, includeDeclaration: boolean): Span[] {
  const ref = refAt(a, offset);
  if (!ref || FILE_LESS.has(ref.target.kind)) return [];
  return sameTarget(a, ref)
    .filter((r) => includeDeclaration || !r.decl)
    .map((r) => r.span);
}
