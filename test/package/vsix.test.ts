import { beforeAll, describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { listZip, type ZipEntry } from './zip';
import { packageVsix, ROOT } from './package-vsix';

// What may ship: the bundles and the browser page, the language contributions, the icon, the
// readme, the licence and the manifest. vsce adds its own manifest and content-type list.
const ALLOWED = [
  'extension/dist/',
  'extension/syntaxes/',
  'extension/snippets/',
  'extension/images/icon.png',
  'extension/language-configuration.json',
  'extension/readme.md',
  'extension/license.txt',
  'extension/license',
  'extension/package.json',
  'extension.vsixmanifest',
  '[content_types].xml',
];

const KEY_FILES = [
  'extension/package.json',
  'extension/dist/extension.js',
  'extension/dist/server.js',
  'extension/dist/media/plot.js',
  'extension/syntaxes/loop.tmLanguage.json',
  'extension/snippets/loop.json',
  'extension/language-configuration.json',
  'extension/images/icon.png',
  'extension/readme.md',
];

describe('the packaged .vsix', () => {
  let entries: ZipEntry[] = [];
  let names: string[] = [];

  beforeAll(() => {
    entries = listZip(packageVsix());
    names = entries.map((e) => e.name.toLowerCase());
  }, 180_000);

  it('holds only allowed files', () => {
    const stray = names.filter((n) => !ALLOWED.some((p) => (p.endsWith('/') ? n.startsWith(p) : n === p)));
    expect(stray).toEqual([]);
  });

  it('holds no source maps, sources, tests, samples or node_modules', () => {
    const bad = names.filter((n) => /\.map$|\.ts$|node_modules\/|\/test\/|\/samples\//.test(n));
    expect(bad).toEqual([]);
  });

  it('holds the key files, none of them empty', () => {
    for (const f of KEY_FILES) {
      const e = entries.find((x) => x.name.toLowerCase() === f.toLowerCase());
      expect(e, `${f} is missing from the .vsix`).toBeDefined();
      expect(e!.size, `${f} is empty`).toBeGreaterThan(0);
    }
    expect(names.some((n) => n === 'extension/license.txt' || n === 'extension/license')).toBe(true);
  });

  it('ships every file that the manifest points to', () => {
    const pkg = JSON.parse(readFileSync(join(ROOT, 'package.json'), 'utf8'));
    const referenced: string[] = [
      pkg.main,
      pkg.icon,
      ...pkg.contributes.languages.map((l: { configuration: string }) => l.configuration),
      ...pkg.contributes.grammars.map((g: { path: string }) => g.path),
      ...pkg.contributes.snippets.map((s: { path: string }) => s.path),
    ];
    for (const ref of referenced) {
      const name = `extension/${ref.replace(/^\.\//, '')}`.toLowerCase();
      expect(names, `${ref} is referenced by package.json but not packaged`).toContain(name);
    }
  });
});
