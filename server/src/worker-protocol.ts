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

export type WorkerMessage =
  | { type: 'progress'; percentage?: number; message: string }
  | { type: 'done'; report: LoopRunReport }
  | { type: 'error'; message: string; code?: string };
