// Runs every benchmark in test/bench/ (files named *.bench.mjs), one node process each, and
// prints their tables. A benchmark that needs something absent (python3, chromium) says so and
// is skipped; it never fails the run unless it crashes.
import { readdirSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { join, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';

const dir = join(dirname(fileURLToPath(import.meta.url)), '..', 'test', 'bench');
const only = process.argv.slice(2);
const files = readdirSync(dir).filter((f) => f.endsWith('.bench.mjs') && (only.length === 0 || only.some((o) => f.includes(o)))).sort();
let failed = 0;
for (const f of files) {
  console.log(`\n=== ${f}`);
  const r = spawnSync(process.execPath, [join(dir, f)], { stdio: 'inherit' });
  if (r.status !== 0) {
    failed++;
    console.log(`!!! ${f} exited with ${r.status}`);
  }
}
process.exitCode = failed ? 1 : 0;
