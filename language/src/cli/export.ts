// `loopwright export FILE --controller NAME [--period T] [--method M] [--lang c] [--out FILE]`:
// one self-contained C99 file for a sampled controller (or a continuous one given a period),
// implementing the difference equations the simulator runs. See language/src/export/.

import { analyze } from '../analysis';
import { planController } from '../export/controller';
import { generateC } from '../export/c';
import type { SampleMethod } from '../syntax/ast';
import { parseUnit } from '../units/registry';
import { dimEq, TIME } from '../units/dimension';
import { diagnosticLine, locate } from './format';
import { readSource } from './source';
import { EXIT_FAIL, EXIT_OK, EXIT_USAGE, flagString, parseArgs, UsageError, type CliCommand } from './types';

const METHODS: SampleMethod[] = ['tustin', 'hold', 'forward'];

/** `10ms`, `10 ms`, `10 [ms]`, `0.5 [s]` → seconds; a bare number is refused (which unit?). */
export function parsePeriod(text: string): { ok: true; seconds: number } | { ok: false; message: string } {
  const m = /^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(?:\[\s*([^\]]*)\s*\]|(.*?))\s*$/.exec(text);
  if (!m) return { ok: false, message: `--period '${text}' is not a time (write for example 10ms or "10 [ms]")` };
  const value = Number(m[1]);
  const unit = (m[2] ?? m[3] ?? '').trim();
  if (!unit) return { ok: false, message: `--period '${text}' needs a unit (write for example ${m[1]}ms or "${m[1]} [s]")` };
  const u = parseUnit(unit);
  if (!u.ok) return { ok: false, message: `--period '${text}': ${u.message}` };
  if (!dimEq(u.unit.dim, TIME) || u.unit.offset !== 0) return { ok: false, message: `--period '${text}' is not a time` };
  const seconds = value * u.unit.scale;
  if (!(seconds > 0) || !Number.isFinite(seconds)) return { ok: false, message: `--period '${text}' must be positive` };
  return { ok: true, seconds };
}

export const command: CliCommand = {
  name: 'export',
  summary: 'write a sampled controller as a self-contained C99 file',
  usage: `loopwright export FILE --controller NAME [--period T] [--method M] [--lang c] [--out FILE] [--prefix P]

Writes one C99 file for the controller: a state struct, an init function and a step function
that implements the controller's difference equations exactly as the simulator runs them
(discretized linear parts, forward-difference state equations, limits and anti-windup), with
no dynamic memory and no library beyond <math.h>. Inputs and outputs are in the controller's
declared units; comments give the sample period and every unit.
  --controller NAME  the controller to export
  --period T         sample period for a continuous controller, or to override a sampled
                     one's: 10ms, "10 [ms]", 0.5s
  --method M         discretization: tustin (default), hold or forward; with --period
                     (and without it, overrides the controller's own method)
  --lang c           the target language (c is the only one, and the default)
  --out FILE         write to FILE instead of standard output
  --prefix P         prefix of the generated names (default: the controller's name in lower case)
Exit status: 0 written, 1 the model has errors or the controller cannot be exported,
2 usage error or unreadable file.`,
  async run(args, io) {
    const p = parseArgs(args, { valued: ['controller', 'period', 'method', 'lang', 'out', 'prefix'] });
    if (p.positional.length !== 1) throw new UsageError(p.positional.length ? 'give one file' : 'no file given');
    const controller = flagString(p, 'controller');
    if (!controller) throw new UsageError('give --controller NAME');
    const lang = flagString(p, 'lang') ?? 'c';
    if (lang !== 'c') throw new UsageError(`--lang ${lang} is not supported (only c)`);
    const methodText = flagString(p, 'method');
    if (methodText !== undefined && !METHODS.includes(methodText as SampleMethod)) throw new UsageError(`--method must be one of ${METHODS.join(', ')}`);
    let period: number | undefined;
    const periodText = flagString(p, 'period');
    if (periodText !== undefined) {
      const r = parsePeriod(periodText);
      if (!r.ok) throw new UsageError(r.message);
      period = r.seconds;
    }
    const prefix = flagString(p, 'prefix');
    if (prefix !== undefined && !/^[A-Za-z][A-Za-z0-9_]*$/.test(prefix)) throw new UsageError('--prefix must be a C identifier (letters, digits, _)');
    const file = p.positional[0];
    const src = readSource(file, io, 'export');
    if (src === undefined) return EXIT_USAGE;
    const a = analyze(src);
    const errors = a.diagnostics.filter((d) => d.severity === 'error');
    if (errors.length) {
      for (const d of locate(file, src, errors)) io.err(diagnosticLine(d));
      io.err(`loopwright export: ${file} has ${errors.length} error${errors.length > 1 ? 's' : ''}; nothing exported`);
      return EXIT_FAIL;
    }
    if (!a.symbols.systems.has(controller)) {
      const ctl = [...a.symbols.systems.values()].filter((s) => s.kind === 'controller').map((s) => s.name);
      io.err(`loopwright export: ${file} has no controller named '${controller}'${ctl.length ? ` (it has ${ctl.join(', ')})` : ''}`);
      return EXIT_USAGE;
    }
    const plan = planController(a, controller, { period, method: methodText as SampleMethod | undefined, periodText });
    if (!plan.ok) {
      io.err(`loopwright export: ${plan.message}`);
      return EXIT_FAIL;
    }
    const c = generateC(plan.model, { prefix, source: file.split(/[\\/]/).pop(), periodText });
    if (!c.ok) {
      io.err(`loopwright export: ${c.message}`);
      return EXIT_FAIL;
    }
    const out = flagString(p, 'out');
    if (out === undefined) {
      io.out(c.code);
      return EXIT_OK;
    }
    try {
      io.writeFile(out, c.code);
    } catch (err) {
      io.err(`loopwright export: cannot write ${out}: ${(err as NodeJS.ErrnoException).code ?? (err as Error).message}`);
      return EXIT_USAGE;
    }
    io.out(`wrote ${out}: ${controller} sampled every ${Number(plan.model.period.toPrecision(12))} s by ${plan.model.method}; call ${c.names.init}() once, then ${c.names.step}() every period`);
    return EXIT_OK;
  },
};
