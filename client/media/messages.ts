// Messages between the plot page (a webview, or the standalone HTML report) and its host (the
// extension's panel). Plain JSON both ways. The page validates everything it receives, the host
// validates everything the page sends: neither side trusts the other's shapes.

import type { Span } from '../../language/src/diagnostics';
import type { LoopRunReport } from '../../language/src/protocol';
import { validateReport } from './validate';

/** Id of the `<script type="application/json">` block in which a standalone report carries its data. */
export const EMBEDDED_REPORT_ID = 'lw-report-data';

/** Page → host. The page says `ready` first; the host then sends data. */
export type PageToHost =
  | { type: 'ready' }
  | { type: 'exportCsv'; csv: string }
  | { type: 'exportPng'; dataUrl: string }
  | { type: 'error'; message: string }
  /** A knob moved (live tuning): replace `span` with `newText`; `final` on release. */
  | { type: 'editParam'; name: string; span: Span; newText: string; final: boolean };

export type StatusKind = 'running' | 'idle' | 'error';

/** Host → page. */
export type HostToPage =
  /** `version`: the document version the report was computed from, when the host knows it. */
  | { type: 'report'; report: LoopRunReport; version?: number }
  /**
   * A knob edit the page posted has been dealt with, applied or dropped, in the order posted;
   * the document is now at `version`. A report of an older version does not show it.
   */
  | { type: 'edited'; version: number }
  /** The colour theme changed: redraw with the current CSS variables. */
  | { type: 'theme' }
  /** `line` is 1-based, for errors that point into the document. */
  | { type: 'status'; kind: StatusKind; message?: string; line?: number };

/** Shown x range; null when the whole run is shown. */
export type Zoom = { min: number; max: number } | null;

/** Series switched off in the legend: by signal name (all runs) and by run label. */
export interface Hidden {
  signals: string[];
  runs: string[];
}

/** A response kept with "Pin": drawn faintly under the live curves of the same loop. */
export interface Pinned {
  loop: string;
  runs: Array<{ label: string; kind: string; t: number[]; signals: Record<string, (number | null)[]> }>;
}

/** What the page keeps with `setState` so that a reload draws the same picture at once. */
export interface PlotState {
  report: LoopRunReport;
  zoom: Zoom;
  hidden: Hidden;
  /** The pinned reference response, if any. */
  pinned?: Pinned;
  /** The "Plant params" knobs are open. */
  showPlant?: boolean;
}

export type Parsed<T> = { ok: true; value: T } | { ok: false; error: string };

const isObject = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);
const isFiniteNumber = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v);

const isVersion = (v: unknown): v is number => Number.isSafeInteger(v) && (v as number) >= 0;

function describeType(v: unknown): string {
  if (v === null) return 'null';
  if (Array.isArray(v)) return 'an array';
  return typeof v === 'object' ? 'an object' : `${typeof v} ${JSON.stringify(v)?.slice(0, 40) ?? ''}`.trim();
}

/** Checks a message that arrived at the page. Never throws. */
export function parseHostMessage(data: unknown): Parsed<HostToPage> {
  if (!isObject(data)) return { ok: false, error: `expected a message object, got ${describeType(data)}` };
  switch (data.type) {
    case 'report': {
      const r = validateReport(data.report);
      if (!r.ok) return { ok: false, error: `report: ${r.error}` };
      if (data.version === undefined) return { ok: true, value: { type: 'report', report: r.value } };
      if (!isVersion(data.version)) return { ok: false, error: `report: version must be a non-negative integer, got ${describeType(data.version)}` };
      return { ok: true, value: { type: 'report', report: r.value, version: data.version } };
    }
    case 'edited':
      return isVersion(data.version) ? { ok: true, value: { type: 'edited', version: data.version } } : { ok: false, error: `edited: version must be a non-negative integer, got ${describeType(data.version)}` };
    case 'theme':
      return { ok: true, value: { type: 'theme' } };
    case 'status': {
      const { kind, message, line } = data;
      if (kind !== 'running' && kind !== 'idle' && kind !== 'error') return { ok: false, error: `status: kind must be 'running', 'idle' or 'error', got ${describeType(kind)}` };
      if (message !== undefined && typeof message !== 'string') return { ok: false, error: 'status: message must be a string' };
      if (line !== undefined && !(Number.isInteger(line) && (line as number) >= 1)) return { ok: false, error: 'status: line must be a positive integer' };
      return { ok: true, value: { type: 'status', kind, message: message as string | undefined, line: line as number | undefined } };
    }
    default:
      return { ok: false, error: `unknown message type ${describeType(data.type)}` };
  }
}

/** Checks a message that arrived at the host from the page. Never throws. */
export function parsePageMessage(data: unknown): Parsed<PageToHost> {
  if (!isObject(data)) return { ok: false, error: `expected a message object, got ${describeType(data)}` };
  switch (data.type) {
    case 'ready':
      return { ok: true, value: { type: 'ready' } };
    case 'exportCsv':
      return typeof data.csv === 'string' ? { ok: true, value: { type: 'exportCsv', csv: data.csv } } : { ok: false, error: 'exportCsv: csv must be a string' };
    case 'exportPng':
      return typeof data.dataUrl === 'string' && data.dataUrl.startsWith('data:image/png;base64,')
        ? { ok: true, value: { type: 'exportPng', dataUrl: data.dataUrl } }
        : { ok: false, error: 'exportPng: dataUrl must be a data:image/png;base64 URL' };
    case 'error':
      return typeof data.message === 'string' ? { ok: true, value: { type: 'error', message: data.message } } : { ok: false, error: 'error: message must be a string' };
    case 'editParam': {
      const { name, span, newText, final } = data;
      if (typeof name !== 'string' || typeof newText !== 'string' || typeof final !== 'boolean') return { ok: false, error: 'editParam: name, newText and final are required' };
      if (!isObject(span) || !Number.isInteger(span.start) || !Number.isInteger(span.end) || (span.start as number) < 0 || (span.end as number) < (span.start as number)) {
        return { ok: false, error: 'editParam: span must be {start, end} with 0 <= start <= end' };
      }
      return { ok: true, value: { type: 'editParam', name, span: { start: span.start as number, end: span.end as number }, newText, final } };
    }
    default:
      return { ok: false, error: `unknown message type ${describeType(data.type)}` };
  }
}

/** Checks a state restored with `getState()`; anything unusable yields null. */
export function parseState(data: unknown): PlotState | null {
  if (!isObject(data)) return null;
  const r = validateReport(data.report);
  if (!r.ok) return null;
  const z = data.zoom;
  const zoom: Zoom = isObject(z) && isFiniteNumber(z.min) && isFiniteNumber(z.max) && z.min < z.max ? { min: z.min, max: z.max } : null;
  const h = isObject(data.hidden) ? data.hidden : {};
  const strings = (v: unknown): string[] => (Array.isArray(v) ? v.filter((s): s is string => typeof s === 'string') : []);
  const state: PlotState = { report: r.value, zoom, hidden: { signals: strings(h.signals), runs: strings(h.runs) } };
  const pinned = parsePinned(data.pinned);
  if (pinned) state.pinned = pinned;
  if (data.showPlant === true) state.showPlant = true;
  return state;
}

const isSamples = (v: unknown): v is (number | null)[] => Array.isArray(v) && v.every((x) => x === null || isFiniteNumber(x));

/** A saved pin, or null when any part of it is unusable. */
function parsePinned(v: unknown): Pinned | null {
  if (!isObject(v) || typeof v.loop !== 'string' || !Array.isArray(v.runs)) return null;
  const runs: Pinned['runs'] = [];
  for (const r of v.runs) {
    if (!isObject(r) || typeof r.label !== 'string' || typeof r.kind !== 'string' || !isSamples(r.t) || !isObject(r.signals)) return null;
    const signals: Record<string, (number | null)[]> = {};
    for (const [name, ys] of Object.entries(r.signals)) {
      if (!isSamples(ys) || ys.length !== r.t.length) return null;
      signals[name] = ys;
    }
    runs.push({ label: r.label, kind: r.kind, t: r.t as number[], signals });
  }
  return { loop: v.loop, runs };
}
