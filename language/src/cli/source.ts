import type { CliIO } from './types';

/** Reads a model file, or prints one clear line and returns undefined. */
export function readSource(file: string, io: CliIO, command: string): string | undefined {
  try {
    return io.readFile(file);
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    const why = code === 'ENOENT' ? 'no such file' : code === 'EISDIR' ? 'is a directory' : code === 'EACCES' ? 'permission denied' : (err as Error).message;
    io.err(`loopwright ${command}: cannot read ${file}: ${why}`);
    return undefined;
  }
}
