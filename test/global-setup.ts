// Builds dist/ once before any test file runs, so suites that need the bundles (server over
// stdio, webview page, .vsix) do not each rebuild it, possibly at the same moment.
import { execFileSync } from 'node:child_process';
import { join } from 'node:path';

export default function setup(): void {
  const root = join(__dirname, '..');
  execFileSync(process.execPath, [join(root, 'scripts', 'build.mjs')], { cwd: root, stdio: 'inherit' });
  process.env.LOOPWRIGHT_DIST_BUILT = '1';
}
