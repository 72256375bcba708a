// Bundles the long fuzz run and executes it (see test/fuzz/long-run.ts).
import { build } from 'esbuild';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';
import { spawnSync } from 'node:child_process';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const out = join(mkdtempSync(join(tmpdir(), 'loopwright-fuzz-')), 'fuzz.cjs');
await build({ entryPoints: [join(root, 'test/fuzz/long-run.ts')], outfile: out, bundle: true, platform: 'node', format: 'cjs', target: 'node20', logLevel: 'warning', define: { __dirname: JSON.stringify(join(root, 'test/fuzz')) } });
const r = spawnSync(process.execPath, [out], { stdio: 'inherit', env: process.env });
process.exitCode = r.status ?? 1;
