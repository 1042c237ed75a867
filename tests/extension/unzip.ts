// A small reader for .vsix files (zip archives): enough to unpack the packaged extension for the
// editor-host tests without another dependency. Handles stored and deflated entries (APPNOTE.TXT,
// the zip file format specification: end of central directory, central directory, local headers).
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { dirname, join, normalize } from 'node:path';
import { inflateRawSync } from 'node:zlib';

export interface ZipEntry {
  name: string;
  data: Buffer;
}

export function readZip(file: string): ZipEntry[] {
  const buf = readFileSync(file);
  // End of central directory record: signature 0x06054b50, at most 64 KiB of comment after it.
  let eocd = -1;
  for (let i = buf.length - 22; i >= Math.max(0, buf.length - 22 - 0xffff); i--) {
    if (buf.readUInt32LE(i) === 0x06054b50) {
      eocd = i;
      break;
    }
  }
  if (eocd < 0) throw new Error(`${file} is not a zip archive`);
  const count = buf.readUInt16LE(eocd + 10);
  let p = buf.readUInt32LE(eocd + 16);
  const entries: ZipEntry[] = [];
  for (let k = 0; k < count; k++) {
    if (buf.readUInt32LE(p) !== 0x02014b50) throw new Error('bad central directory entry');
    const method = buf.readUInt16LE(p + 10);
    const compressed = buf.readUInt32LE(p + 20);
    const nameLen = buf.readUInt16LE(p + 28);
    const extraLen = buf.readUInt16LE(p + 30);
    const commentLen = buf.readUInt16LE(p + 32);
    const local = buf.readUInt32LE(p + 42);
    const name = buf.toString('utf8', p + 46, p + 46 + nameLen);
    p += 46 + nameLen + extraLen + commentLen;
    if (name.endsWith('/')) continue;
    const start = local + 30 + buf.readUInt16LE(local + 26) + buf.readUInt16LE(local + 28);
    const raw = buf.subarray(start, start + compressed);
    entries.push({ name, data: method === 0 ? Buffer.from(raw) : inflateRawSync(raw) });
  }
  return entries;
}

/** Writes the entries under `prefix` (e.g. "extension/") into `dest`, refusing paths that climb out. */
export function extract(entries: ZipEntry[], prefix: string, dest: string): number {
  let n = 0;
  for (const e of entries) {
    if (!e.name.startsWith(prefix)) continue;
    const rel = normalize(e.name.slice(prefix.length));
    if (rel.startsWith('..')) throw new Error(`unsafe path in archive: ${e.name}`);
    const out = join(dest, rel);
    mkdirSync(dirname(out), { recursive: true });
    writeFileSync(out, e.data);
    n++;
  }
  return n;
}
