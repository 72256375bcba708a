// Front end: parse + name checks (+ units) of generated files of 1k, 5k and 20k lines.
// Target: 5k lines under 50 ms for parse + names, growth linear.
// Times are CPU time of this process (process.cpuUsage, user + system), so that load from other
// processes on a shared machine does not count; wall time is shown alongside for reference.
// The language server runs with SERVER_NODE_FLAGS (a larger young generation, see protocol.ts),
// so the table is measured in a process started with them; one row at the end repeats the 5k
// document with node's defaults for comparison.
import { loadTs, printTable, stats } from './load.mjs';
import { generateDocument } from './generate.mjs';
import { loadavg } from 'node:os';
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';

const { SERVER_NODE_FLAGS } = await loadTs('language/src/protocol.ts');
const role = process.env.FRONTEND_BENCH_ROLE;
if (role === undefined) {
  const self = fileURLToPath(import.meta.url);
  const run = (flags, r) => spawnSync(process.execPath, [...flags, self], { stdio: 'inherit', env: { ...process.env, FRONTEND_BENCH_ROLE: r } });
  const a = run(SERVER_NODE_FLAGS, 'table');
  const b = run([], 'defaults');
  process.exit(a.status || b.status || 0);
}

const { analyze } = await loadTs('language/src/analysis.ts');

function cpuMs(fn) {
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  fn();
  const c = process.cpuUsage(c0);
  return { cpu: (c.user + c.system) / 1000, wall: performance.now() - t0 };
}

// The first analysis in a fresh process (nothing compiled yet): what opening a file costs.
const cold = cpuMs(() => analyze(generateDocument(5000), { skipUnits: true, skipOperatingPoints: true }));
// 40k and 80k lines (parse+names only) show the growth past 20k: the cost per line steps up once
// one analysis's tree no longer fits in the young generation, and is flat again after the step.
const SIZES = role === 'defaults' ? [5000] : [1000, 5000, 20000, 40000, 80000];
const SKIPS = role === 'defaults' ? [true] : [true, false];

// The language server analyses the same code on every edit, so the figures below are of warm
// code: V8 reaches its optimised code after some tens of runs, and the 1k document warms all
// of it before anything is timed.
const warm = generateDocument(1000);
for (let w = 0; w < 60; w++) analyze(warm, { skipUnits: w % 2 === 0, skipOperatingPoints: true });

const rows = [];
for (const lines of SIZES) {
  const text = generateDocument(lines);
  const n = text.split('\n').length;
  for (const skipUnits of lines > 20000 ? [true] : SKIPS) {
    for (let w = 0; w < 5; w++) analyze(text, { skipUnits, skipOperatingPoints: true });
    const cpu = [];
    const wall = [];
    const reps = lines > 30000 ? 6 : lines > 10000 ? 10 : 30;
    for (let r = 0; r < reps; r++) {
      const t = cpuMs(() => analyze(text, { skipUnits, skipOperatingPoints: true }));
      cpu.push(t.cpu);
      wall.push(t.wall);
    }
    const s = stats(cpu);
    // best mean of 5 consecutive runs: every run's share of the collector is in it, while a
    // stretch slowed by another process on the machine is not
    let best5 = Infinity;
    for (let r = 0; r + 5 <= reps; r++) best5 = Math.min(best5, cpu.slice(r, r + 5).reduce((a, b) => a + b, 0) / 5);
    rows.push([n, skipUnits ? 'parse+names' : 'parse+names+units', s.p50.toFixed(1), best5.toFixed(1), s.min.toFixed(1), stats(wall).p50.toFixed(1), (n / best5).toFixed(0)]);
  }
}
if (role === 'defaults') {
  const [, , p50, best5, min, wallP50] = rows[0];
  console.log(`the same 5k document with node's default flags: p50 ${p50} ms CPU (best 5-run ${best5}, min ${min}), p50 ${wallP50} ms wall`);
} else {
  printTable(
    `front end, CPU time (target: 5k lines parse+names < 50 ms, linear growth); node ${SERVER_NODE_FLAGS.join(' ')} as the server runs; load ${loadavg().map((l) => l.toFixed(2)).join(' ')}`,
    ['lines', 'stage', 'p50 cpu ms', 'best 5-run cpu ms', 'min cpu ms', 'p50 wall ms', 'lines/ms'],
    rows,
  );
  console.log(`first analysis in a fresh process (5k lines, parse+names, cold code): ${cold.cpu.toFixed(1)} ms CPU, ${cold.wall.toFixed(1)} ms wall`);
}
