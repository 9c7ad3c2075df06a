import { db } from './db';
import { captureOrder } from './frame-order';
import { audit } from './audit';
import { hashPasscode } from './client-access';
import { verifyPassword } from './password';
import { conflict, notFound } from './http';
import { mediaPath } from './media';
import { shootForMember } from './permissions';
import type { Knex } from 'knex';
import type { SessionMember } from './auth';
import { TERMS_FIELDS, type NewShootInput, type ShootDetails, type ShootDetailsInput, type ShootDetailsResult, type Stage } from '../schemas/shoot';
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

const dayText = (d: Date | string) => new Date(d).toLocaleDateString('en-GB', { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' });
/** The proofs close at the end of the chosen day, UTC, as when the shoot was created. */
const endOfDayUtc = (day: string) => new Date(`${day}T23:59:59Z`);
const utcDay = (d: Date | string) => new Date(d).toISOString().slice(0, 10);

const ARCHIVED_REASON = 'This shoot is archived. Bring it back from the Finals tab before changing its details.';

/**
 * Why the package terms of a shoot can no longer change, in words for the photographer, or null.
 * The client agreed to the terms they picked and paid under; changing them afterwards would change
 * what was already sent or paid.
 */
async function termsLockReason(q: Knex | Knex.Transaction, shoot: { id: string; stage: string; picks_submitted_at: Date | string | null }): Promise<string | null> {
  if (shoot.stage === 'archived') return ARCHIVED_REASON;
  const states: string[] = await q('orders').where({ shoot_id: shoot.id }).whereIn('state', ['paid', 'pending']).pluck('state');
  if (states.includes('paid')) return 'The client has paid for extra retouches under these terms, so they stay as they were paid for.';
  if (states.includes('pending')) {
    return 'The client has a payment for extra retouches in progress. The package terms can change once it finishes or expires (within a day).';
  }
  if (shoot.picks_submitted_at) {
    return `The client sent their picks on ${dayText(shoot.picks_submitted_at)} under these terms. Reopen the picks on the Client & picks tab first if the terms must change.`;
  }
  if (shoot.stage === 'picks_in') return 'The client\'s picks are in under these terms, so the terms are fixed.';
  if (shoot.stage === 'retouching') return 'Retouching has started on the client\'s picks, so the package terms are fixed.';
  if (shoot.stage === 'delivered') return 'The finals are delivered, so the package terms are fixed.';
  return null;
}

type ShootRow = Record<string, any> & { id: string; stage: string; picks_submitted_at: Date | string | null };

async function detailsOf(q: Knex | Knex.Transaction, shoot: ShootRow): Promise<ShootDetails> {
  return {
    title: shoot.title,
    shotOn: shoot.shot_on_day,
    proofExpiresOn: utcDay(shoot.proof_expires_at),
    proofsClosed: new Date(shoot.proof_expires_at) < new Date(),
    hasPasscode: !!shoot.passcode_hash,
    allowance: shoot.allowance,
    extraPriceMinor: shoot.extra_price_minor,
    currency: String(shoot.currency).trim(),
    taxRateBp: shoot.tax_rate_bp,
    taxMode: shoot.tax_mode,
    stage: shoot.stage as Stage,
    termsLocked: await termsLockReason(q, shoot),
    locked: shoot.stage === 'archived' ? ARCHIVED_REASON : null,
  };
}

// shot_on is a plain date; reading it as text keeps it from shifting with the server's time zone.
const shootWithDay = (q: Knex | Knex.Transaction) => q('shoots').select('*', q.raw(`to_char(shot_on, 'YYYY-MM-DD') AS shot_on_day`));

/** The details form's view of a shoot of the member's studio (404 for any other). */
export async function shootDetails(member: SessionMember, shootId: string): Promise<ShootDetails> {
  const found = await shootForMember(member, shootId);
  const shoot = await shootWithDay(db()).where({ id: found.id, studio_id: member.studioId }).first();
  return detailsOf(db(), shoot);
}

/**
 * Changes the details sent (title, dates, passcode, package terms). Everything is checked against
 * the shoot as it stands under a row lock, so a picks submission or a checkout cannot slip in
 * between the check and the change. A new passcode sends every open client session back to the
 * passcode screen; removing it lets them in.
 */
export async function updateShoot(member: SessionMember, shootId: string, input: ShootDetailsInput): Promise<ShootDetailsResult> {
  const found = await shootForMember(member, shootId);
  // Hashing is slow on purpose: done before the row is locked. Setting the same passcode again is no change.
  const samePasscode = !!input.passcode && !!found.passcode_hash && (await verifyPassword(found.passcode_hash, input.passcode));
  const newPasscodeHash = input.passcode && !samePasscode ? await hashPasscode(input.passcode) : null;

  return db().transaction(async (trx) => {
    const shoot = await shootWithDay(trx).where({ id: found.id, studio_id: member.studioId }).forUpdate().first();
    if (!shoot) throw notFound('No such shoot.');
    if (shoot.stage === 'archived') throw conflict(ARCHIVED_REASON);

    const row: Record<string, unknown> = {};
    const changed: string[] = [];
    const change = (name: string, column: string, value: unknown) => {
      row[column] = value;
      changed.push(name);
    };
    if (input.title !== undefined && input.title !== shoot.title) change('title', 'title', input.title);
    if (input.shotOn !== undefined && input.shotOn !== shoot.shot_on_day) change('shotOn', 'shot_on', input.shotOn);
    if (input.proofExpiresOn !== undefined && input.proofExpiresOn !== utcDay(shoot.proof_expires_at)) {
      change('proofExpiresOn', 'proof_expires_at', endOfDayUtc(input.proofExpiresOn));
    }

    const current: Record<(typeof TERMS_FIELDS)[number], unknown> = {
      allowance: shoot.allowance,
      extraPriceMinor: shoot.extra_price_minor,
      currency: String(shoot.currency).trim(),
      taxRateBp: shoot.tax_rate_bp,
      taxMode: shoot.tax_mode,
    };
    const column = { allowance: 'allowance', extraPriceMinor: 'extra_price_minor', currency: 'currency', taxRateBp: 'tax_rate_bp', taxMode: 'tax_mode' } as const;
    const termsChanged = TERMS_FIELDS.filter((f) => input[f] !== undefined && input[f] !== current[f]);
    if (termsChanged.length) {
      const reason = await termsLockReason(trx, shoot);
      if (reason) throw conflict(`The package terms cannot change now. ${reason}`);
      for (const f of termsChanged) change(f, column[f], input[f]);
    }

    let passcode: 'set' | 'changed' | 'removed' | null = null;
    if (input.passcode === '' && shoot.passcode_hash) passcode = 'removed';
    else if (input.passcode && !(samePasscode && shoot.passcode_hash === found.passcode_hash)) passcode = shoot.passcode_hash ? 'changed' : 'set';
    if (passcode) {
      // If the passcode changed under us while hashing, the hash made for the new one is still right.
      change('passcode', 'passcode_hash', passcode === 'removed' ? null : (newPasscodeHash ?? (await hashPasscode(input.passcode!))));
      await trx('client_sessions').where({ shoot_id: shoot.id, studio_id: member.studioId }).update({ passcode_ok: passcode === 'removed' });
    }

    if (changed.length) {
      const [updated] = await trx('shoots').where({ id: shoot.id, studio_id: member.studioId }).update({ ...row, updated_at: trx.fn.now() }).returning('*');
      Object.assign(shoot, updated, input.shotOn !== undefined ? { shot_on_day: input.shotOn } : {});
      await audit({
        studioId: member.studioId, actorKind: 'member', actorId: member.userId, action: 'shoot.updated', subjectType: 'shoot', subjectId: shoot.id,
        details: { changed, ...(passcode ? { passcode } : {}) },
      }, trx);
    }
    return { changed, details: await detailsOf(trx, shoot) };
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
