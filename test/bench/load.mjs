// Loads a TypeScript module of the project for a benchmark: bundles it with esbuild into a
// temporary CommonJS file and requires it (the same bundler the product ships with).
import { build } from 'esbuild';
import { createRequire } from 'node:module';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, dirname, basename } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
const dir = mkdtempSync(join(tmpdir(), 'loopwright-bench-'));
const require = createRequire(import.meta.url);

export async function loadTs(relPath) {
  const out = join(dir, basename(relPath).replace(/\.ts$/, '') + '-' + Math.random().toString(36).slice(2) + '.cjs');
  await build({ entryPoints: [join(root, relPath)], outfile: out, bundle: true, platform: 'node', format: 'cjs', target: 'node20', logLevel: 'warning' });
  return require(out);
}

export const projectRoot = root;

/** Median and percentiles of a sample of timings. */
export function stats(xs) {
  const s = [...xs].sort((a, b) => a - b);
  const q = (p) => s[Math.min(s.length - 1, Math.floor(p * s.length))];
  return { min: s[0], p50: q(0.5), p95: q(0.95), max: s[s.length - 1] };
}

export function printTable(title, header, rows) {
  const widths = header.map((h, i) => Math.max(h.length, ...rows.map((r) => String(r[i]).length)));
  console.log(`\n${title}`);
  console.log(header.map((h, i) => h.padEnd(widths[i])).join('  '));
  console.log(widths.map((w) => '-'.repeat(w)).join('  '));
  for (const r of rows) console.log(r.map((c, i) => String(c).padStart(widths[i])).join('  '));
}
