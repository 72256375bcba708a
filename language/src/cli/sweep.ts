// `loopwright sweep FILE [--loop NAME] [--json] [--html FILE] [--threads N]`: every run of the
// loop's `sweep` members, with a table of the swept value, whether the run recovered and its
// key metrics; exit 1 when a run or an expect fails.
// `loopwright sweep FILE --limit [--resolution V] [--max V]`: bisection of the start value of a
// `sweep start` member for the largest one from which the loop still recovers (LANGUAGE.md §4.3).

import { analyze, type Analysis } from '../analysis';
import type { Compiled } from '../model/compile';
import { displayUnit, type DisplayUnit } from '../model/units';
import type { RunResult } from '../protocol';
import { compileForRun, reportFor } from '../runs';
import { runSpec, type RunSpec, type SweepSpec } from '../sim/sweep';
import { parseUnit } from '../units/registry';
import { dimEq } from '../units/dimension';
import { diagnosticLine, locate, num, table } from './format';
import { Progress } from './progress';
import { writeHtmlReport } from './report';
import { executeRuns, sweepJobs, type RunExecutor } from './sweep-runs';
import { readSource } from './source';
import { EXIT_FAIL, EXIT_OK, EXIT_USAGE, flagString, parseArgs, UsageError, type CliCommand, type CliIO } from './types';

// ---------- values on the command line ----------

/**
 * A value in the unit of the swept quantity: a bare number is in that unit; `0.8 [rad]`,
 * `45deg`, `80 [degC]` are converted. `difference` reads a step or resolution (no offset).
 */
export function parseValue(text: string, unit: DisplayUnit, difference: boolean): { ok: true; si: number } | { ok: false; message: string } {
  const m = /^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(?:\[\s*([^\]]*)\s*\]|(.*?))\s*$/.exec(text);
  if (!m) return { ok: false, message: `'${text}' is not a number` };
  const v = Number(m[1]);
  const written = (m[2] ?? m[3] ?? '').trim();
  if (!written) return { ok: true, si: difference ? v * unit.scale : v * unit.scale + unit.offset };
  const u = parseUnit(written);
  if (!u.ok) return { ok: false, message: `'${text}': ${u.message}` };
  if (unit.parsed && !dimEq(u.unit.dim, unit.parsed.dim)) return { ok: false, message: `'${text}' is not in a unit of ${unit.text}` };
  if (!unit.parsed && u.unit.dim.some((d) => d !== 0)) return { ok: false, message: `'${text}' has a unit, but the swept quantity is dimensionless` };
  return { ok: true, si: difference ? v * u.unit.scale : v * u.unit.scale + u.unit.offset * u.unit.scale };
}

const toDisplay = (si: number, u: DisplayUnit) => (si - u.offset) / u.scale;
const withUnit = (v: number, u: DisplayUnit, digits = 6) => `${num(v, digits)}${u.text ? ` [${u.text}]` : ''}`;

// ---------- the recovery limit ----------

export interface LimitSearch {
  target: string;
  unit: string;
  /** Operating-point value of the swept state (display unit). */
  operatingPoint: number;
  status: 'found' | 'all-recover' | 'none-recover';
  /** Largest start value found to recover (display), or null when none did. */
  limit: number | null;
  /** Smallest start value found not to recover (display), or null when all did. */
  fails: number | null;
  resolution: number;
  runs: number;
  /** Every start value tried, in order, with its outcome. */
  tried: Array<{ value: number; recovered: boolean; error?: string }>;
}

/**
 * Bisects the start value of sweep `sw` between the operating point (or the nearest swept value
 * that recovers) and `maxSi` (default: the swept value farthest from the operating point) until
 * the bracket is no wider than `resolutionSi` (default: a thousandth of the searched range).
 * Assumes recovery holds up to one threshold along that direction, as for a saturating actuator.
 */
export async function recoveryLimit(
  c: Compiled,
  spec: RunSpec,
  sw: SweepSpec,
  o: { maxSi?: number; resolutionSi?: number; run: (startSi: number, label: string) => Promise<RunResult>; onRun?: (n: number) => void },
): Promise<LimitSearch> {
  const idx = c.states.findIndex((s) => s.qualified === sw.target);
  const inst = c.instances.find((i) => idx >= i.xOffset && idx < i.xOffset + i.system.states.length);
  const pt = inst ? c.around.get(inst.system.instance) : undefined;
  const op = inst && pt && idx - inst.xOffset < inst.system.declaredStates ? pt.x[idx - inst.xOffset] : 0;
  const values = sw.values.map((v) => v.si).filter(Number.isFinite);
  const far = o.maxSi ?? values.reduce((a, b) => (Math.abs(b - op) > Math.abs(a - op) ? b : a), values[0] ?? op);
  const dir = Math.sign(far - op) || 1;
  const tried: LimitSearch['tried'] = [];
  let runs = 0;
  const recovers = async (si: number): Promise<boolean> => {
    const r = await o.run(si, `${sw.target} = ${withUnit(toDisplay(si, sw.unit), sw.unit)}`);
    runs++;
    o.onRun?.(runs);
    const ok = !r.error && r.recovered;
    tried.push({ value: toDisplay(si, sw.unit), recovered: ok, ...(r.error ? { error: r.error.message } : {}) });
    return ok;
  };
  const base = { target: sw.target, unit: sw.unit.text, operatingPoint: toDisplay(op, sw.unit), tried };
  const resolutionOf = (lo: number, hi: number) => o.resolutionSi ?? Math.abs(hi - lo) / 1000;
  if (await recovers(far)) {
    return { ...base, status: 'all-recover', limit: toDisplay(far, sw.unit), fails: null, resolution: resolutionOf(op, far) / sw.unit.scale, runs };
  }
  // inner end: the swept value nearest the operating point on the way to `far`, if it recovers
  const inner = values.filter((v) => (v - op) * dir > 0 && (far - v) * dir > 0).sort((a, b) => Math.abs(a - op) - Math.abs(b - op));
  let lo = op, hi = far;
  if (inner.length) {
    if (await recovers(inner[0])) lo = inner[0];
    else hi = inner[0];
  }
  if (lo === op && !(await recovers(op + dir * Math.max(Math.abs(hi - op) * 1e-6, Number.MIN_VALUE)))) {
    return { ...base, status: 'none-recover', limit: null, fails: toDisplay(hi, sw.unit), resolution: resolutionOf(op, far) / sw.unit.scale, runs };
  }
  const res = resolutionOf(lo, hi);
  while (Math.abs(hi - lo) > res) {
    const mid = (lo + hi) / 2;
    if (mid === lo || mid === hi) break;
    if (await recovers(mid)) lo = mid;
    else hi = mid;
  }
  return { ...base, status: 'found', limit: toDisplay(lo, sw.unit), fails: toDisplay(hi, sw.unit), resolution: res / sw.unit.scale, runs };
}

// ---------- output ----------

export interface SweepRow {
  label: string;
  target: string;
  value: number;
  unit: string;
  text: string;
  recovered: boolean;
  error?: { code: string; message: string };
  expects: Array<{ text: string; pass: boolean; measured: number | null; measuredText: string }>;
  /** Metrics of the first shown signal. */
  signal?: string;
  final?: number;
  overshoot?: number | null;
  settling?: number | null;
  peak?: number;
  steps: number;
}

function rowOf(r: RunResult, shown: string | undefined): SweepRow {
  const m = shown ? r.metrics[shown] : undefined;
  const row: SweepRow = {
    label: r.label,
    target: r.sweep?.target ?? '',
    value: r.sweep?.value ?? NaN,
    unit: r.sweep?.unit ?? '',
    text: r.sweep?.text ?? '',
    recovered: r.recovered,
    expects: r.expects.map((e) => ({ text: e.text, pass: e.pass, measured: e.measured, measuredText: e.measuredText })),
    steps: r.stats.steps,
  };
  if (r.error) row.error = { code: r.error.code, message: r.error.message };
  if (m && shown) Object.assign(row, { signal: shown, final: m.final, overshoot: m.overshoot, settling: m.settling, peak: m.peak });
  return row;
}

function sweepTable(rows: SweepRow[], units: Map<string, string>): string {
  const targets = [...new Set(rows.map((r) => r.target))];
  const shown = rows.find((r) => r.signal)?.signal;
  const u = shown ? units.get(shown) ?? '' : '';
  const head = [
    ...(targets.length > 1 ? ['swept'] : []),
    targets.length === 1 ? `${targets[0]}${rows[0].unit ? ` [${rows[0].unit}]` : ''}` : 'value',
    'recovered',
    ...(shown ? [`${shown} final${u ? ` [${u}]` : ''}`, 'overshoot [%]', 'settling [s]'] : []),
    'expects',
    'steps',
  ];
  const body = rows.map((r) => [
    ...(targets.length > 1 ? [r.target] : []),
    targets.length === 1 ? num(r.value, 6) : `${num(r.value, 6)}${r.unit ? ` [${r.unit}]` : ''}`,
    r.error ? `✗ ${r.error.code}` : r.recovered ? '✓' : '✗',
    ...(shown ? [num(r.final, 5), r.overshoot === null || r.overshoot === undefined ? '—' : num(r.overshoot * 100, 3), num(r.settling, 4)] : []),
    r.expects.length ? `${r.expects.filter((e) => e.pass).length}/${r.expects.length}${r.expects.every((e) => e.pass) ? ' ✓' : ' ✗'}` : '—',
    String(r.steps),
  ]);
  return table(head, body);
}

const json = (v: unknown): string => JSON.stringify(v, (_k, x) => (typeof x === 'number' && !Number.isFinite(x) ? null : x), 2);

// ---------- the command ----------

interface Loaded {
  file: string;
  analysis: Analysis;
  c: Compiled;
  spec: RunSpec;
}

function load(io: CliIO, file: string, loop: string | undefined): Loaded | number {
  const src = readSource(file, io, 'sweep');
  if (src === undefined) return EXIT_USAGE;
  const a = analyze(src);
  const errors = a.diagnostics.filter((d) => d.severity === 'error');
  if (errors.length) {
    for (const d of locate(file, src, errors)) io.err(diagnosticLine(d));
    io.err(`loopwright sweep: ${file} has ${errors.length} error${errors.length > 1 ? 's' : ''}; nothing was run`);
    return EXIT_FAIL;
  }
  if (loop !== undefined && !a.symbols.loops.has(loop)) {
    const have = [...a.symbols.loops.keys()];
    io.err(`loopwright sweep: ${file} has no loop named '${loop}'${have.length ? ` (it has ${have.join(', ')})` : ''}`);
    return EXIT_USAGE;
  }
  const r = compileForRun(a, loop);
  if (!r.compiled) {
    for (const d of locate(file, src, r.diagnostics.filter((d) => d.severity === 'error'))) io.err(diagnosticLine(d));
    io.err(`loopwright sweep: ${r.reason ?? 'the loop cannot be run'}`);
    return EXIT_FAIL;
  }
  return { file, analysis: a, c: r.compiled, spec: runSpec(r.compiled) };
}

export const command: CliCommand = {
  name: 'sweep',
  summary: "run a loop's sweep in parallel, or find the largest start value it recovers from",
  usage: `loopwright sweep FILE [--loop NAME] [--json] [--html FILE] [--threads N]
loopwright sweep FILE --limit [--loop NAME] [--resolution V] [--max V] [--json]

Runs every value of the loop's 'sweep' members (default loop: the file's first) on worker
threads and prints one row per run: the swept value, whether the run recovered (✓: every plant
state ends within 2 % of its start distance from the operating point and stays there over the
last tenth of the run), final value, overshoot and 2 % settling of the first shown signal, and
the expects that held.
  --loop NAME       the loop to sweep
  --json            print {loop, file, runs: [{label, target, value, unit, recovered, error?,
                    expects, signal, final, overshoot, settling, peak, steps}], failed}
  --html FILE       also write a self-contained HTML report of the runs (plots, metrics,
                    expects, linearization, poles and the model text)
  --threads N       worker threads (default: the machine's cores, at most the run count)
  --limit           bisect the start value of the loop's 'sweep start' member for the largest
                    one from which the loop still recovers; prints it with its unit and the
                    number of runs (JSON: {loop, target, unit, status, limit, fails, resolution,
                    runs, operatingPoint, tried})
  --resolution V    width of the final bracket, in the swept state's unit unless V has one
                    (default: a thousandth of the searched range)
  --max V           far end of the search (default: the swept value farthest from the
                    operating point)
Exit status: 0 every run finished and every expect held (--limit: a limit was found, or every
value recovers), 1 a run or an expect failed (--limit: no value recovers) or the model has
errors, 2 usage error or unreadable file.`,
  async run(args, io) {
    const p = parseArgs(args, { valued: ['loop', 'html', 'threads', 'resolution', 'max'], booleans: ['json', 'limit'] });
    if (p.positional.length !== 1) throw new UsageError(p.positional.length ? 'give one file' : 'no file given');
    const limit = p.flags.has('limit');
    if (!limit && (p.flags.has('resolution') || p.flags.has('max'))) throw new UsageError('--resolution and --max go with --limit');
    if (limit && p.flags.has('html')) throw new UsageError('--html does not go with --limit');
    let threads: number | undefined;
    const th = flagString(p, 'threads');
    if (th !== undefined) {
      if (!/^\d+$/.test(th) || Number(th) < 1 || Number(th) > 256) throw new UsageError('--threads must be a whole number from 1 to 256');
      threads = Number(th);
    }
    const loaded = load(io, p.positional[0], flagString(p, 'loop'));
    if (typeof loaded === 'number') return loaded;
    const { c, spec, file, analysis } = loaded;
    const asJson = p.flags.has('json');
    // a bisection is one run after another: it runs here, without starting workers per run
    const exec: RunExecutor = executeRuns(analysis.text, c, spec, limit ? { mode: 'in-process' } : { threads });
    if (limit) return limitCommand(io, loaded, p, exec, asJson);
    {
      const plan = sweepJobs(spec.sweeps);
      if (!plan.length) {
        io.err(`loopwright sweep: loop '${c.name}' has no sweep member (add 'sweep start SYSTEM.STATE over V1, V2, ...' or 'sweep SYSTEM.PARAM over LO .. HI steps N')`);
        return EXIT_USAGE;
      }
      const bar = new Progress(io, `sweep ${c.name}`, plan.length);
      bar.update(0);
      const runs = await exec.run(plan, (n) => bar.update(n));
      bar.finish(runs.length, exec.mode === 'threads' ? `done on ${Math.min(exec.threads, plan.length)} threads` : 'done');
      const report = reportFor(analysis, c, runs, file);
      const units = new Map(report.signals.map((s) => [s.name, s.unit]));
      const shown = report.signals[0]?.name;
      const rows = runs.map((r) => rowOf(r, shown));
      const failed = runs.some((r) => r.error || r.expects.some((e) => !e.pass));
      const html = flagString(p, 'html');
      if (html && !writeHtmlReport(io, 'sweep', html, { report, analysis, loop: c.name, heading: `Sweep of loop ${c.name} in ${file}` })) return EXIT_USAGE;
      if (asJson) {
        io.out(json({ loop: c.name, file, runs: rows, failed }));
        return failed ? EXIT_FAIL : EXIT_OK;
      }
      const out = [`${c.name}: ${runs.length} run${runs.length === 1 ? '' : 's'} of the sweep`, sweepTable(rows, units)];
      for (const r of rows) {
        if (r.error) out.push(`${r.label}: run failed [${r.error.code}]: ${r.error.message}`);
        for (const e of r.expects) if (!e.pass) out.push(`${r.label}: FAIL ${e.text}${e.measuredText ? ` (measured ${e.measuredText})` : ''}`);
      }
      if (html) out.push(`report written to ${html}`);
      io.out(out.join('\n'));
      return failed ? EXIT_FAIL : EXIT_OK;
    }
  },
};

async function limitCommand(io: CliIO, l: Loaded, p: ReturnType<typeof parseArgs>, exec: RunExecutor, asJson: boolean): Promise<number> {
  const { c, spec } = l;
  const starts = spec.sweeps.filter((s) => s.kind === 'start');
  if (!starts.length) {
    io.err(`loopwright sweep: --limit needs a 'sweep start SYSTEM.STATE over ...' member in loop '${c.name}'`);
    return EXIT_USAGE;
  }
  const sw = starts[0];
  const unit = sw.unit.text ? sw.unit : displayUnit(undefined);
  let maxSi: number | undefined, resolutionSi: number | undefined;
  const maxText = flagString(p, 'max'), resText = flagString(p, 'resolution');
  if (maxText !== undefined) {
    const r = parseValue(maxText, unit, false);
    if (!r.ok) throw new UsageError(`--max ${r.message}`);
    maxSi = r.si;
  }
  if (resText !== undefined) {
    const r = parseValue(resText, unit, true);
    if (!r.ok) throw new UsageError(`--resolution ${r.message}`);
    if (!(r.si > 0)) throw new UsageError('--resolution must be positive');
    resolutionSi = r.si;
  }
  const bar = new Progress(io, `limit ${sw.target}`, 0);
  const res = await recoveryLimit(c, spec, sw, {
    maxSi,
    resolutionSi,
    run: async (si, label) => (await exec.run([{ label, kind: 'sweep', starts: [[sw.target, si]] }]))[0],
    onRun: (n) => {
      bar.setTotal(n);
      bar.update(n);
    },
  });
  bar.finish(res.runs, 'done');
  if (asJson) {
    io.out(json({ loop: c.name, ...res }));
    return res.status === 'none-recover' ? EXIT_FAIL : EXIT_OK;
  }
  const u = sw.unit;
  const lines: string[] = [];
  if (res.status === 'found') {
    lines.push(`${c.name}: recovers from ${sw.target} up to ${withUnit(res.limit!, u)} (not from ${withUnit(res.fails!, u)}); resolution ${withUnit(res.resolution, u, 3)}, ${res.runs} runs`);
  } else if (res.status === 'all-recover') {
    lines.push(`${c.name}: recovers from every ${sw.target} tried, up to ${withUnit(res.limit!, u)} (the far end of the search; give --max to search further); ${res.runs} run${res.runs === 1 ? '' : 's'}`);
  } else {
    lines.push(`${c.name}: does not recover from ${sw.target} = ${withUnit(res.fails!, u)}, nor from just beside the operating point (${withUnit(res.operatingPoint, u)}); ${res.runs} runs`);
  }
  lines.push(`operating point: ${sw.target} = ${withUnit(res.operatingPoint, u)}`);
  io.out(lines.join('\n'));
  return res.status === 'none-recover' ? EXIT_FAIL : EXIT_OK;
}
