/**
 * Getting finals out: download file names, the download log, single files by short-lived presigned
 * URL, and ZIPs streamed from storage through the app one object after another (never a temp file,
 * never a whole archive in memory).
 */
import http from 'node:http';
import { createRequire } from 'node:module';
import { Transform, type Readable } from 'node:stream';
import zlib from 'node:zlib';
import archiver from 'archiver';
import { db } from './db';
import { getObjectStream, presignGet, contentDisposition } from './storage';
import type { DownloadLogEntry, FinalKind } from '../../components/finals/types';

/** Single-file links live five minutes: long enough to start a download, short enough not to be shared. */
export const DOWNLOAD_URL_SECONDS = 300;

// ---------------------------------------------------------------------------------------------
// File names

/**
 * One part of a download name: letters and digits of any script kept, everything else (quotes,
 * slashes, line breaks, dots, spaces) becomes a hyphen. The header gets an ASCII fallback and the
 * UTF-8 form from contentDisposition(); inside a ZIP the name is stored as UTF-8.
 */
export function slugPart(text: string, max = 40): string {
  const dashed = String(text ?? '')
    .normalize('NFC')
    .replace(/[^\p{L}\p{N}]+/gu, '-')
    .replace(/^-+|-+$/g, '');
  const cut = Array.from(dashed).slice(0, max).join('').replace(/-+$/, '');
  return cut || 'photos';
}

/** "Mira-Calloway_Spring-headshots": who and which shoot, for every file of one delivery. */
export function downloadBase(clientName: string, shootTitle: string): string {
  return `${slugPart(clientName)}_${slugPart(shootTitle)}`;
}

const KIND_SUFFIX: Record<FinalKind, string> = {
  full: '',
  crop_4x5: '_4x5',
  crop_1x1: '_1x1',
  crop_9x16: '_9x16',
  print_8x10: '_8x10-print',
};

/** "Mira-Calloway_Spring-headshots_07.jpg", "…_07_4x5.jpg": numbers padded so files sort in order. */
export function finalFileName(base: string, number: number, digits: number, kind: FinalKind): string {
  return `${base}_${String(number).padStart(Math.max(2, digits), '0')}${KIND_SUFFIX[kind]}.jpg`;
}

export const zipFileName = (base: string, set: 'finals' | 'crops') => `${base}_${set === 'finals' ? 'finals' : 'crops'}.zip`;

// ---------------------------------------------------------------------------------------------
// The log

export type DownloadWhat = 'final' | 'crop' | 'finals_zip' | 'crops_zip' | 'original';
export type DownloadActor = { kind: 'client'; id: string } | { kind: 'member'; id: string };

export interface DownloadRecord {
  studioId: string;
  shootId: string;
  what: DownloadWhat;
  finalId?: string | null;
  frameId?: string | null;
  kind?: FinalKind | null;
  actor: DownloadActor;
  ip: string | null;
  userAgent: string | null;
}

/** Writes one row of the download log: who, what, when, from where. */
export async function recordDownload(r: DownloadRecord): Promise<void> {
  await db()('downloads').insert({
    studio_id: r.studioId,
    shoot_id: r.shootId,
    final_id: r.finalId ?? null,
    frame_id: r.frameId ?? null,
    kind: r.kind ?? null,
    what: r.what,
    actor_kind: r.actor.kind,
    actor_id: r.actor.id,
    ip: r.ip ? r.ip.slice(0, 64) : null,
    user_agent: r.userAgent ? r.userAgent.slice(0, 400) : null,
  });
}

/** Who is asking, for the log: the client of the session or the signed-in member. */
export function requester(ctx: { request: Request; clientAddress?: string }, actor: DownloadActor) {
  let ip: string | null = null;
  try {
    ip = ctx.clientAddress ?? null;
  } catch {
    ip = null;
  }
  return { actor, ip, userAgent: ctx.request.headers.get('user-agent') };
}

const WHAT_LABEL: Record<DownloadWhat, string> = {
  final: 'Final',
  crop: 'Crop',
  finals_zip: 'All finals (ZIP)',
  crops_zip: 'All crops (ZIP)',
  original: 'Original',
};
const KIND_WORD: Record<string, string> = { crop_4x5: '4:5', crop_1x1: '1:1', crop_9x16: '9:16', print_8x10: '8×10 print' };

/** The shoot's download log, newest first, in words for the owner. */
export async function downloadLog(shootId: string, studioId: string, limit = 200): Promise<DownloadLogEntry[]> {
  const rows = await db()('downloads as d')
    .leftJoin('clients as c', (j) => j.on('c.id', 'd.actor_id').andOnVal('d.actor_kind', 'client'))
    .leftJoin('users as u', (j) => j.on('u.id', 'd.actor_id').andOnVal('d.actor_kind', 'member'))
    .leftJoin('finals as fi', 'fi.id', 'd.final_id')
    .leftJoin('frames as fr', (j) => j.on('fr.id', db().raw('coalesce(d.frame_id, fi.frame_id, fi.pending_frame_id)')))
    .where({ 'd.shoot_id': shootId, 'd.studio_id': studioId })
    .orderBy('d.created_at', 'desc')
    .limit(limit)
    .select('d.id', 'd.created_at', 'd.what', 'd.kind', 'd.actor_kind', 'd.ip', 'd.user_agent', 'c.name as client_name', 'u.name as user_name', 'fr.original_name');
  return rows.map((r) => {
    const of = r.original_name ? ` of ${r.original_name}` : '';
    const label = WHAT_LABEL[r.what as DownloadWhat];
    const what = r.what === 'crop' ? `${KIND_WORD[r.kind] ?? 'Crop'} crop${of}` : r.what === 'final' || r.what === 'original' ? `${label}${of}` : label;
    return {
      id: r.id,
      at: new Date(r.created_at).toISOString(),
      who: (r.actor_kind === 'client' ? r.client_name : r.user_name) ?? (r.actor_kind === 'client' ? 'The client' : 'A former member'),
      whoKind: r.actor_kind,
      what,
      ip: r.ip,
      userAgent: r.user_agent,
    };
  });
}

// ---------------------------------------------------------------------------------------------
// Delivery

/** A redirect to the object itself, signed for five minutes, saved under the given name. */
export async function redirectToDownload(key: string, fileName: string, contentType = 'image/jpeg', opts: { inline?: boolean } = {}): Promise<Response> {
  const url = await presignGet(key, { expiresIn: DOWNLOAD_URL_SECONDS, downloadName: fileName, contentType, inline: opts.inline });
  return new Response(null, { status: 302, headers: { Location: url, 'Cache-Control': 'no-store' } });
}

export interface ZipEntry {
  name: string;
  key: string;
  /** The stored object's size in bytes, as recorded when it was written. */
  size: number;
  date?: Date;
}

/** Below this every offset fits the classic ZIP fields; above it the archive needs ZIP64 records. */
const ZIP32_LIMIT = 0xffffffff;

/**
 * The exact length of the stored (uncompressed) ZIP that `zipStream` writes, so the browser can show
 * how far a download has come. Per entry: a 30-byte local header with the name, the data, a 16-byte
 * data descriptor (sizes follow the data, which streams in), and a 46-byte central directory record
 * with the name again; then the 22-byte end record (PKWARE APPNOTE 6.3, sections 4.3.7, 4.3.9,
 * 4.3.12 and 4.3.16). Archives that would need ZIP64 records get no length (null).
 */
export function zipLength(entries: ZipEntry[]): number | null {
  let total = 22;
  for (const e of entries) {
    if (!Number.isSafeInteger(e.size) || e.size < 0) return null;
    const name = Buffer.byteLength(e.name, 'utf8');
    total += 30 + name + e.size + 16 + 46 + name;
  }
  return total < ZIP32_LIMIT && entries.length < 0xffff ? total : null;
}

/** Resolves when the archive has written the entry just appended; rejects if it fails or is torn down. */
function entryWritten(archive: archiver.Archiver): Promise<void> {
  return new Promise((resolve, reject) => {
    const done = (err?: Error) => {
      archive.off('entry', onEntry);
      archive.off('error', onError);
      archive.off('close', onClose);
      if (err) reject(err);
      else resolve();
    };
    const onEntry = () => done();
    const onError = (err: Error) => done(err);
    const onClose = () => done(new Error('the archive was closed before the entry was written'));
    archive.on('entry', onEntry);
    archive.on('error', onError);
    archive.on('close', onClose);
  });
}

// ---------------------------------------------------------------------------------------------
// Backpressure for streamed downloads
//
// Astro's Node adapter copies a response body to the socket with `res.write()` and ignores its
// return value, so a client slower than the object store would make the app buffer the whole
// archive in memory (measured: 2 GB for a 2 GB ZIP read at a few MB/s). Chunks of our streams are
// registered here; when the adapter writes one and the response's buffer is over SLACK, the stream
// waits for the socket's 'drain' before producing more. Other responses are not touched.

const SLACK_BYTES = 4 * 1024 * 1024;
const MIN_CHUNK = 256 * 1024;
const pacers = new WeakMap<object, Pacer>();

class Pacer {
  private held: Promise<void> | null = null;

  /** Resolves at once, or when the response that fell behind has drained (or gone). */
  ready(): Promise<void> {
    return this.held ?? Promise.resolve();
  }

  hold(res: http.ServerResponse) {
    if (this.held) return;
    this.held = new Promise<void>((resolve) => {
      const done = () => {
        res.off('drain', done);
        res.off('close', done);
        this.held = null;
        resolve();
      };
      res.on('drain', done);
      res.on('close', done);
    });
  }

  /** Marks a chunk as ours, so a slow socket can hold this stream back. */
  tag(chunk: Uint8Array): Uint8Array {
    pacers.set(chunk, this);
    return chunk;
  }
}

const PATCHED = Symbol.for('fillcard.pacedWrites');
function watchServerWrites() {
  const proto = http.ServerResponse.prototype as unknown as Record<symbol | string, unknown>;
  if (proto[PATCHED]) return;
  const write = proto.write as (...args: unknown[]) => boolean;
  proto.write = function pacedWrite(this: http.ServerResponse, chunk: unknown, ...rest: unknown[]) {
    const ok = write.call(this, chunk, ...rest);
    if (!ok && chunk !== null && typeof chunk === 'object' && this.writableLength > SLACK_BYTES) pacers.get(chunk)?.hold(this);
    return ok;
  };
  proto[PATCHED] = true;
}
watchServerWrites();

/**
 * A Node stream as a web stream that produces a chunk only when asked and only while the socket it
 * is written to keeps up. Each pull takes at least 256 KB (everything the source has buffered, up
 * to its high-water mark), so a 2 GB download is a few thousand writes, not a hundred thousand.
 */
function pacedWebStream(source: Readable, onCancel: () => void): ReadableStream<Uint8Array> {
  const pacer = new Pacer();
  let ended = false;
  let failed: Error | null = null;
  let wake: (() => void) | null = null;
  const poke = () => {
    const w = wake;
    wake = null;
    w?.();
  };
  source.on('readable', poke);
  source.on('end', () => {
    ended = true;
    poke();
  });
  source.on('error', (err) => {
    failed = err;
    poke();
  });
  source.on('close', () => {
    if (!ended && !failed) failed = new Error('the archive closed before it was finished');
    poke();
  });
  return new ReadableStream<Uint8Array>(
    {
      async pull(controller) {
        await pacer.ready();
        for (;;) {
          // Whole buffered runs of at least MIN_CHUNK: small writes cost more CPU than the bytes.
          const chunk = (source.readableLength >= MIN_CHUNK ? source.read() : source.read(MIN_CHUNK)) as Buffer | null;
          if (chunk) {
            controller.enqueue(pacer.tag(new Uint8Array(chunk.buffer, chunk.byteOffset, chunk.byteLength)));
            return;
          }
          if (failed) return controller.error(failed);
          if (ended) return controller.close();
          await new Promise<void>((resolve) => {
            wake = resolve;
          });
        }
      },
      cancel() {
        onCancel();
      },
    },
    { highWaterMark: 0 },
  );
}

/**
 * The archive checksums every byte it stores with CRC-32, in the `crc-32` package's JavaScript: about
 * half the app's CPU time for a large ZIP. Node's zlib has the same checksum built in (Node 20.15+)
 * at about twice the speed, so the package's `buf` is pointed at it, once its answer for the
 * standard check input "123456789" is the published 0xCBF43926 (CRC-32/ISO-HDLC in the CRC
 * catalogue). Same numbers either way; signed like the package's own.
 */
function useBuiltInCrc32() {
  const nativeCrc = (zlib as unknown as { crc32?: (data: Uint8Array, value?: number) => number }).crc32;
  if (typeof nativeCrc !== 'function') return;
  try {
    const crc = createRequire(import.meta.url)('crc-32') as { buf: (data: Uint8Array, seed?: unknown) => number; __native?: boolean };
    if (crc.__native) return;
    const fast = (data: Uint8Array, seed?: unknown) => nativeCrc(data, typeof seed === 'number' ? seed >>> 0 : 0) | 0;
    const check = Buffer.from('123456789');
    if (fast(check) >>> 0 !== 0xcbf43926 || fast(check) !== crc.buf(check) || fast(check, 12345) !== crc.buf(check, 12345)) return;
    crc.buf = fast;
    crc.__native = true;
  } catch (err) {
    console.error('[fillcard] keeping the JavaScript CRC-32:', err);
  }
}
useBuiltInCrc32();

/**
 * A ZIP of the given objects as a web stream. JPEGs do not compress, so entries are stored, and
 * each object is opened only when the one before it is written: one storage read at a time, and
 * memory bounded by the stream buffers whatever the archive's size or the client's speed.
 * Aborting (the browser went away) stops the reads.
 */
export function zipStream(entries: ZipEntry[], signal?: AbortSignal): ReadableStream<Uint8Array> {
  const archive = archiver('zip', { store: true, zlib: { level: 0 } });
  let current: Readable | null = null;
  let stopped = false;
  const stop = () => {
    stopped = true;
    current?.destroy();
  };
  archive.on('close', stop);
  archive.on('warning', (err) => console.error('[fillcard] zip warning:', err));
  signal?.addEventListener('abort', () => {
    stop();
    archive.destroy();
  });

  void (async () => {
    for (const e of entries) {
      if (stopped) return;
      const { stream } = await getObjectStream(e.key);
      if (stopped) {
        stream.destroy();
        return;
      }
      current = stream;
      // A read that fails half-way must fail the download, not end it as a short, valid-looking ZIP.
      stream.once('error', (err) => archive.destroy(err));
      const sized = checkedSize(stream, e);
      sized.once('error', (err) => archive.destroy(err));
      const written = entryWritten(archive);
      archive.append(sized, { name: e.name, date: e.date ?? new Date(), store: true });
      await written;
      current = null;
    }
    if (!stopped) await archive.finalize();
  })().catch((err) => {
    if (!stopped) console.error('[fillcard] zip stream failed:', err);
    stop();
    archive.destroy(err instanceof Error ? err : new Error(String(err)));
  });

  return pacedWebStream(archive, () => {
    stop();
    archive.destroy();
  });
}

/** Passes an object's bytes through, failing at the end when they are not the recorded size, which the announced length counts on. */
function checkedSize(source: Readable, entry: ZipEntry): Transform {
  let read = 0;
  return source.pipe(new Transform({
    transform(chunk: Buffer, _enc, done) {
      read += chunk.length;
      done(null, chunk);
    },
    flush(done) {
      done(read === entry.size ? null : new Error(`${entry.key} is ${read} bytes, not the ${entry.size} recorded`));
    },
  }));
}

/** The response for a streamed ZIP download. */
export function zipResponse(entries: ZipEntry[], fileName: string, signal?: AbortSignal): Response {
  const length = zipLength(entries);
  return new Response(zipStream(entries, signal), {
    status: 200,
    headers: {
      ...(length === null ? {} : { 'Content-Length': String(length) }),
      'Content-Type': 'application/zip',
      'Content-Disposition': contentDisposition(fileName),
      'Cache-Control': 'no-store',
      'X-Content-Type-Options': 'nosniff',
    },
  });
}
