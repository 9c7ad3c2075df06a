import { db } from './db';
import { captureOrder } from './frame-order';
import { audit } from './audit';
import { hashPasscode } from './client-access';
import { conflict, notFound } from './http';
import { mediaPath } from './media';
import type { SessionMember } from './auth';
import type { NewShootInput } from '../schemas/shoot';
import type { FrameDto, FrameCounts, VariantKind } from '../dto';

/** Creates a shoot (and its client when new) in one transaction. */
export async function createShoot(member: SessionMember, input: NewShootInput): Promise<string> {
  const passcodeHash = input.passcode ? await hashPasscode(input.passcode) : null;
  return db().transaction(async (trx) => {
    let clientId: string;
    if (input.client.kind === 'existing') {
      const c = await trx('clients').where({ id: input.client.id, studio_id: member.studioId }).whereNull('archived_at').first('id');
      if (!c) throw notFound('That client is not in your studio.');
      clientId = c.id;
    } else {
      const [c] = await trx('clients').insert({ studio_id: member.studioId, name: input.client.name, email: input.client.email }).returning('id');
      clientId = c.id;
    }
    const [shoot] = await trx('shoots').insert({
      studio_id: member.studioId,
      client_id: clientId,
      title: input.title,
      shot_on: input.shotOn,
      allowance: input.allowance,
      extra_price_minor: input.extraPriceMinor,
      currency: input.currency,
      tax_rate_bp: input.taxRateBp,
      tax_mode: input.taxMode,
      proof_expires_at: new Date(`${input.proofExpiresOn}T23:59:59Z`),
      passcode_hash: passcodeHash,
    }).returning('id');
    await audit({ studioId: member.studioId, actorKind: 'member', actorId: member.userId, action: 'shoot.created', subjectType: 'shoot', subjectId: shoot.id }, trx);
    return shoot.id as string;
  });
}

export async function studioDefaults(studioId: string) {
  return db()('studios').where({ id: studioId }).first(
    'default_allowance', 'default_extra_price_minor', 'default_currency', 'tax_rate_bp', 'tax_mode', 'proof_expiry_days',
  );
}

/** A shoot's frames in capture order with their variant URLs. Clients see only ready, visible frames. */
export async function listFrames(shootId: string, studioId: string, opts: { forClient?: boolean } = {}): Promise<FrameDto[]> {
  const q = db()('frames').where({ shoot_id: shootId, studio_id: studioId }).orderByRaw(captureOrder());
  if (opts.forClient) q.where({ state: 'ready', hidden: false });
  const frames = await q.select('*');
  const variants = frames.length
    ? await db()('frame_variants').whereIn('frame_id', frames.map((f) => f.id)).select('id', 'frame_id', 'kind', 'object_key')
    : [];
  const byFrame = new Map<string, Partial<Record<VariantKind, string>>>();
  for (const v of variants) {
    const urls = byFrame.get(v.frame_id) ?? {};
    urls[v.kind as VariantKind] = mediaPath(v.id, v.object_key);
    byFrame.set(v.frame_id, urls);
  }
  return frames.map((f) => frameDto(f, byFrame.get(f.id) ?? {}));
}

export function frameDto(f: Record<string, any>, urls: Partial<Record<VariantKind, string>>): FrameDto {
  return {
    id: f.id,
    name: f.original_name,
    state: f.state,
    error: f.error,
    hidden: f.hidden,
    width: f.width,
    height: f.height,
    bytes: f.bytes,
    takenAt: f.taken_at ? new Date(f.taken_at).toISOString() : null,
    takenAtOffset: f.taken_at_offset,
    cameraMake: f.camera_make,
    cameraModel: f.camera_model,
    lens: f.lens,
    focalLengthMm: f.focal_length_mm,
    focalLength35mm: f.focal_length_35mm,
    fNumber: f.f_number,
    exposureTimeS: f.exposure_time_s,
    iso: f.iso,
    exposureBiasEv: f.exposure_bias_ev,
    flashFired: f.flash_fired,
    ev100: f.ev100,
    meanLuminance: f.mean_luminance,
    clippedShare: f.clipped_share,
    sharpness: f.sharpness,
    phash: f.phash,
    focus: f.focus_x == null ? null : { x: f.focus_x, y: f.focus_y },
    cropsPending: !!f.crops_pending,
    urls,
  };
}

export async function frameCounts(shootId: string, studioId: string): Promise<FrameCounts> {
  const rows = await db()('frames').where({ shoot_id: shootId, studio_id: studioId }).groupBy('state').select('state', db().raw('count(*)::int AS n'));
  const counts: FrameCounts = { total: 0, ready: 0, waiting: 0, processing: 0, failed: 0 };
  for (const r of rows) {
    counts[r.state as keyof FrameCounts] = r.n;
    counts.total += r.n;
  }
  return counts;
}

/** A frame of the member's studio, or 404. */
export async function frameForMember(member: SessionMember, frameId: string) {
  const frame = await db()('frames').where({ id: frameId, studio_id: member.studioId }).first();
  if (!frame) throw notFound('No such frame.');
  return frame;
}

/** Stages in which frames may still be added or removed: once picks are in, the set is fixed. */
export function assertFramesEditable(shoot: { stage: string }) {
  if (!['draft', 'proofing'].includes(shoot.stage)) {
    throw conflict('Frames can be added or removed only before the client has sent picks.');
  }
}
