// Finding the loops of a document, for commands run from the palette. Pure: no vscode import.

/** The subset of vscode.DocumentSymbol that is read here. */
export interface SymbolLike {
  name: string;
  detail?: string;
  kind?: number;
  children?: SymbolLike[];
}

const LOOP_HEADER = /^[ \t]*loop[ \t]+([\p{L}_][\p{L}\p{N}_]*)/gmu;

/** Loop names declared in the text, in order, ignoring commented-out lines. */
export function loopNamesInText(text: string): string[] {
  const names: string[] = [];
  for (const m of text.matchAll(LOOP_HEADER)) if (!names.includes(m[1])) names.push(m[1]);
  return names;
}

/**
 * Loop names, in file order. The language server's document symbols are preferred: a symbol is a
 * loop when its detail names it so. When the server gives none (not started yet, or broken), the
 * loop headers of the text are used.
 */
export function loopNames(symbols: readonly SymbolLike[] | undefined, text: string): string[] {
  const fromText = loopNamesInText(text);
  const fromSymbols = (symbols ?? [])
    .filter((s) => /^loop\b/i.test(s.detail ?? '') || (fromText.includes(s.name) && !s.detail))
    .map((s) => s.name);
  const names = fromSymbols.length > 0 ? fromSymbols : fromText;
  return [...new Set(names)];
}
