// ODE integrators: cost per problem and method, restart cost (many short segments, as the run
// driver makes them between sample instants and events), per-step cost against the number of
// states, and garbage collections during the runs (the one-step methods allocate nothing per step
// or per restart, so minor collections should stay near zero; odex allocates by design).
import { PerformanceObserver } from 'node:perf_hooks';
import { loadTs, printTable, stats } from './load.mjs';

const { createIntegrator } = await loadTs('language/src/sim/solver.ts');
const P = await loadTs('test/reference/ode/problems.ts');

let gcCount = 0;
new PerformanceObserver((list) => (gcCount += list.getEntries().length)).observe({ entryTypes: ['gc'] });
const flushGc = () => new Promise((r) => setTimeout(r, 0));

/** Runs fn reps times; returns p50 ms and the GC entries seen during the last repetition. */
async function measure(fn, reps) {
  fn();
  const t = [];
  let gcs = 0;
  let out;
  for (let k = 0; k < reps; k++) {
    await flushGc();
    const g0 = gcCount;
    const t0 = performance.now();
    out = fn();
    t.push(performance.now() - t0);
    await flushGc();
    gcs = gcCount - g0;
  }
  return { ms: stats(t).p50, gcs, out };
}

function whole(method, tp, tol) {
  return () => {
    const ig = createIntegrator(method, tp.problem, { rtol: tol, atol: tol });
    const r = ig.integrate(tp.t0, Float64Array.from(tp.x0), tp.t1, () => 'continue');
    if (r.status !== 'done') throw new Error(`${method} ${tp.name}: ${r.failure?.message}`);
    return ig.stats;
  };
}

/** `segments` restarts over [t0, t1], each from the previous end with hNext; the integrator is made once. */
function segmented(method, tp, tol, segments) {
  const ig = createIntegrator(method, tp.problem, { rtol: tol, atol: tol });
  const x0 = Float64Array.from(tp.x0);
  const onStep = () => 'continue';
  return () => {
    ig.resetStats();
    let x = x0;
    let h;
    for (let k = 0; k < segments; k++) {
      const r = ig.integrate(tp.t0 + ((tp.t1 - tp.t0) * k) / segments, x, tp.t0 + ((tp.t1 - tp.t0) * (k + 1)) / segments, onStep, h);
      if (r.status !== 'done') throw new Error(r.failure?.message);
      x = r.x;
      h = r.hNext;
    }
    return ig.stats;
  };
}

/** A chain of n masses with springs and dampers, last one tied to a wall (n states = 2·masses). */
function chain(masses) {
  const n = 2 * masses;
  return {
    name: `chain ${n}`,
    t0: 0,
    t1: 20,
    x0: Array.from({ length: n }, (_, i) => (i === 0 ? 1 : 0)),
    problem: {
      n,
      autonomous: true,
      f: (_t, x, d) => {
        for (let i = 0; i < masses; i++) {
          const q = x[2 * i];
          const left = i > 0 ? x[2 * i - 2] : 0;
          const right = i < masses - 1 ? x[2 * i + 2] : 0;
          d[2 * i] = x[2 * i + 1];
          d[2 * i + 1] = -(2 * q - left - right) * 4 - 0.1 * x[2 * i + 1] - 0.5 * q * q * q;
        }
      },
      jac: (_t, x, J) => {
        J.fill(0);
        for (let i = 0; i < masses; i++) {
          const r = 2 * i + 1;
          J[2 * i * n + r] = 1;
          J[r * n + 2 * i] = -8 - 1.5 * x[2 * i] * x[2 * i];
          if (i > 0) J[r * n + 2 * i - 2] = 4;
          if (i < masses - 1) J[r * n + 2 * i + 2] = 4;
          J[r * n + r] = -0.1;
        }
      },
    },
  };
}

const rows = [];
const add = async (label, method, fn, reps) => {
  const { ms, gcs, out } = await measure(fn, reps);
  rows.push([label, method, out.steps, out.rejected, out.evaluations, out.decompositions, ms.toFixed(2), ((1000 * ms) / out.steps).toFixed(2), gcs]);
};

for (const method of ['adaptive', 'extrapolation']) await add('Arenstorf 1e-10', method, whole(method, P.ARENSTORF, 1e-10), 5);
await add('Van der Pol 1000, 1e-8', 'stiff', whole('stiff', P.vanDerPol(1000), 1e-8), 5);
await add('HIRES 1e-8', 'stiff', whole('stiff', P.HIRES, 1e-8), 5);
for (const method of ['adaptive', 'extrapolation', 'stiff']) await add('A3, 2000 segments', method, segmented(method, P.A3, 1e-8, 2000), 5);
for (const masses of [5, 25, 50]) for (const method of ['adaptive', 'stiff']) await add(chain(masses).name + ', 1e-8', method, whole(method, chain(masses), 1e-8), 3);

printTable('ODE integrators (p50 of repeated runs)', ['problem', 'method', 'steps', 'rejected', 'f evals', 'LU', 'ms', 'µs/step', 'GCs'], rows);
console.log('\nGCs: garbage collections observed during one run (the one-step methods allocate only per segment result).');
