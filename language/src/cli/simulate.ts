// `loopwright simulate FILE [--loop NAME] [--json] [--csv FILE]`: runs a loop (its nonlinear run,
// the linear comparison and the sweeps it asks for), prints a metrics table per run and the
// expects, and exits 1 when an expect fails or a run fails.

import { analyze } from '../analysis';
import { compileForRun, reportFor } from '../runs';
import { linearRunner } from '../linear/linear-run';
import type { RunResult, SignalMetrics } from '../protocol';
import { simulate } from '../sim/run';
import { diagnosticLine, locate, table } from './format';
import { readSource } from './source';
import { writeHtmlReport } from './report';
import { EXIT_FAIL, EXIT_OK, EXIT_USAGE, UsageError, flagString, parseArgs, type CliCommand } from './types';

const num = (v: number | null | undefined, digits = 4): string => (v === null || v === undefined || !Number.isFinite(v) ? '—' : String(Number(v.toPrecision(digits))));

function metricsRows(run: RunResult, units: Map<string, string>): string[][] {
  return Object.entries(run.metrics).map(([name, m]: [string, SignalMetrics]) => [
    name,
    units.get(name) || '1',
    num(m.initial),
    num(m.final),
    num(m.peak),
    num(m.rise),
    m.overshoot === null ? '—' : num(m.overshoot * 100, 3),
    num(m.settling),
    num(m.iae),
    m.timeAtLimit === undefined ? '' : num(m.timeAtLimit * 100, 3),
  ]);
}

export function csvOf(runs: RunResult[], units: Map<string, string>): string {
  const names = [...new Set(runs.flatMap((r) => Object.keys(r.signals)))];
  const quote = (s: string) => (/[",\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s);
  const lines = [['run', 't [s]', ...names.map((n) => `${n}${units.get(n) ? ` [${units.get(n)}]` : ''}`)].map(quote).join(',')];
  for (const r of runs) {
    r.t.forEach((t, i) => {
      lines.push([quote(r.label), String(t), ...names.map((n) => (r.signals[n] ? String(r.signals[n][i]) : ''))].join(','));
    });
  }
  return lines.join('\n') + '\n';
}

export const command: CliCommand = {
  name: 'simulate',
  summary: 'run a loop: nonlinear run, linear comparison and sweeps, with metrics and expects',
  usage: `loopwright simulate FILE [--loop NAME] [--json] [--csv FILE]

Runs the loop (default: the file's first loop) as its 'simulate', 'compare linear' and 'sweep'
members ask, and prints per run a table of metrics of the shown signals (initial, final, peak,
10–90 % rise, overshoot, 2 % settling, IAE, time at a limit) followed by the expects.
  --loop NAME   the loop to run
  --json        print {runs: [{label, t, signals, metrics, expects, ...}], stats} instead
  --csv FILE    also write every run's samples (display units) to FILE
  --html FILE   also write a self-contained HTML report (plots, metrics, expects, poles, model)
Exit status: 0 the nominal run finished and every expect holds on it (the linear prediction and
the sweep runs are shown but judged by 'loopwright sweep'), 1 it failed or an expect failed,
2 usage error, unreadable file or a file that cannot be run.`,
  async run(args, io) {
    let p;
    try {
      p = parseArgs(args, { valued: ['loop', 'csv', 'html'], booleans: ['json'] });
    } catch (e) {
      if (e instanceof UsageError) {
        io.err(`loopwright simulate: ${e.message}`);
        return EXIT_USAGE;
      }
      throw e;
    }
    if (p.flags.has('help')) {
      io.out(this.usage);
      return EXIT_OK;
    }
    if (p.positional.length !== 1) {
      io.err('loopwright simulate: give exactly one file (usage: loopwright simulate FILE [--loop NAME] [--json] [--csv FILE])');
      return EXIT_USAGE;
    }
    const file = p.positional[0];
    const src = readSource(file, io, 'simulate');
    if (src === undefined) return EXIT_USAGE;
    const a = analyze(src);
    const errors = a.diagnostics.filter((d) => d.severity === 'error');
    if (errors.length) {
      for (const d of locate(file, src, errors)) io.err(diagnosticLine(d));
      io.err(`loopwright simulate: ${file} has ${errors.length} error${errors.length > 1 ? 's' : ''}; nothing was run`);
      return EXIT_USAGE;
    }
    const loopName = flagString(p, 'loop');
    const compiled = compileForRun(a, loopName);
    if (!compiled.compiled) {
      for (const d of locate(file, src, compiled.diagnostics.filter((d) => d.severity === 'error'))) io.err(diagnosticLine(d));
      io.err(`loopwright simulate: ${compiled.reason ?? 'the loop cannot be run'}`);
      return EXIT_USAGE;
    }
    const c = compiled.compiled;
    const runs = simulate(c, { linear: linearRunner(a) });
    const report = reportFor(a, c, runs, file);
    const units = new Map(report.signals.map((s) => [s.name, s.unit]));
    // the nominal (nonlinear) run decides the exit status; the linear prediction and the sweep
    // runs are shown beside it (`loopwright sweep` is the command that judges the family)
    const failed = runs.some((r) => r.kind === 'nonlinear' && (r.error || r.expects.some((e) => !e.pass)));
    const html = flagString(p, 'html');
    if (html && !writeHtmlReport(io, 'simulate', html, { report, analysis: a, loop: c.name })) return EXIT_USAGE;
    const csv = flagString(p, 'csv');
    if (csv) {
      try {
        io.writeFile(csv, csvOf(runs, units));
      } catch (e) {
        io.err(`loopwright simulate: cannot write ${csv}: ${(e as Error).message}`);
        return EXIT_USAGE;
      }
    }
    if (p.flags.has('json')) {
      const stats = runs.reduce((s, r) => ({ steps: s.steps + r.stats.steps, rejected: s.rejected + r.stats.rejected, evaluations: s.evaluations + r.stats.evaluations, jacobians: s.jacobians + r.stats.jacobians, ms: s.ms + r.stats.ms }), { steps: 0, rejected: 0, evaluations: 0, jacobians: 0, ms: 0 });
      io.out(JSON.stringify({ loop: c.name, signals: report.signals, runs, stats, warnings: report.warnings }));
      return failed ? EXIT_FAIL : EXIT_OK;
    }
    const out: string[] = [];
    for (const r of runs) {
      out.push(`${c.name} · ${r.label}${r.error ? '' : `  (${r.stats.steps} steps, ${num(r.stats.ms, 3)} ms)`}`);
      if (r.error) out.push(`  run failed [${r.error.code}]: ${r.error.message}`);
      if (Object.keys(r.metrics).length) {
        const t = table(['signal', 'unit', 'initial', 'final', 'peak', 'rise s', 'overshoot %', 'settling s', 'IAE', 'at limit %'], metricsRows(r, units));
        out.push(t.split('\n').map((l) => `  ${l}`).join('\n'));
      }
      for (const e of r.expects) out.push(`  ${e.pass ? 'pass' : 'FAIL'}  ${e.text}${e.measuredText ? `   (measured ${e.measuredText})` : ''}${e.error ? `   (${e.error})` : ''}`);
      if (!r.error) out.push(`  ${r.recovered ? 'recovered: every plant state ends near the operating point' : 'not recovered: a plant state does not settle near the operating point'}`);
      out.push('');
    }
    io.out(out.join('\n').trimEnd());
    return failed ? EXIT_FAIL : EXIT_OK;
  },
};
