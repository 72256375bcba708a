// Builds the bundles and packages the extension, as `npm run package` does. Shared by the
// packaging test and the editor end-to-end test.
import { execFileSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

export const ROOT = resolve(fileURLToPath(new URL('.', import.meta.url)), '..', '..');
export const VSIX = join(ROOT, 'loopwright.vsix');

export function packageVsix(): string {
  if (!existsSync(join(ROOT, 'README.md'))) {
    throw new Error('README.md is missing at the top of the repository: vsce needs it to package the extension.');
  }
  if (process.env.LOOPWRIGHT_DIST_BUILT !== '1') execFileSync(process.execPath, [join(ROOT, 'scripts', 'build.mjs')], { cwd: ROOT, stdio: 'pipe' });
  try {
    execFileSync('npm', ['run', '--silent', 'package'], { cwd: ROOT, stdio: 'pipe', env: { ...process.env, CI: 'true' } });
  } catch (error) {
    const e = error as { stdout?: Buffer; stderr?: Buffer; message: string };
    throw new Error(`npm run package failed:\n${e.stdout?.toString() ?? ''}${e.stderr?.toString() ?? e.message}`);
  }
  if (!existsSync(VSIX)) throw new Error(`npm run package did not write ${VSIX}`);
  return VSIX;
}
