// Linear analysis: margins (grid, refinement and Nyquist counts), poles and the matrix exponential
// on realized transfer functions of growing order. No target yet; the table tracks the cost.
import { loadTs, printTable, stats } from './load.mjs';

const { margins } = await loadTs('language/src/linear/margins.ts');
const { realizeRational } = await loadTs('language/src/linear/realize.ts');
const { polesOf } = await loadTs('language/src/linear/poles.ts');
const { expm } = await loadTs('language/src/linear/expm.ts');
const { polyFromRoots } = await loadTs('language/src/linear/poly.ts');

const rows = [];
for (const n of [2, 4, 8, 16]) {
  const roots = Array.from({ length: n }, (_, i) => ({ re: -(i + 1) * 0.7, im: 0 }));
  const r = realizeRational({ num: [n * 2], den: polyFromRoots(roots) });
  if (!r.ok) throw new Error(r.message);
  const time = (f, reps) => {
    for (let w = 0; w < 2; w++) f();
    const t = [];
    for (let k = 0; k < reps; k++) { const t0 = performance.now(); f(); t.push(performance.now() - t0); }
    return stats(t).p50.toFixed(2);
  };
  rows.push([n, time(() => margins(r.ss), 8), time(() => polesOf(r.ss.A), 50), time(() => expm(r.ss.A), 50)]);
}
printTable('linear analysis (p50 ms)', ['states', 'margins', 'poles', 'expm'], rows);
