// The parts of live tuning that need no editor: which knob edits may touch the text, how a drag's
// edits are grouped into one undo step, and the checks on what the server pushes. knob-edits.ts
// and live.ts apply them through the editor.

import type { Span } from '../../language/src/diagnostics';
import type { LoopRunReport } from '../../language/src/protocol';
import type { LiveReportParams, LiveStatusParams } from '../../server/src/live-protocol';
import { validateReport } from '../media/validate';

/** A param's literal: a number (sign, decimals, exponent), optionally followed by its bracketed unit. */
const LITERAL = /^[+-]?[ \t]*(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?(?:[ \t]*\[[^[\]\r\n]*\])?$/;

export function isLiteralText(text: string): boolean {
  return LITERAL.test(text);
}

/**
 * Why a knob edit must not be applied to `text`, or undefined when it may. The span must lie in the
 * text and hold a literal, and the new text must be one: an edit whose span no longer points at
 * the literal (the text changed under the page) is refused rather than written over other text.
 */
export function refuseKnobEdit(text: string, span: Span, newText: string): string | undefined {
  if (!Number.isInteger(span.start) || !Number.isInteger(span.end) || span.start < 0 || span.end < span.start || span.end > text.length) {
    return `the knob's place (${span.start}..${span.end}) is outside the document (${text.length} characters)`;
  }
  const old = text.slice(span.start, span.end);
  if (!isLiteralText(old)) return `the text at the knob's place is no longer a number ('${old.slice(0, 40)}'); run the loop again to refresh the knobs`;
  if (!isLiteralText(newText)) return `the knob sent '${newText.slice(0, 40)}', which is not a number with a unit`;
  return undefined;
}

export interface UndoStops {
  undoStopBefore: boolean;
  undoStopAfter: boolean;
}

/**
 * Undo grouping of knob edits: a drag (final:false … final:true) is one undo step, each keyboard
 * step (a lone final:true) is its own. The group opens with an undo stop before the first edit
 * and closes with one after the final edit.
 */
export class UndoGroups {
  private readonly open = new Set<string>();
  /** The document version each open group's last edit left. */
  private readonly versions = new Map<string, number>();

  /** The stops for the next edit of knob group `key` (one per panel). */
  next(key: string, final: boolean): UndoStops {
    const before = !this.open.has(key);
    if (final) this.close(key);
    else this.open.add(key);
    return { undoStopBefore: before, undoStopAfter: final };
  }

  isOpen(key: string): boolean {
    return this.open.has(key);
  }

  /** Records the document version an edit of group `key` left (kept only while the group is open). */
  landed(key: string, version: number): void {
    if (this.open.has(key)) this.versions.set(key, version);
  }

  /**
   * True when group `key` is open and the document is no longer at the version its last edit
   * left: something else changed the text during the drag (an undo, typing). The rest of the
   * drag must not be applied, or it would write the dragged value back over the user's undo.
   */
  changedUnder(key: string, version: number): boolean {
    const v = this.versions.get(key);
    return this.open.has(key) && v !== undefined && v !== version;
  }

  /** Ends a group without a final edit (the panel closed mid-drag, the text changed under it). */
  close(key: string): void {
    this.open.delete(key);
    this.versions.delete(key);
  }
}

const isObject = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);
const isVersion = (v: unknown): v is number => Number.isInteger(v);

/** A `loopwright/liveReport` as pushed, or undefined when any part is unusable. */
export function parseLiveReport(p: unknown): LiveReportParams | undefined {
  if (!isObject(p) || typeof p.uri !== 'string' || typeof p.loop !== 'string' || !isVersion(p.version)) return undefined;
  const r = validateReport(p.report);
  if (!r.ok) return undefined;
  return { uri: p.uri, loop: p.loop, version: p.version, report: r.value as LoopRunReport };
}

/** A `loopwright/liveStatus` as pushed, or undefined when any part is unusable. */
export function parseLiveStatus(p: unknown): LiveStatusParams | undefined {
  if (!isObject(p) || typeof p.uri !== 'string' || typeof p.loop !== 'string' || !isVersion(p.version)) return undefined;
  if (p.kind === 'running') return { uri: p.uri, loop: p.loop, version: p.version, kind: 'running', message: '' };
  if (p.kind !== 'error' || typeof p.message !== 'string') return undefined;
  const line = Number.isInteger(p.line) && (p.line as number) >= 1 ? (p.line as number) : undefined;
  return { uri: p.uri, loop: p.loop, version: p.version, kind: 'error', message: p.message, ...(line ? { line } : {}) };
}
