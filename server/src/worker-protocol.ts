// Messages between the server and its run worker (worker.ts). Plain JSON.

import type { LoopRunReport, RunMode } from '../../language/src/protocol';

export interface RunJob {
  text: string;
  loop: string;
  mode: RunMode;
  /** Wall-clock budget of each run inside the driver, ms (the server stops the whole job at its own budget). */
  budgetMs: number;
  /** Defaults from the settings, used where the file gives none. */
  settings: { tolerance?: number; method?: string };
}

/** Server → worker: run one job. A worker takes one job at a time and stays for the next. */
export interface JobMessage {
  type: 'job';
  /** Echoed in every message about this job. */
  id: number;
  job: RunJob;
  /**
   * One Int32 that the server sets to 1 to stop the job: the runs check it at every step and the
   * worker answers `stopped` as soon as it sees it, then waits for the next job.
   */
  stop?: SharedArrayBuffer;
}

/** What a job reports: progress, then its report or its error. */
export type JobUpdate =
  | { type: 'progress'; percentage?: number; message: string }
  | { type: 'done'; report: LoopRunReport }
  | { type: 'error'; message: string; code?: string }
  /** The job saw its stop flag and ended early (no report). */
  | { type: 'stopped' };

/** Worker → server: a job's update with the job's id. */
export type WorkerMessage = { id: number } & JobUpdate;
