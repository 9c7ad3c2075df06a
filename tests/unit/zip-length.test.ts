/**
 * The announced length of a streamed ZIP equals what the archiver writes, for the layout the
 * downloads use (stored entries streamed in, so each carries a data descriptor). The record sizes
 * come from PKWARE's APPNOTE 6.3; the archive is checked with Info-ZIP's `unzip -t`.
 */
import { describe, it, expect } from 'vitest';
import archiver from 'archiver';
import { PassThrough } from 'node:stream';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, writeFileSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { zipLength, type ZipEntry } from '../../src/lib/server/downloads';

async function archive(entries: ZipEntry[]): Promise<Buffer> {
  const zip = archiver('zip', { store: true, zlib: { level: 0 } });
  const chunks: Buffer[] = [];
  zip.on('data', (d: Buffer) => chunks.push(d));
  const ended = new Promise((resolve) => zip.on('end', resolve));
  for (const e of entries) {
    const body = new PassThrough();
    zip.append(body, { name: e.name, date: new Date(Date.UTC(2026, 3, 1)), store: true });
    body.end(Buffer.alloc(e.size, 0x5a));
  }
  await zip.finalize();
  await ended;
  return Buffer.concat(chunks);
}

describe('zipLength', () => {
  it('matches the bytes written, with accented names and an empty entry', async () => {
    const entries: ZipEntry[] = [
      { name: 'Ines-Calloway_Spring-headshots_01.jpg', key: 'a', size: 4096 },
      { name: 'Zoë-Åkerlund_Portraits_02.jpg', key: 'b', size: 123_457 },
      { name: 'empty.jpg', key: 'c', size: 0 },
    ];
    const bytes = await archive(entries);
    expect(zipLength(entries)).toBe(bytes.length);
    const dir = mkdtempSync(path.join(os.tmpdir(), 'fillcard-zip-'));
    try {
      writeFileSync(path.join(dir, 'a.zip'), bytes);
      expect(execFileSync('/usr/bin/unzip', ['-t', path.join(dir, 'a.zip')]).toString()).toContain('No errors detected');
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('is the 22-byte end record alone for no entries', async () => {
    expect(zipLength([])).toBe((await archive([])).length);
    expect(zipLength([])).toBe(22);
  });

  it('gives no length where ZIP64 records would be needed or a size is unknown', () => {
    expect(zipLength([{ name: 'big.jpg', key: 'k', size: 0xffffffff }])).toBeNull();
    expect(zipLength([{ name: 'odd.jpg', key: 'k', size: Number.NaN }])).toBeNull();
  });
});
