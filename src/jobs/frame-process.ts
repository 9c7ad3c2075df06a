/**
 * Builds one frame: reads the original, checks it, reads EXIF, makes thumbnail, watermarked proof
 * and crops from one decode, measures cull hints, and stores it all. Idempotent: a frame already
 * ready is skipped, and variant keys are content hashes, so a repeat writes the same objects.
 * Retries: QUEUES.frameProcess (5 with backoff); a dead worker's claim lapses after 3 minutes.
 */
import type PgBoss from 'pg-boss';
import { createHash } from 'node:crypto';
import { db } from '../lib/server/db';
import { getObjectBuffer, putObject, deleteObject, keys } from '../lib/server/storage';
import { buildFrameVariants, buildCropVariants, ImageRejected } from '../lib/server/images';
import { IMMUTABLE } from '../lib/server/media';
import { enqueueFrame } from '../lib/server/uploads';
import { QUEUES, enqueue } from '../lib/server/jobs';
import type { VariantOut } from '../lib/server/images/variants';

const CLAIM_LAPSE = "interval '3 minutes'";

/** Claims the frame for this worker; null when it is done, gone, or being built by a live worker. */
async function claim(frameId: string) {
  const rows = await db()('frames')
    .where({ id: frameId })
    .where((q) => q.where({ state: 'waiting' }).orWhere((q2) => q2.where({ state: 'processing' }).where('claimed_at', '<', db().raw(`now() - ${CLAIM_LAPSE}`))))
    .update({ state: 'processing', claimed_at: db().fn.now(), attempts: db().raw('attempts + 1') })
    .returning('*');
  return rows[0] ?? null;
}

export async function processFrame(frameId: string, isLastTry: boolean) {
  const frame = await claim(frameId);
  if (!frame) return;
  // One line per claim: with several workers, this says which one built (or dropped) a frame.
  console.log(`[fillcard] worker ${process.pid} claimed frame ${frame.id} (attempt ${frame.attempts})`);
  try {
    const original = await getObjectBuffer(frame.object_key);
    const sha256 = createHash('sha256').update(original).digest('hex');
    const twin = await db()('frames').where({ shoot_id: frame.shoot_id, sha256 }).whereNot({ id: frame.id }).first('original_name');
    if (twin) {
      await reject(frame, `This is the same file as ${twin.original_name}, already in the shoot.`);
      return;
    }
    const studio = await db()('studios').where({ id: frame.studio_id }).first('watermark_text', 'watermark_opacity', 'watermark_logo_key');
    const logo = studio.watermark_logo_key ? await getObjectBuffer(studio.watermark_logo_key).catch(() => null) : null;
    const built = await buildFrameVariants({
      original,
      fileName: frame.original_name,
      watermark: { text: studio.watermark_text, opacity: Number(studio.watermark_opacity), logo },
      focus: frame.focus_x == null ? null : { x: frame.focus_x, y: frame.focus_y },
    });
    await storeVariants(frame, built.variants);
    const e = built.exif;
    await db()('frames').where({ id: frame.id }).update({
      sha256,
      width: built.width,
      height: built.height,
      orientation: built.orientation,
      camera_make: e.cameraMake,
      camera_model: e.cameraModel,
      lens: e.lens,
      focal_length_mm: e.focalLengthMm,
      focal_length_35mm: e.focalLength35mm,
      f_number: e.fNumber,
      exposure_time_s: e.exposureTimeS,
      iso: e.iso,
      exposure_bias_ev: e.exposureBiasEv,
      flash_fired: e.flashFired,
      taken_at: e.takenAt,
      taken_at_offset: e.takenAtOffset,
      ev100: built.ev100,
      mean_luminance: built.cull.meanLuminance,
      clipped_share: built.cull.clippedShare,
      sharpness: built.cull.sharpness,
      phash: built.cull.phash,
      focus_x: built.focus.x,
      focus_y: built.focus.y,
      state: 'ready',
      error: null,
      processed_at: db().fn.now(),
      claimed_at: null,
    });
  } catch (err) {
    if (err instanceof ImageRejected) return reject(frame, err.userMessage);
    if (isUniqueViolation(err)) return reject(frame, 'This is the same file as another frame already in the shoot.');
    console.error(`[fillcard] frame ${frame.id} failed:`, err);
    if (isLastTry) {
      await db()('frames').where({ id: frame.id }).update({ state: 'failed', error: 'We could not process this frame. Try again, or upload it again.', claimed_at: null });
    } else {
      await db()('frames').where({ id: frame.id }).update({ state: 'waiting', claimed_at: null });
    }
    throw err;
  }
}

/**
 * A file that is not a usable photo: the frame says why, and the original is removed from storage,
 * with any variants a twin's race left behind.
 */
async function reject(frame: { id: string; object_key: string }, message: string) {
  // Storage first: once a frame reads 'failed', nothing of it is left behind.
  const leftover = await db()('frame_variants').where({ frame_id: frame.id }).delete().returning('object_key');
  await deleteUnusedVariants(leftover.map((r: { object_key: string }) => r.object_key));
  await deleteObject(frame.object_key).catch((e) => console.error('[fillcard] could not delete rejected original:', e));
  await db()('frames').where({ id: frame.id }).update({ state: 'failed', error: message, claimed_at: null, sha256: null });
}

/** Variant objects are content-addressed and may be shared by identical frames: only unreferenced ones go. */
async function deleteUnusedVariants(candidates: string[]) {
  if (!candidates.length) return;
  const used = new Set(await db()('frame_variants').whereIn('object_key', candidates).pluck('object_key'));
  await Promise.all([...new Set(candidates)].filter((k) => !used.has(k)).map((k) =>
    deleteObject(k).catch((e) => console.error('[fillcard] could not delete a replaced variant:', e))));
}

async function storeVariants(frame: { id: string; studio_id: string; shoot_id: string }, variants: VariantOut[]) {
  const before = await db()('frame_variants').where({ frame_id: frame.id }).whereIn('kind', variants.map((v) => v.kind)).pluck('object_key');
  for (const v of variants) {
    const key = keys.variant(frame.studio_id, frame.shoot_id, v.contentHash, 'jpg');
    await putObject(key, v.data, 'image/jpeg', IMMUTABLE);
    await db()('frame_variants')
      .insert({ studio_id: frame.studio_id, frame_id: frame.id, kind: v.kind, object_key: key, width: v.width, height: v.height, bytes: v.data.length })
      .onConflict(['frame_id', 'kind'])
      .merge(['object_key', 'width', 'height', 'bytes']);
  }
  // A moved focus point gives new crops under new keys; the old ones would otherwise stay in storage.
  await deleteUnusedVariants(before);
}

const isUniqueViolation = (err: unknown) => (err as { code?: string }).code === '23505';

export async function frameProcessHandler(jobs: PgBoss.JobWithMetadata<{ frameId: string }>[]) {
  for (const job of jobs) await processFrame(job.data.frameId, job.retryCount >= job.retryLimit);
}

/** Frames waiting without a job (lost between commit and send) or whose worker died: queue them again. */
export async function sweepFrames() {
  const ids = await db()('frames')
    .where((q) => q.where({ state: 'waiting' }).where('created_at', '<', db().raw("now() - interval '1 minute'"))
      .orWhere((q2) => q2.where({ state: 'processing' }).where('claimed_at', '<', db().raw(`now() - ${CLAIM_LAPSE}`))))
    // The queues use pg-boss's standard policy, where a singleton key does not stop a second job:
    // without this, every sweep would add another job for each frame still waiting in a long queue.
    .whereNotExists(db().select(db().raw('1')).from('pgboss.job as j')
      .where('j.name', QUEUES.frameProcess.name)
      .whereIn('j.state', ['created', 'retry', 'active'])
      .where(db().raw("j.data->>'frameId' = frames.id::text")))
    .limit(200)
    .pluck('id');
  for (const id of ids) await enqueueFrame(id);
}

/** Rebuilds a frame's crops around the focus point the owner chose. */
export async function frameCropsHandler(jobs: PgBoss.JobWithMetadata<{ frameId: string }>[]) {
  for (const job of jobs) {
    const frame = await db()('frames').where({ id: job.data.frameId, state: 'ready' }).first();
    if (!frame) continue;
    try {
      const original = await getObjectBuffer(frame.object_key);
      const crops = await buildCropVariants(original, { x: frame.focus_x, y: frame.focus_y });
      await storeVariants(frame, crops);
      // Only when no newer point arrived meanwhile: that one has its own job coming.
      await db()('frames').where({ id: frame.id, focus_x: frame.focus_x, focus_y: frame.focus_y }).update({ crops_pending: false });
    } catch (err) {
      if (job.retryCount >= job.retryLimit) await db()('frames').where({ id: frame.id }).update({ crops_pending: false });
      throw err;
    }
  }
}

export const enqueueCrops = (frameId: string) => enqueue(QUEUES.frameCrops, { frameId }, `crops:${frameId}:${Date.now()}`);
