// A CliIO for in-process CLI tests: files from a map (falling back to the disk for samples),
// written files kept in memory, stdout and stderr captured line by line.

import { readFileSync } from 'node:fs';
import { runCli } from '../../language/src/cli/run';
import type { CliIO } from '../../language/src/cli/types';

export interface FakeIO extends CliIO {
  stdout: string[];
  stderr: string[];
  written: Map<string, string>;
}

export function fakeIO(files: Record<string, string> = {}, isTTY = false): FakeIO {
  const io: FakeIO = {
    stdout: [],
    stderr: [],
    written: new Map(),
    out: (s) => void io.stdout.push(s),
    err: (s) => void io.stderr.push(s),
    readFile: (p) => {
      if (p in files) return files[p];
      if (p.startsWith('samples/')) return readFileSync(p, 'utf8');
      const e = new Error(`ENOENT: no such file or directory, open '${p}'`) as NodeJS.ErrnoException;
      e.code = 'ENOENT';
      throw e;
    },
    writeFile: (p, d) => {
      if (p.startsWith('/nonexistent/')) {
        const e = new Error(`ENOENT: no such file or directory, open '${p}'`) as NodeJS.ErrnoException;
        e.code = 'ENOENT';
        throw e;
      }
      io.written.set(p, d);
    },
    isTTY,
    cwd: '/work',
  };
  return io;
}

export async function cli(argv: string[], files: Record<string, string> = {}, isTTY = false): Promise<{ code: number; out: string; err: string; io: FakeIO }> {
  const io = fakeIO(files, isTTY);
  const code = await runCli(argv, io);
  return { code, out: io.stdout.join('\n'), err: io.stderr.join('\n'), io };
}
