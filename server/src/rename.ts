// Rename: every occurrence of a declared name (declaration and uses) is edited together.
// Keywords, built-ins (pi, t, s), functions and option words cannot be renamed, and the new name
// must be a name the language reads as one, not a keyword, and free in the scope it lands in.

import type { Analysis } from '../../language/src/analysis';
import type { Target } from '../../language/src/check/symbols';
import { FUNCTIONS } from '../../language/src/check/functions';
import type { Span, TextEdit } from '../../language/src/diagnostics';
import { RESERVED_WORDS, CONTEXTUAL_WORDS } from '../../language/src/syntax/tokens';
import { sameTarget } from './definition';
import { refAt } from './locate';

const IDENT = /^[\p{L}_][\p{L}\p{N}_]*$/u;
const BUILTIN_NAMES = new Set(['pi', 't', 's']);

export type RenameCheck = { ok: true; span: Span; placeholder: string } | { ok: false; reason: string };

export function prepareRename(a: Analysis, offset: number): RenameCheck {
  const ref = refAt(a, offset);
  if (!ref) return { ok: false, reason: 'Nothing to rename here: place the cursor on a declared name.' };
  switch (ref.target.kind) {
    case 'builtin':
      return { ok: false, reason: `'${ref.name}' is built in and cannot be renamed.` };
    case 'function':
      return { ok: false, reason: `'${ref.name}' is a function of the language and cannot be renamed.` };
    case 'option':
      return { ok: false, reason: `'${ref.name}' is an option word and cannot be renamed.` };
    default:
      break;
  }
  if (!sameTarget(a, ref).some((r) => r.decl)) return { ok: false, reason: `'${ref.name}' is not declared in this file.` };
  return { ok: true, span: ref.span, placeholder: ref.name };
}

/** Names already taken where the renamed thing lives (a system's members, a loop's names, blocks). */
function namesInScope(a: Analysis, t: Target): Set<string> {
  const out = new Set<string>();
  switch (t.kind) {
    case 'member':
    case 'pointValue':
      for (const n of t.member.system.members.keys()) out.add(n);
      break;
    case 'system':
    case 'loop':
      for (const b of a.ast.blocks) out.add(b.name.name);
      break;
    case 'signal':
    case 'loopParam':
    case 'use':
      for (const n of t.loop.signals.keys()) out.add(n);
      for (const n of t.loop.params.keys()) out.add(n);
      for (const n of t.loop.uses.keys()) out.add(n);
      for (const n of t.loop.instances.keys()) out.add(n);
      break;
    default:
      break;
  }
  return out;
}

export type RenameResult = { ok: true; edits: TextEdit[] } | { ok: false; reason: string };

export function rename(a: Analysis, offset: number, newName: string): RenameResult {
  const check = prepareRename(a, offset);
  if (!check.ok) return check;
  const ref = refAt(a, offset)!;
  const name = newName.trim();
  if (!IDENT.test(name)) return { ok: false, reason: `'${newName}' is not a name: use letters, digits and '_', starting with a letter or '_'.` };
  if (RESERVED_WORDS.includes(name)) return { ok: false, reason: `'${name}' is a keyword.` };
  if (BUILTIN_NAMES.has(name) || FUNCTIONS.has(name)) return { ok: false, reason: `'${name}' is built into the language.` };
  if (CONTEXTUAL_WORDS.includes(name) && (ref.target.kind === 'system' || ref.target.kind === 'loop')) {
    return { ok: false, reason: `'${name}' is a keyword in some places; choose another name for a block.` };
  }
  if (name !== ref.name && namesInScope(a, ref.target).has(name)) return { ok: false, reason: `'${name}' is already declared there.` };
  const edits = sameTarget(a, ref).map((r) => ({ span: r.span, newText: name }));
  return { ok: true, edits };
}
