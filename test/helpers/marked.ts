// Source texts with a marked range: `⟦` and `⟧` surround the span a diagnostic must cover, `|`
// marks a cursor. The markers are removed before the text is analysed.

export interface Marked {
  text: string;
  spans: Array<{ start: number; end: number }>;
  cursor?: number;
}

export function marked(src: string): Marked {
  let text = '';
  const spans: Array<{ start: number; end: number }> = [];
  const open: number[] = [];
  let cursor: number | undefined;
  for (const ch of src) {
    if (ch === '⟦') open.push(text.length);
    else if (ch === '⟧') spans.push({ start: open.pop() ?? 0, end: text.length });
    else if (ch === '¦') cursor = text.length;
    else text += ch;
  }
  return { text, spans, cursor };
}
