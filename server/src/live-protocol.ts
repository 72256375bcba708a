// Live runs between the client and the server (server/src/live.ts). Plain JSON.
//
// Client → server `loopwright/watch`: a plot panel of `loop` in `uri` opened (`open: true`, with
// the mode it shows) or closed (`open: false`). While a loop is watched, every edit of its
// document re-runs it once typing pauses.
// Server → client `loopwright/liveReport`: the report of the run of document version `version`.
// Server → client `loopwright/liveStatus`: `kind: 'error'`: version `version` was not run; `line`
// (1-based) is where the first error is, when it points into the document. `kind: 'running'`: the
// run of version `version` has been going for LIVE_RUNNING_NOTICE_MS and is still going (a run
// that ends sooner sends only its report, so the panel does not flicker on every keystroke).

import type { LoopRunReport, RunMode } from '../../language/src/protocol';

export const WatchNotification = 'loopwright/watch';
export const LiveReportNotification = 'loopwright/liveReport';
export const LiveStatusNotification = 'loopwright/liveStatus';

export interface WatchParams {
  uri: string;
  loop: string;
  open: boolean;
  /** What the panel shows; simulate when absent. */
  mode?: RunMode;
}

export interface LiveReportParams {
  uri: string;
  loop: string;
  version: number;
  report: LoopRunReport;
}

export interface LiveStatusParams {
  uri: string;
  loop: string;
  version: number;
  kind: 'error' | 'running';
  /** What went wrong (error); empty for running. */
  message: string;
  line?: number;
}
