// The folder the workbench opens: copies of the samples, plus the files that the steps need.
import { copyFileSync, existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, relative } from 'node:path';

export interface TestWorkspace {
  dir: string;
  /** boom.loop: the samples' copy, or the language reference's example when there is none yet. */
  boom: string;
  boomFromSamples: boolean;
  /** A copy of boom.loop with one unit error: the plant output declared in metres. */
  unitError: string;
  /** An empty .loop file for typing. */
  scratch: string;
  copied: string[];
}

function loopFiles(dir: string): string[] {
  if (!existsSync(dir)) return [];
  const out: string[] = [];
  for (const name of readdirSync(dir)) {
    const p = join(dir, name);
    if (statSync(p).isDirectory()) out.push(...loopFiles(p));
    else if (name.endsWith('.loop')) out.push(p);
  }
  return out;
}

/** Changes the unit of the first output declared in rad to m; undefined if there is none. */
export function withUnitError(text: string): string | undefined {
  const re = /(output\s+[\p{L}_][\p{L}\p{N}_]*\s*)\[rad\]/u;
  return re.test(text) ? text.replace(re, '$1[m]') : undefined;
}

export function makeWorkspace(root: string, fixtures: string): TestWorkspace {
  const dir = mkdtempSync(join(tmpdir(), 'loopwright-ws-'));
  const samples = join(root, 'samples');
  const copied: string[] = [];
  for (const f of loopFiles(samples)) {
    const to = join(dir, relative(samples, f));
    mkdirSync(dirname(to), { recursive: true });
    copyFileSync(f, to);
    copied.push(relative(samples, f));
  }
  const boom = join(dir, 'boom.loop');
  const boomFromSamples = existsSync(boom);
  if (!boomFromSamples) copyFileSync(join(fixtures, 'boom.loop'), boom);

  const broken = withUnitError(readFileSync(boom, 'utf8')) ?? withUnitError(readFileSync(join(fixtures, 'boom.loop'), 'utf8'));
  if (!broken) throw new Error('no output declared in [rad] to turn into a unit error');
  const unitError = join(dir, 'boom-unit-error.loop');
  writeFileSync(unitError, broken);
  const scratch = join(dir, 'scratch.loop');
  writeFileSync(scratch, '');
  return { dir, boom, boomFromSamples, unitError, scratch, copied };
}
