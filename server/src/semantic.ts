// Semantic tokens over the whole document: what each name is (state, input, output, param, ...),
// units, keywords and functions. Only the standard token types and modifiers are used, so every
// theme colours them without extra contributions:
//   plant/controller → class · loop → namespace · state → variable · input → parameter ·
//   output → property · param → variable+readonly · let → variable · operating point → enumMember ·
//   signal → event · use instance → class · function → function+defaultLibrary ·
//   pi/t/s → variable+defaultLibrary · option value → enumMember · unit → type · keyword → keyword.
// Declarations carry the `declaration` modifier.

import type { Analysis } from '../../language/src/analysis';
import type { Target } from '../../language/src/check/symbols';
import type { SemanticToken } from './convert';

export const TOKEN_TYPES = ['class', 'namespace', 'variable', 'parameter', 'property', 'enumMember', 'event', 'function', 'type', 'keyword'] as const;
export const TOKEN_MODIFIERS = ['declaration', 'readonly', 'defaultLibrary'] as const;

export type TokenType = (typeof TOKEN_TYPES)[number];
export type TokenModifier = (typeof TOKEN_MODIFIERS)[number];

export const LEGEND = { tokenTypes: [...TOKEN_TYPES], tokenModifiers: [...TOKEN_MODIFIERS] };

const typeIndex = (t: TokenType) => TOKEN_TYPES.indexOf(t);
const mod = (...m: TokenModifier[]) => m.reduce((acc, x) => acc | (1 << TOKEN_MODIFIERS.indexOf(x)), 0);

function classify(t: Target): { type: TokenType; modifiers: number } {
  switch (t.kind) {
    case 'system':
      return { type: 'class', modifiers: 0 };
    case 'loop':
      return { type: 'namespace', modifiers: 0 };
    case 'member':
    case 'pointValue': {
      const m = t.kind === 'member' ? t.member : t.member;
      switch (m.kind) {
        case 'state':
          return { type: 'variable', modifiers: 0 };
        case 'input':
          return { type: 'parameter', modifiers: 0 };
        case 'output':
          return { type: 'property', modifiers: 0 };
        case 'param':
          return { type: 'variable', modifiers: mod('readonly') };
        case 'let':
          return { type: 'variable', modifiers: 0 };
        case 'operatingPoint':
          return { type: 'enumMember', modifiers: 0 };
      }
      break;
    }
    case 'signal':
      return { type: 'event', modifiers: 0 };
    case 'loopParam':
      return { type: 'variable', modifiers: mod('readonly') };
    case 'use':
      return { type: 'class', modifiers: 0 };
    case 'builtin':
      return { type: 'variable', modifiers: mod('defaultLibrary') };
    case 'function':
      return { type: 'function', modifiers: mod('defaultLibrary') };
    case 'option':
      return { type: 'enumMember', modifiers: mod('defaultLibrary') };
  }
  return { type: 'variable', modifiers: 0 };
}

/** Tokens in document order. `shouldStop` is polled now and then (cancellation). */
export function semanticTokens(a: Analysis, shouldStop: () => boolean = () => false): SemanticToken[] | undefined {
  const out: SemanticToken[] = [];
  const named = new Set<number>();
  let n = 0;
  for (const r of a.symbols.refs) {
    if ((++n & 4095) === 0 && shouldStop()) return undefined;
    if (r.span.end <= r.span.start) continue;
    const c = classify(r.target);
    out.push({ start: r.span.start, length: r.span.end - r.span.start, type: typeIndex(c.type), modifiers: c.modifiers | (r.decl ? mod('declaration') : 0) });
    named.add(r.span.start);
  }
  const kw = typeIndex('keyword');
  const unit = typeIndex('type');
  for (const t of a.tokens) {
    if ((++n & 4095) === 0 && shouldStop()) return undefined;
    const name = t.tokenType.name;
    if (name === 'UnitLit') out.push({ start: t.startOffset, length: t.image.length, type: unit, modifiers: 0 });
    else if (name.startsWith('Kw_') && !named.has(t.startOffset)) out.push({ start: t.startOffset, length: t.image.length, type: kw, modifiers: 0 });
  }
  return out.sort((x, y) => x.start - y.start);
}
