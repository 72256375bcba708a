// Export of a controller as code for a target. One entry point: text and options in, the source
// or one clear message out. Never throws.

import { analyze } from '../analysis';
import type { SampleMethod } from '../syntax/ast';
import { generateC, type CInterface } from './c';
import { planController } from './controller';

export type { ControllerModel } from './controller';
export { planController } from './controller';
export { generateC, type CInterface } from './c';

export interface ExportOptions {
  controller: string;
  lang: 'c';
  /** Period in s (required for a continuous controller). */
  period?: number;
  periodText?: string;
  method?: SampleMethod;
  prefix?: string;
  source?: string;
  version?: string;
}

export type ExportResult = { ok: true; code: string; names: CInterface; period: number; method: SampleMethod } | { ok: false; message: string };

export function exportController(text: string, o: ExportOptions): ExportResult {
  try {
    const analysis = analyze(text);
    const plan = planController(analysis, o.controller, { period: o.period, method: o.method, periodText: o.periodText });
    if (!plan.ok) return plan;
    const r = generateC(plan.model, { prefix: o.prefix, source: o.source, periodText: o.periodText, version: o.version });
    if (!r.ok) return r;
    return { ok: true, code: r.code, names: r.names, period: plan.model.period, method: plan.model.method };
  } catch (err) {
    return { ok: false, message: `internal error while exporting (please report): ${(err as Error).message}` };
  }
}
