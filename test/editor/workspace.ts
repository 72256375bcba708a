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
  /** A copy of boom.loop whose proportional gain (3 N·m/rad) is below the boom's gravity stiffness: LW604. */
  weakGain: string;
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
  const weakText = readFileSync(boom, 'utf8').replace(/param kp\s*=\s*[0-9.]+ \[N\*m\/rad\]/, 'param kp = 3 [N*m/rad]');
  if (!weakText.includes('param kp = 3 [N*m/rad]')) throw new Error('no param kp in [N*m/rad] to weaken');
  const weakGain = join(dir, 'boom-weak-gain.loop');
  writeFileSync(weakGain, weakText);
  const scratch = join(dir, 'scratch.loop');
  writeFileSync(scratch, '');
  return { dir, boom, boomFromSamples, unitError, weakGain, scratch, copied };
}

/** Tokens of a .loop text whose colours the grammar step compares. */
export interface GrammarProbes {
  keyword: string;
  blockName: string;
  number: string;
  unit: string;
  /** The start of the first comment after the `#` (the editor splits long tokens). */
  comment: string;
}

export function grammarProbes(text: string): GrammarProbes {
  const block = /^\s*(plant|controller|loop)\s+([\p{L}_][\p{L}\p{N}_]*)/mu.exec(text);
  const quantity = /(?<![\p{L}\p{N}_.])(\d+\.\d+|\d+)\s*\[\s*([\p{L}]+)\s*\]/u.exec(text);
  const comment = /#\s*([^\n]{1,14})/.exec(text);
  if (!block || !quantity || !comment) throw new Error('the text needs a block header, a quantity with a simple unit and a comment');
  return { keyword: block[1], blockName: block[2], number: quantity[1], unit: quantity[2], comment: `# ${comment[1].trim()}` };
}
