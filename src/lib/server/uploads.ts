/**
 * Direct-to-storage uploads. The browser's uploader asks us to sign each S3 request; we make every
 * object key here (never taking one from the browser) and only sign requests for keys under the
 * shoot's own prefix. When a file is finished the browser registers it, and we check the object
 * really is there with the size it claimed before a frame exists.
 */
import path from 'node:path';
import {
  PutObjectCommand, CreateMultipartUploadCommand, UploadPartCommand, ListPartsCommand,
  CompleteMultipartUploadCommand, AbortMultipartUploadCommand, DeleteObjectCommand,
  ListMultipartUploadsCommand,
} from '@aws-sdk/client-s3';
import { getSignedUrl } from '@aws-sdk/s3-request-presigner';
import { config } from './config';
import { db } from './db';
import { keys, headObject, deleteObject, s3 } from './storage';
import { ListObjectsV2Command } from '@aws-sdk/client-s3';
import { badRequest, conflict, HttpError } from './http';
import { enqueue, QUEUES } from './jobs';
import { IMAGE_LIMITS } from './images';
import type { z } from 'zod';
import type { signRequestSchema } from '../schemas/shoot';

export const UPLOAD_LIMITS = {
  maxBytes: IMAGE_LIMITS.maxBytes,
  maxFilesPerShoot: 2000,
  /** Files above this go up in parts, so a dropped connection loses one part, not the file. */
  multipartAboveBytes: 8 * 1024 * 1024,
  partBytes: 8 * 1024 * 1024,
  extensions: ['jpg', 'jpeg', 'png', 'tif', 'tiff', 'webp'],
  contentTypes: ['image/jpeg', 'image/png', 'image/tiff', 'image/webp'],
};

const EXT_TYPE: Record<string, string> = { jpg: 'image/jpeg', jpeg: 'image/jpeg', png: 'image/png', tif: 'image/tiff', tiff: 'image/tiff', webp: 'image/webp' };

export function extensionOf(fileName: string): string {
  return path.extname(fileName).slice(1).toLowerCase();
}

type SignRequest = z.infer<typeof signRequestSchema>;

/** Signs one S3 request for the uploader; returns the URL and the key the browser must use. */
export async function signUploadRequest(prefix: string, makeKey: (ext: string) => string, req: SignRequest, expiresIn = 900) {
  const bucket = config().S3_BUCKET;
  const startsNew = (req.method === 'PUT' && !req.uploadId) || (req.method === 'POST' && !req.uploadId);
  let key = req.key;
  let contentType = req.contentType;
  if (startsNew) {
    // The uploader knows the file; refusing here means a bad file never reaches storage at all.
    if (!req.fileName || req.size === undefined) throw badRequest('Tell us the file name and size before uploading.');
    const name = `“${cleanFileName(req.fileName)}”`;
    const ext = extensionOf(req.fileName);
    if (!UPLOAD_LIMITS.extensions.includes(ext)) {
      throw new HttpError(415, `${name} cannot be uploaded: Fillcard takes JPEG, PNG, TIFF and WebP files. Please export it as JPEG.`);
    }
    if (req.size === 0) throw new HttpError(422, `${name} is empty (0 bytes). Please export it again.`);
    if (req.size > UPLOAD_LIMITS.maxBytes) throw tooLarge(name, req.size);
    key = makeKey(ext === 'jpeg' ? 'jpg' : ext === 'tif' ? 'tiff' : ext);
    contentType = EXT_TYPE[ext];
  } else if (!key.startsWith(prefix) || key.includes('..')) {
    throw new HttpError(403, 'That upload does not belong to this shoot.');
  }

  const signer = s3();
  let command;
  if (req.method === 'PUT' && !req.uploadId) command = new PutObjectCommand({ Bucket: bucket, Key: key, ContentType: contentType });
  else if (req.method === 'POST' && !req.uploadId) command = new CreateMultipartUploadCommand({ Bucket: bucket, Key: key, ContentType: contentType });
  else if (req.method === 'PUT' && req.uploadId && req.partNumber) command = new UploadPartCommand({ Bucket: bucket, Key: key, UploadId: req.uploadId, PartNumber: req.partNumber });
  else if (req.method === 'GET' && req.uploadId) command = new ListPartsCommand({ Bucket: bucket, Key: key, UploadId: req.uploadId });
  else if (req.method === 'POST' && req.uploadId) command = new CompleteMultipartUploadCommand({ Bucket: bucket, Key: key, UploadId: req.uploadId });
  else if (req.method === 'DELETE' && req.uploadId) command = new AbortMultipartUploadCommand({ Bucket: bucket, Key: key, UploadId: req.uploadId });
  else if (req.method === 'DELETE') {
    // Removing a finished upload the user cancelled: only while no frame points at it.
    const used = await db()('frames').where({ object_key: key }).first('id') ?? await db()('finals').where({ object_key: key }).first('id');
    if (used) throw conflict('That file is already part of the shoot; delete the frame instead.');
    command = new DeleteObjectCommand({ Bucket: bucket, Key: key });
  } else throw badRequest('That upload request is not one we sign.');

  const url = await getSignedUrl(signer, command as never, { expiresIn });
  // The signed Content-Type must be the one sent: the browser's own guess for the file may differ.
  return { url, key, headers: startsNew && contentType ? { 'content-type': contentType } : undefined };
}

function tooLarge(name: string, bytes: number) {
  const mb = (n: number) => `${Math.round(n / 1048576)} MB`;
  return new HttpError(413, `${name} is ${mb(bytes)}; Fillcard takes files up to ${mb(UPLOAD_LIMITS.maxBytes)}. Please export it as a high-quality JPEG.`);
}

export function originalsPrefix(studioId: string, shootId: string) {
  return `${keys.shootPrefix(studioId, shootId)}originals/`;
}

function assertOwnOriginal(shoot: { id: string; studio_id: string }, key: string) {
  const prefix = originalsPrefix(shoot.studio_id, shoot.id);
  if (!key.startsWith(prefix) || !/^[0-9a-f-]{36}\.(jpg|png|tiff|webp)$/.test(key.slice(prefix.length))) {
    throw new HttpError(403, 'That upload does not belong to this shoot.');
  }
}

/**
 * Removes a finished upload that will not become a frame, so no unregistered original stays in
 * storage. Only this shoot's own originals, and never one a frame already uses.
 */
export async function discardUpload(shoot: { id: string; studio_id: string }, key: string) {
  try {
    assertOwnOriginal(shoot, key);
  } catch {
    return;
  }
  if (await db()('frames').where({ object_key: key }).first('id')) return;
  await deleteObject(key).catch((e) => console.error('[fillcard] could not remove a refused upload:', e));
}

/** Creates the frame for a finished upload, once; the same key registered twice gives the same frame. */
export async function registerFrame(shoot: { id: string; studio_id: string }, input: { key: string; name: string; size: number }) {
  assertOwnOriginal(shoot, input.key);
  const existing = await db()('frames').where({ object_key: input.key }).first('id', 'state');
  if (existing) return { id: existing.id as string, created: false };

  const name = cleanFileName(input.name);
  const refuse = async (err: HttpError) => {
    await deleteObject(input.key);
    return err;
  };
  const count = await db()('frames').where({ shoot_id: shoot.id }).count<{ n: string }[]>('* as n');
  if (Number(count[0].n) >= UPLOAD_LIMITS.maxFilesPerShoot) {
    throw await refuse(new HttpError(409, `A shoot holds at most ${UPLOAD_LIMITS.maxFilesPerShoot} frames.`));
  }
  const head = await headObject(input.key);
  if (!head) throw new HttpError(422, `“${name}” did not arrive in storage. Please upload it again.`);
  // Presigned PUTs do not bind the size, so what arrived is checked here, before anything reads it.
  if (head.bytes === 0) throw await refuse(new HttpError(422, `“${name}” is empty (0 bytes). Please export it again.`));
  if (head.bytes > UPLOAD_LIMITS.maxBytes) throw await refuse(tooLarge(`“${name}”`, head.bytes));
  if (head.bytes !== input.size) {
    throw await refuse(new HttpError(422, `“${name}” arrived with ${head.bytes} bytes instead of ${input.size}. Please upload it again.`));
  }
  const [row] = await db()('frames')
    .insert({ studio_id: shoot.studio_id, shoot_id: shoot.id, object_key: input.key, original_name: name, bytes: head.bytes })
    .onConflict('object_key').ignore()
    .returning('id');
  const id = row?.id ?? (await db()('frames').where({ object_key: input.key }).first('id')).id;
  await enqueueFrame(id);
  return { id: id as string, created: !!row };
}

export async function enqueueFrame(frameId: string) {
  try {
    await enqueue(QUEUES.frameProcess, { frameId }, `frame:${frameId}`);
  } catch (err) {
    console.error('[fillcard] could not enqueue frame; the worker sweep will pick it up:', err);
  }
}

/** File names are shown and used in downloads: keep printable characters only, and a sane length. */
export function cleanFileName(name: string): string {
  const base = name.split(/[\\/]/).pop() ?? 'file';
  // eslint-disable-next-line no-control-regex
  const clean = base.normalize('NFC').replace(/[\u0000-\u001f\u007f\u202a-\u202e\u2066-\u2069]/g, '').trim();
  return (clean || 'file').slice(0, 200);
}

/** Multipart uploads started more than a day ago and never finished are aborted, so no parts linger. */
export async function abortStaleMultipartUploads(olderThanMs = 24 * 3600_000) {
  const r = await s3().send(new ListMultipartUploadsCommand({ Bucket: config().S3_BUCKET, Prefix: 'studios/' }));
  const cutoff = Date.now() - olderThanMs;
  for (const u of r.Uploads ?? []) {
    if (u.Initiated && u.Initiated.getTime() < cutoff) {
      await s3().send(new AbortMultipartUploadCommand({ Bucket: config().S3_BUCKET, Key: u.Key!, UploadId: u.UploadId! }));
    }
  }
}

/**
 * Uploads that reached storage but were never registered (the browser closed in between) belong to
 * nobody: after a day they are deleted. Uploads happen while a shoot is young, so only the upload
 * folders of shoots changed in the last two weeks are listed; frames and finals rows own the keys.
 */
export async function deleteOrphanUploads(olderThanMs = 24 * 3600_000) {
  const cutoff = Date.now() - olderThanMs;
  const shoots = await db()('shoots').where('updated_at', '>', db().raw("now() - interval '14 days'")).orWhere('created_at', '>', db().raw("now() - interval '14 days'")).select('id', 'studio_id');
  let deleted = 0;
  for (const shoot of shoots) {
    for (const folder of ['originals', 'finals']) {
      const prefix = `${keys.shootPrefix(shoot.studio_id, shoot.id)}${folder}/`;
      let token: string | undefined;
      do {
        const page = await s3().send(new ListObjectsV2Command({ Bucket: config().S3_BUCKET, Prefix: prefix, ContinuationToken: token }));
        const old = (page.Contents ?? []).filter((o) => (o.LastModified?.getTime() ?? Date.now()) < cutoff).map((o) => o.Key!);
        if (old.length) {
          const owned = new Set([
            ...(await db()('frames').whereIn('object_key', old).pluck('object_key')),
            ...(await db()('finals').whereIn('object_key', old).pluck('object_key')),
          ]);
          for (const key of old.filter((k) => !owned.has(k))) {
            await deleteObject(key);
            deleted++;
          }
        }
        token = page.IsTruncated ? page.NextContinuationToken : undefined;
      } while (token);
    }
  }
  return deleted;
}
