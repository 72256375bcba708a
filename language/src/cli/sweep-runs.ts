// Executes planned runs for the sweep command. The seam between the command and where the runs
// happen: in this process, one after another, yielding to the event loop between runs so the
// progress bar can draw.

import type { Compiled } from '../model/compile';
import type { RunResult } from '../protocol';
import { failedRun, runOnce, type PlannedRun } from '../sim/run';
import type { RunSpec } from '../sim/sweep';

export interface RunExecutor {
  /** Runs in plan order; `onDone` fires as each finishes. Never rejects for a failing run. */
  run(plan: PlannedRun[], onDone?: (index: number, r: RunResult) => void): Promise<RunResult[]>;
  close(): Promise<void>;
}

export interface ExecutorOptions {
  threads?: number;
}

const tick = () => new Promise<void>((resolve) => setImmediate(resolve));

function runPlanned(c: Compiled, spec: RunSpec, s: PlannedRun): RunResult {
  const failed = (s as PlannedRun & { failed?: string }).failed;
  if (failed) return failedRun(s, spec, { code: 'LW509', message: `${s.label}: ${failed}`, time: 0 });
  return runOnce(c, spec, s);
}

export function executeRuns(text: string, c: Compiled, spec: RunSpec, o: ExecutorOptions = {}): RunExecutor {
  void text;
  void o;
  return {
    async run(plan, onDone) {
      const out: RunResult[] = [];
      for (let i = 0; i < plan.length; i++) {
        await tick();
        const r = runPlanned(c, spec, plan[i]);
        out.push(r);
        onDone?.(i, r);
      }
      return out;
    },
    async close() {},
  };
}
