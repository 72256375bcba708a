// Lists the entries of a zip archive (a .vsix) from its central directory. Enough for listing:
// no decompression, no zip64.
import { readFileSync } from 'node:fs';

export interface ZipEntry {
  name: string;
  size: number;
}

const END_OF_CENTRAL_DIRECTORY = 0x06054b50;
const CENTRAL_FILE_HEADER = 0x02014b50;

export function listZip(path: string): ZipEntry[] {
  const buf = readFileSync(path);
  // The end record is 22 bytes plus a comment of at most 65535 bytes, at the end of the file.
  let end = -1;
  for (let i = buf.length - 22; i >= Math.max(0, buf.length - 22 - 0xffff); i--) {
    if (buf.readUInt32LE(i) === END_OF_CENTRAL_DIRECTORY) {
      end = i;
      break;
    }
  }
  if (end < 0) throw new Error(`${path} is not a zip archive (no end of central directory)`);
  const count = buf.readUInt16LE(end + 10);
  let at = buf.readUInt32LE(end + 16);
  const entries: ZipEntry[] = [];
  for (let n = 0; n < count; n++) {
    if (buf.readUInt32LE(at) !== CENTRAL_FILE_HEADER) throw new Error(`${path}: bad central directory entry ${n}`);
    const size = buf.readUInt32LE(at + 24);
    const nameLength = buf.readUInt16LE(at + 28);
    const extraLength = buf.readUInt16LE(at + 30);
    const commentLength = buf.readUInt16LE(at + 32);
    entries.push({ name: buf.toString('utf8', at + 46, at + 46 + nameLength), size });
    at += 46 + nameLength + extraLength + commentLength;
  }
  return entries;
}
