// Bundles every entry point that exists into dist/. Safe to run at any stage of the tree.
import { build } from 'esbuild';
import { existsSync, mkdirSync, copyFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const at = (p) => join(root, p);
const watch = process.argv.includes('--watch');

const node = { bundle: true, platform: 'node', format: 'cjs', target: 'node20', sourcemap: true, logLevel: 'warning' };
const entries = [
  { in: 'client/src/extension.ts', out: 'dist/extension.js', opts: { ...node, external: ['vscode'] } },
  { in: 'server/src/main.ts', out: 'dist/server.js', opts: node },
  { in: 'server/src/worker.ts', out: 'dist/worker.js', opts: node },
  { in: 'language/src/cli/main.ts', out: 'dist/cli.js', opts: { ...node, banner: { js: '#!/usr/bin/env node' } } },
  { in: 'language/src/sim/pool-worker.ts', out: 'dist/pool-worker.js', opts: node },
  { in: 'client/media/plot.ts', out: 'dist/media/plot.js', opts: { bundle: true, platform: 'browser', format: 'iife', target: 'es2022', sourcemap: false, logLevel: 'warning' } },
];

mkdirSync(at('dist/media'), { recursive: true });
const jobs = entries.filter((e) => existsSync(at(e.in))).map((e) => build({ entryPoints: [at(e.in)], outfile: at(e.out), ...e.opts }));
// Every bundle is attempted even when one fails, so one broken entry does not hide the others.
const results = await Promise.allSettled(jobs);
const failed = results.filter((r) => r.status === 'rejected');
if (failed.length) process.exitCode = 1;
for (const [from, to] of [['node_modules/uplot/dist/uPlot.min.css', 'dist/media/uPlot.min.css'], ['client/media/style.css', 'dist/media/style.css']]) {
  if (existsSync(at(from))) copyFileSync(at(from), at(to));
}
if (!watch) console.log(`built ${jobs.length - failed.length} of ${jobs.length} bundle(s) into dist/`);
