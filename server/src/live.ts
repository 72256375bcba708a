// Live runs: the loops whose plot panels are open are watched (`loopwright/watch`). After an edit
// of a watched document, once typing pauses for LIVE_DEBOUNCE_MS, the new version is checked:
// with an error it is not run, and `loopwright/liveStatus` names the first error and its line;
// without, each watched loop runs in a worker and `loopwright/liveReport` carries the report.
// A newer version cancels the older run at once (its worker is terminated), and nothing is ever
// sent for a version that is no longer the document's.

import { CancellationTokenSource, type CancellationToken } from 'vscode-languageserver/node';
import type { Diagnostic } from '../../language/src/diagnostics';
import { compileAnalysis } from '../../language/src/model/compile';
import type { LoopRunReport, RunMode } from '../../language/src/protocol';
import type { DocState } from './documents';
import type { LiveReportParams, LiveStatusParams } from './live-protocol';
import type { RunJob } from './worker-protocol';

export const LIVE_DEBOUNCE_MS = 150;
/** A live run still going after this long is shown as running in its panel. */
export const LIVE_RUNNING_NOTICE_MS = 250;

export interface LiveHost {
  /** The analysis of the document's current version; undefined when it is not open. */
  state(uri: string): DocState | undefined;
  /** The document's current version. */
  version(uri: string): number | undefined;
  /** Live runs are on (the setting) and allowed (a trusted workspace). */
  enabled(): boolean;
  job(text: string, loop: string, mode: RunMode): RunJob;
  run(job: RunJob, token: CancellationToken): Promise<LoopRunReport>;
  report(p: LiveReportParams): void;
  status(p: LiveStatusParams): void;
  log(where: string, err: unknown): void;
}

const MODES = new Set<RunMode>(['simulate', 'compare', 'sweep']);

function firstError(diagnostics: readonly Diagnostic[]): Diagnostic | undefined {
  let first: Diagnostic | undefined;
  for (const d of diagnostics) {
    if (d.severity !== 'error') continue;
    if (!first || d.span.start < first.span.start) first = d;
  }
  return first;
}

export class LiveRuns {
  /** uri → loop → mode. */
  private readonly watched = new Map<string, Map<string, RunMode>>();
  private readonly timers = new Map<string, NodeJS.Timeout>();
  /** uri#loop → the run in flight. */
  private readonly inFlight = new Map<string, CancellationTokenSource>();

  constructor(
    private readonly host: LiveHost,
    private readonly delayMs = LIVE_DEBOUNCE_MS,
    private readonly runningNoticeMs = LIVE_RUNNING_NOTICE_MS,
  ) {}

  /** Handles `loopwright/watch`; malformed params are ignored. */
  watch(params: unknown): void {
    if (!params || typeof params !== 'object') return;
    const p = params as { uri?: unknown; loop?: unknown; open?: unknown; mode?: unknown };
    if (typeof p.uri !== 'string' || !p.uri || typeof p.loop !== 'string' || !p.loop) return;
    const { uri, loop } = p;
    if (p.open === false) {
      this.cancelRun(uri, loop);
      const loops = this.watched.get(uri);
      loops?.delete(loop);
      if (loops && loops.size === 0) {
        this.watched.delete(uri);
        this.cancelTimer(uri);
      }
      return;
    }
    const mode = MODES.has(p.mode as RunMode) ? (p.mode as RunMode) : 'simulate';
    let loops = this.watched.get(uri);
    if (!loops) this.watched.set(uri, (loops = new Map()));
    loops.set(loop, mode);
  }

  isWatched(uri: string): boolean {
    return (this.watched.get(uri)?.size ?? 0) > 0;
  }

  /** The document changed: its runs in flight are out of date; check again after the pause. */
  changed(uri: string): void {
    if (!this.isWatched(uri)) return;
    this.cancelRuns(uri);
    this.cancelTimer(uri);
    this.timers.set(
      uri,
      setTimeout(() => {
        this.timers.delete(uri);
        try {
          this.check(uri);
        } catch (err) {
          this.host.log('live run', err);
        }
      }, this.delayMs),
    );
  }

  /** The document closed: nothing of it runs any more (the watches stay for when it reopens). */
  closed(uri: string): void {
    this.cancelTimer(uri);
    this.cancelRuns(uri);
  }

  /** Stops every pending and running live run (trust withdrawn, setting off, shutdown). */
  stopAll(): void {
    for (const uri of [...this.timers.keys()]) this.cancelTimer(uri);
    for (const s of this.inFlight.values()) s.cancel();
    this.inFlight.clear();
  }

  private check(uri: string): void {
    const loops = this.watched.get(uri);
    if (!loops || !this.host.enabled()) return;
    const state = this.host.state(uri);
    if (!state) return;
    const { version, analysis, lines } = state;
    const lineOf = (d: Diagnostic) => lines.lineOf(d.span.start) + 1;
    const err = firstError(analysis.diagnostics);
    for (const [loop, mode] of loops) {
      const status = (message: string, line?: number) => this.host.status({ uri, loop, version, kind: 'error', message, ...(line ? { line } : {}) });
      if (err) {
        status(`${err.code} ${err.message}`, lineOf(err));
        continue;
      }
      if (!analysis.symbols.loops.has(loop)) {
        status(`there is no loop named '${loop}' in this file`);
        continue;
      }
      const compiled = compileAnalysis(analysis, loop);
      if (!compiled.loop) {
        const d = firstError(compiled.diagnostics);
        if (d) status(`${d.code} ${d.message}`, lineOf(d));
        else status(`${loop} cannot run: ${compiled.reason ?? 'the loop could not be compiled'}`);
        continue;
      }
      this.start(uri, loop, mode, state);
    }
  }

  private start(uri: string, loop: string, mode: RunMode, state: DocState): void {
    const key = `${uri}#${loop}`;
    this.inFlight.get(key)?.cancel();
    const source = new CancellationTokenSource();
    this.inFlight.set(key, source);
    const { version } = state;
    const current = () => !source.token.isCancellationRequested && this.host.version(uri) === version && this.watched.get(uri)?.has(loop) === true;
    const notice = setTimeout(() => {
      if (current()) this.host.status({ uri, loop, version, kind: 'running', message: '' });
    }, this.runningNoticeMs);
    this.host.run(this.host.job(state.analysis.text, loop, mode), source.token).then(
      (report) => {
        if (current()) this.host.report({ uri, loop, version, report });
      },
      (err: unknown) => {
        if (current()) this.host.status({ uri, loop, version, kind: 'error', message: (err as Error)?.message ?? String(err) });
      },
    ).finally(() => {
      clearTimeout(notice);
      if (this.inFlight.get(key) === source) this.inFlight.delete(key);
      source.dispose();
    });
  }

  private cancelRun(uri: string, loop: string): void {
    const key = `${uri}#${loop}`;
    this.inFlight.get(key)?.cancel();
    this.inFlight.delete(key);
  }

  private cancelRuns(uri: string): void {
    for (const [key, s] of this.inFlight) {
      if (key.startsWith(`${uri}#`)) {
        s.cancel();
        this.inFlight.delete(key);
      }
    }
  }

  private cancelTimer(uri: string): void {
    const t = this.timers.get(uri);
    if (t) clearTimeout(t);
    this.timers.delete(uri);
  }
}
