/**
 * Object storage over the S3 API. Keys are always made here on the server; a client never names one.
 * Originals and finals stay private: browsers get short-lived presigned URLs only where a route allows.
 */
import {
  S3Client, HeadObjectCommand, GetObjectCommand, PutObjectCommand, DeleteObjectsCommand, DeleteObjectCommand,
  ListObjectsV2Command,
} from '@aws-sdk/client-s3';
import { getSignedUrl } from '@aws-sdk/s3-request-presigner';
import { randomUUID } from 'node:crypto';
import type { Readable } from 'node:stream';
import { config } from './config';

let client: S3Client | undefined;
let publicClient: S3Client | undefined;

function makeClient(endpoint: string) {
  const c = config();
  return new S3Client({
    endpoint,
    region: c.S3_REGION,
    forcePathStyle: true,
    credentials: { accessKeyId: c.S3_ACCESS_KEY_ID, secretAccessKey: c.S3_SECRET_ACCESS_KEY },
    // Without these, streamed puts to non-AWS stores can store chunk framing, and presigned URLs carry checksums.
    requestChecksumCalculation: 'WHEN_REQUIRED',
    responseChecksumValidation: 'WHEN_REQUIRED',
  });
}

export function s3(): S3Client {
  client ??= makeClient(config().S3_ENDPOINT);
  return client;
}

/** Signs URLs with the address browsers use, which can differ from the server's own. */
function signer(): S3Client {
  const pub = config().S3_PUBLIC_ENDPOINT;
  if (!pub) return s3();
  publicClient ??= makeClient(pub);
  return publicClient;
}

const bucket = () => config().S3_BUCKET;

export const keys = {
  shootPrefix: (studioId: string, shootId: string) => `studios/${studioId}/shoots/${shootId}/`,
  original: (studioId: string, shootId: string, ext: string) => `studios/${studioId}/shoots/${shootId}/originals/${randomUUID()}.${ext}`,
  final: (studioId: string, shootId: string, ext: string) => `studios/${studioId}/shoots/${shootId}/finals/${randomUUID()}.${ext}`,
  /** Content-addressed: the same bytes always get the same key, so they can be cached for a year. */
  variant: (studioId: string, shootId: string, hash: string, ext: string) => `studios/${studioId}/shoots/${shootId}/variants/${hash}.${ext}`,
  finalVariant: (studioId: string, shootId: string, hash: string, ext: string) => `studios/${studioId}/shoots/${shootId}/final-variants/${hash}.${ext}`,
  studioAsset: (studioId: string, name: string) => `studios/${studioId}/assets/${randomUUID()}-${name}`,
};

export async function headObject(key: string): Promise<{ bytes: number; contentType?: string } | null> {
  try {
    const r = await s3().send(new HeadObjectCommand({ Bucket: bucket(), Key: key }));
    return { bytes: Number(r.ContentLength ?? 0), contentType: r.ContentType };
  } catch (err) {
    if ((err as { $metadata?: { httpStatusCode?: number } }).$metadata?.httpStatusCode === 404) return null;
    if ((err as Error).name === 'NotFound' || (err as Error).name === 'NoSuchKey') return null;
    throw err;
  }
}

export async function getObjectBuffer(key: string, maxBytes = 400 * 1024 * 1024): Promise<Buffer> {
  const r = await s3().send(new GetObjectCommand({ Bucket: bucket(), Key: key }));
  if (Number(r.ContentLength ?? 0) > maxBytes) throw new Error(`object ${key} is larger than ${maxBytes} bytes`);
  return Buffer.from(await r.Body!.transformToByteArray());
}

export async function getObjectStream(key: string): Promise<{ stream: Readable; bytes: number }> {
  const r = await s3().send(new GetObjectCommand({ Bucket: bucket(), Key: key }));
  return { stream: r.Body as Readable, bytes: Number(r.ContentLength ?? 0) };
}

export async function putObject(key: string, body: Buffer, contentType: string, cacheControl?: string) {
  await s3().send(new PutObjectCommand({ Bucket: bucket(), Key: key, Body: body, ContentType: contentType, CacheControl: cacheControl }));
}

export async function deleteObject(key: string) {
  await s3().send(new DeleteObjectCommand({ Bucket: bucket(), Key: key }));
}

/** Deletes everything under a prefix (a whole shoot, say), 1000 keys at a time. */
export async function deletePrefix(prefix: string) {
  let token: string | undefined;
  do {
    const page = await s3().send(new ListObjectsV2Command({ Bucket: bucket(), Prefix: prefix, ContinuationToken: token }));
    const objects = (page.Contents ?? []).map((o) => ({ Key: o.Key! }));
    if (objects.length) await s3().send(new DeleteObjectsCommand({ Bucket: bucket(), Delete: { Objects: objects, Quiet: true } }));
    token = page.IsTruncated ? page.NextContinuationToken : undefined;
  } while (token);
}

export async function listKeys(prefix: string): Promise<string[]> {
  const out: string[] = [];
  let token: string | undefined;
  do {
    const page = await s3().send(new ListObjectsV2Command({ Bucket: bucket(), Prefix: prefix, ContinuationToken: token }));
    out.push(...(page.Contents ?? []).map((o) => o.Key!));
    token = page.IsTruncated ? page.NextContinuationToken : undefined;
  } while (token);
  return out;
}

/** A presigned GET, optionally with a download file name. */
export async function presignGet(key: string, opts: { expiresIn?: number; downloadName?: string; inline?: boolean; contentType?: string; signingDate?: Date } = {}) {
  return getSignedUrl(
    signer(),
    new GetObjectCommand({
      Bucket: bucket(),
      Key: key,
      ResponseContentDisposition: opts.downloadName ? contentDisposition(opts.downloadName, opts.inline ? 'inline' : 'attachment') : undefined,
      ResponseContentType: opts.contentType,
    }),
    { expiresIn: opts.expiresIn ?? 300, signingDate: opts.signingDate },
  );
}

/**
 * A Content-Disposition value with an ASCII fallback and the RFC 6266 / RFC 5987 UTF-8 form, so no
 * user-supplied character reaches the header unescaped.
 */
export function contentDisposition(fileName: string, kind: 'attachment' | 'inline' = 'attachment') {
  const ascii = fileName.normalize('NFKD').replace(/[^\x20-\x7e]/g, '').replace(/["\\/%;\r\n]/g, '_').trim() || 'download';
  return `${kind}; filename="${ascii}"; filename*=UTF-8''${encodeURIComponent(fileName).replace(/['()*]/g, (c) => '%' + c.charCodeAt(0).toString(16).toUpperCase())}`;
}
