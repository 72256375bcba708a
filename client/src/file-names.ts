// File names and bytes of exports. Pure: no vscode import.

export function textBytes(text: string): Uint8Array {
  return new TextEncoder().encode(text);
}

/** Bytes of a `data:image/png;base64,...` URL or of bare base64 text; undefined if neither. */
export function pngBytes(data: string): Uint8Array | undefined {
  const m = /^data:image\/png;base64,(.*)$/s.exec(data);
  const b64 = m ? m[1] : data;
  if (!/^[A-Za-z0-9+/=\s]+$/.test(b64)) return undefined;
  const bytes = Buffer.from(b64, 'base64');
  const signature = [0x89, 0x50, 0x4e, 0x47];
  return signature.every((v, i) => bytes[i] === v) ? new Uint8Array(bytes) : undefined;
}

/** A file-name-safe stem from a loop name: `Upright` → `Upright`, `θ loop` → `θ_loop`. */
export function fileStem(name: string): string {
  return name.replace(/[^\p{L}\p{N}_.-]+/gu, '_').replace(/^_+|_+$/g, '') || 'loop';
}
