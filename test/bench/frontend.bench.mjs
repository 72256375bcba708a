// Front end: parse + name checks (+ units) of generated files of 1k, 5k and 20k lines.
// Target: 5k lines under 50 ms for parse + names, growth linear.
import { loadTs, printTable, stats } from './load.mjs';
import { generateDocument } from './generate.mjs';

const { analyze } = await loadTs('language/src/analysis.ts');
const rows = [];
for (const lines of [1000, 5000, 20000]) {
  const text = generateDocument(lines);
  const n = text.split('\n').length;
  for (const skipUnits of [true, false]) {
    for (let w = 0; w < 3; w++) analyze(text, { skipUnits });
    const times = [];
    const reps = lines > 10000 ? 5 : 12;
    for (let r = 0; r < reps; r++) {
      const t0 = performance.now();
      analyze(text, { skipUnits });
      times.push(performance.now() - t0);
    }
    const s = stats(times);
    rows.push([n, skipUnits ? 'parse+names' : 'parse+names+units', s.p50.toFixed(1), s.min.toFixed(1), (n / s.p50).toFixed(0)]);
  }
}
printTable('front end (target: 5k lines parse+names < 50 ms, linear growth)', ['lines', 'stage', 'p50 ms', 'min ms', 'lines/ms'], rows);
