// `loopwright` executable: binds the in-process CLI to the real process.

import { readFileSync, writeFileSync } from 'node:fs';
import { runCli } from './run';

const io = {
  out: (s: string) => process.stdout.write(s.endsWith('\n') ? s : s + '\n'),
  err: (s: string) => process.stderr.write(s.endsWith('\n') ? s : s + '\n'),
  readFile: (p: string) => readFileSync(p, 'utf8'),
  writeFile: (p: string, d: string) => writeFileSync(p, d),
  isTTY: !!process.stdout.isTTY,
  cwd: process.cwd(),
};

runCli(process.argv.slice(2), io).then(
  (code) => {
    process.exitCode = code;
  },
  (err) => {
    process.stderr.write(`loopwright: ${(err as Error).message}\n`);
    process.exitCode = 70;
  },
);
