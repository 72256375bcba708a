// Front end: parse + name checks (+ units) of generated files of 1k, 5k and 20k lines.
// Target: 5k lines under 50 ms for parse + names, growth linear.
// Times are CPU time of this process (process.cpuUsage, user + system), so that load from other
// processes on a shared machine does not count; wall time is shown alongside for reference.
import { loadTs, printTable, stats } from './load.mjs';
import { generateDocument } from './generate.mjs';
import { loadavg } from 'node:os';

const { analyze } = await loadTs('language/src/analysis.ts');

function cpuMs(fn) {
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  fn();
  const c = process.cpuUsage(c0);
  return { cpu: (c.user + c.system) / 1000, wall: performance.now() - t0 };
}

const rows = [];
for (const lines of [1000, 5000, 20000]) {
  const text = generateDocument(lines);
  const n = text.split('\n').length;
  for (const skipUnits of [true, false]) {
    for (let w = 0; w < 3; w++) analyze(text, { skipUnits, skipOperatingPoints: true });
    const cpu = [];
    const wall = [];
    const reps = lines > 10000 ? 5 : 12;
    for (let r = 0; r < reps; r++) {
      const t = cpuMs(() => analyze(text, { skipUnits, skipOperatingPoints: true }));
      cpu.push(t.cpu);
      wall.push(t.wall);
    }
    const s = stats(cpu);
    rows.push([n, skipUnits ? 'parse+names' : 'parse+names+units', s.p50.toFixed(1), s.min.toFixed(1), stats(wall).p50.toFixed(1), (n / s.p50).toFixed(0)]);
  }
}
printTable(
  `front end, CPU time (target: 5k lines parse+names < 50 ms, linear growth); load ${loadavg().map((l) => l.toFixed(2)).join(' ')}`,
  ['lines', 'stage', 'p50 cpu ms', 'min cpu ms', 'p50 wall ms', 'lines/ms'],
  rows,
);
