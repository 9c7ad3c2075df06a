/**
 * Builds one final: reads the upload, checks it by signature, makes the delivered file (sRGB,
 * camera EXIF kept, GPS dropped) and its full-resolution ratio crops at the frame's focus point,
 * plus small previews for the screens, and stores them under content-hashed keys. Then the final
 * takes its pick, superseding the one before it, whose objects go only now.
 * Idempotent: a final no longer waiting is skipped, and the same bytes give the same keys.
 * Retries: QUEUES.finalProcess (5 with backoff); a dead worker's claim lapses after 5 minutes.
 * One at a time per worker: each final is decoded at full resolution several times over.
 */
import type PgBoss from 'pg-boss';
import { createHash } from 'node:crypto';
import sharp from 'sharp';
import { db } from '../lib/server/db';
import { audit } from '../lib/server/audit';
import { getObjectBuffer, putObject, deleteObject, keys } from '../lib/server/storage';
import { buildFinalVariants, checkUpload, ImageRejected, type FinalVariants } from '../lib/server/images';
import { IMMUTABLE } from '../lib/server/media';
import { QUEUES } from '../lib/server/jobs';
import { enqueueFinal, releaseFinals } from '../lib/server/finals';

const CLAIM_LAPSE = "interval '5 minutes'";
const PREVIEW_EDGE = 2048;
const THUMB_EDGE = 480;
const CROP_PREVIEW_WIDTH = 600;

interface Out {
  kind: string;
  data: Buffer;
  width: number;
  height: number;
}

/** Claims the final for this worker; null when it is done, superseded, unmatched or held by a live worker. */
async function claim(finalId: string) {
  const rows = await db()('finals')
    .where({ id: finalId })
    .whereNull('superseded_at')
    .whereNotNull('pending_frame_id')
    .where((q) => q.where({ state: 'waiting' }).orWhere((q2) => q2.where({ state: 'processing' }).where('claimed_at', '<', db().raw(`now() - ${CLAIM_LAPSE}`))))
    .update({ state: 'processing', claimed_at: db().fn.now(), attempts: db().raw('attempts + 1') })
    .returning('*');
  return rows[0] ?? null;
}

/** Screen-sized copies: a preview and a thumbnail of the final, and a small copy of each crop shape. */
async function buildPreviews(built: FinalVariants): Promise<Out[]> {
  const resize = async (input: Buffer, box: { width: number; height?: number }, quality: number) => {
    const { data, info } = await sharp(input)
      .resize({ ...box, fit: 'inside', withoutEnlargement: true })
      .withIccProfile('srgb')
      .jpeg({ quality, mozjpeg: true })
      .toBuffer({ resolveWithObject: true });
    return { data, width: info.width, height: info.height };
  };
  const preview = await resize(built.full, { width: PREVIEW_EDGE, height: PREVIEW_EDGE }, 84);
  const out: Out[] = [{ kind: 'preview', ...preview }, { kind: 'thumb', ...(await resize(preview.data, { width: THUMB_EDGE, height: THUMB_EDGE }, 80)) }];
  for (const c of built.crops) {
    // 8×10 is the 4:5 shape: one preview serves both.
    if (c.kind === 'print_8x10') continue;
    out.push({ kind: `preview_${c.kind.slice('crop_'.length)}`, ...(await resize(c.data, { width: CROP_PREVIEW_WIDTH }, 80)) });
  }
  return out;
}

async function storeVariants(final: { id: string; studio_id: string; shoot_id: string }, outs: Out[]) {
  for (const v of outs) {
    const hash = createHash('sha256').update(v.data).digest('hex');
    const key = keys.finalVariant(final.studio_id, final.shoot_id, hash, 'jpg');
    await putObject(key, v.data, 'image/jpeg', IMMUTABLE);
    await db()('final_variants')
      .insert({ studio_id: final.studio_id, final_id: final.id, kind: v.kind, object_key: key, width: v.width, height: v.height, bytes: v.data.length })
      .onConflict(['final_id', 'kind'])
      .merge(['object_key', 'width', 'height', 'bytes']);
  }
}

export async function processFinal(finalId: string, isLastTry: boolean) {
  const final = await claim(finalId);
  if (!final) return;
  console.log(`[fillcard] worker ${process.pid} claimed final ${final.id} (attempt ${final.attempts})`);
  try {
    const frame = await db()('frames').where({ id: final.pending_frame_id, shoot_id: final.shoot_id }).first('focus_x', 'focus_y');
    const upload = await getObjectBuffer(final.object_key);
    checkUpload(upload, final.original_name);
    const built = await buildFinalVariants(upload, { x: frame?.focus_x ?? 0.5, y: frame?.focus_y ?? 0.5 }, final.original_name);
    const outs: Out[] = [
      { kind: 'full', data: built.full, width: built.width, height: built.height },
      ...built.crops.map((c) => ({ kind: c.kind, data: c.data, width: c.width, height: c.height })),
      ...(await buildPreviews(built)),
    ];
    await storeVariants(final, outs);
    const { superseded, dropped } = await db().transaction(async (trx) => {
      // The shoot lock orders this against matching by hand and new uploads for the same pick.
      await trx('shoots').where({ id: final.shoot_id }).forUpdate().first('id');
      const now = await trx('finals').where({ id: final.id }).forUpdate().first('superseded_at', 'pending_frame_id');
      if (!now || now.superseded_at || now.pending_frame_id !== final.pending_frame_id) return { superseded: [] as string[], dropped: true };
      const before: string[] = await trx('finals')
        .where({ frame_id: final.pending_frame_id }).whereNull('superseded_at').whereNot({ id: final.id })
        .update({ superseded_at: trx.fn.now() }).returning('id').then((r) => r.map((x: { id: string }) => x.id));
      await trx('finals').where({ id: final.id }).update({
        frame_id: final.pending_frame_id, pending_frame_id: null, state: 'ready', error: null, claimed_at: null,
        width: built.width, height: built.height,
      });
      if (before.length) {
        await audit({ studioId: final.studio_id, actorKind: 'system', action: 'final.replaced', subjectType: 'final', subjectId: final.id, details: { frameId: final.pending_frame_id, replaced: before } }, trx);
      }
      return { superseded: before, dropped: false };
    });
    // The final was replaced or removed while it was built: what was just stored goes with it.
    await releaseFinals(dropped ? [final.id] : superseded);
  } catch (err) {
    if (err instanceof ImageRejected) return reject(final, err.userMessage);
    console.error(`[fillcard] final ${final.id} failed:`, err);
    if (isLastTry) {
      await db()('finals').where({ id: final.id }).update({ state: 'failed', error: 'We could not process this final. Upload it again.', claimed_at: null });
    } else {
      await db()('finals').where({ id: final.id }).update({ state: 'waiting', claimed_at: null });
    }
    throw err;
  }
}

/** Not a usable image: the final says why, and nothing of it stays in storage. */
async function reject(final: { id: string; object_key: string }, message: string) {
  const leftover: string[] = await db()('final_variants').where({ final_id: final.id }).delete().returning('object_key').then((r) => r.map((x: { object_key: string }) => x.object_key));
  const used = new Set(leftover.length ? await db()('final_variants').whereIn('object_key', leftover).pluck('object_key') : []);
  await Promise.all([...new Set(leftover)].filter((k) => !used.has(k)).map((k) => deleteObject(k).catch(() => null)));
  await deleteObject(final.object_key).catch((e) => console.error('[fillcard] could not delete a rejected final:', e));
  await db()('finals').where({ id: final.id }).update({ state: 'failed', error: message, claimed_at: null });
}

export async function finalProcessHandler(jobs: PgBoss.JobWithMetadata<{ finalId: string }>[]) {
  for (const job of jobs) await processFinal(job.data.finalId, job.retryCount >= job.retryLimit);
}

/** Finals waiting without a job (lost between commit and send) or whose worker died: queue them again. */
export async function sweepFinals() {
  const ids = await db()('finals')
    .whereNull('superseded_at')
    .whereNotNull('pending_frame_id')
    .where((q) => q.where({ state: 'waiting' }).where('created_at', '<', db().raw("now() - interval '1 minute'"))
      .orWhere((q2) => q2.where({ state: 'processing' }).where('claimed_at', '<', db().raw(`now() - ${CLAIM_LAPSE}`))))
    .whereNotExists(db().select(db().raw('1')).from('pgboss.job as j')
      .where('j.name', QUEUES.finalProcess.name)
      .whereIn('j.state', ['created', 'retry', 'active'])
      .where(db().raw("j.data->>'finalId' = finals.id::text")))
    .limit(100)
    .pluck('id');
  for (const id of ids) await enqueueFinal(id);
}
