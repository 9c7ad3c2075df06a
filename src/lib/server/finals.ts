/**
 * Finals: the retoucher's finished files for the client's picks, from upload to hand-off, and the
 * shoot's end (archive, delete).
 *
 * A final is uploaded straight to storage, registered here (size and file signature checked),
 * matched to its pick by file name (src/lib/finals-matching.ts) or by hand, then built by the
 * `final-process` job. While it is built it waits under `pending_frame_id`; only a ready final takes
 * the pick (`frame_id`), superseding the one before it, whose objects go once the new one is in
 * place. Concurrency: every change that matches finals to picks locks the shoot row first.
 */
import type { Knex } from 'knex';
import { GetObjectCommand } from '@aws-sdk/client-s3';
import { db } from './db';
import { captureOrder } from './frame-order';
import { audit } from './audit';
import { config } from './config';
import { HttpError, conflict, notFound, badRequest } from './http';
import { isUuid, shootForMember } from './permissions';
import { keys, headObject, deleteObject, deletePrefix, s3 } from './storage';
import { cleanFileName, UPLOAD_LIMITS } from './uploads';
import { enqueue, QUEUES } from './jobs';
import { joinVariant, variantColumns, variantImage, variantUrl } from './media';
import { queueMail, dispatchMail, renderMail } from './mail';
import { newToken, hashToken } from './tokens';
import { viewingLinkUrl, type SessionClient } from './client-access';
import { ImageRejected, sniffImageType, checkNameMatchesType } from './images';
import { matchFinalName, type PickName } from '../finals-matching';
import { downloadBase, finalFileName, zipFileName, downloadLog, recordDownload, redirectToDownload, requester, zipResponse, type DownloadActor, type ZipEntry } from './downloads';
import { can } from './permissions';
import type { SessionMember } from './auth';
import {
  CROP_KINDS, KIND_LABEL,
  type CropKind, type DeskFinal, type FinalKind, type FinalsDeskData, type GalleryFinalsData, type Img, type RetouchItem, type UnmatchedFinal,
} from '../../components/finals/types';

type Db = Knex | Knex.Transaction;
type Row = Record<string, any>;
type ShootRef = { id: string; studio_id: string; stage: string };

/** A refusal the person can overrule by confirming (replace a final, hand off with picks missing). */
export class NeedsConfirmation extends HttpError {
  constructor(message: string, readonly details: Record<string, unknown> = {}) {
    super(409, message);
  }
}

export const FINAL_UPLOAD_STAGES = ['picks_in', 'retouching', 'delivered'];
export const EXTEND_DAYS_MAX = 365;

const dateText = (d: Date | string) => new Date(d).toLocaleDateString('en-GB', { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' });

/** Why finals cannot be uploaded to a shoot at this stage, or null when they can. */
export function finalsClosedReason(stage: string): string | null {
  if (stage === 'draft' || stage === 'proofing') return 'Finals can be uploaded once the client has sent picks.';
  if (stage === 'archived') return 'This shoot is archived; its finals can no longer change.';
  return null;
}

export function assertFinalsOpen(shoot: { stage: string }) {
  const reason = finalsClosedReason(shoot.stage);
  if (reason) throw conflict(reason);
}

export function finalsPrefix(studioId: string, shootId: string) {
  return `${keys.shootPrefix(studioId, shootId)}finals/`;
}

function assertOwnFinalKey(shoot: { id: string; studio_id: string }, key: string) {
  const prefix = finalsPrefix(shoot.studio_id, shoot.id);
  if (!key.startsWith(prefix) || !/^[0-9a-f-]{36}\.(jpg|png|tiff|webp)$/.test(key.slice(prefix.length))) {
    throw new HttpError(403, 'That upload does not belong to this shoot.');
  }
}

// ---------------------------------------------------------------------------------------------
// Frame numbers and picks

/**
 * Each pick's number as the client counts their photos: the picks in capture order, 1 to N with no
 * gaps (the review page counts them the same way). Finals, their crops and download names carry it.
 */
export async function frameNumbers(shootId: string, q: Db = db()): Promise<{ numbers: Map<string, number>; digits: number }> {
  const { rows } = await q.raw(
    `SELECT id, row_number() OVER (ORDER BY ${captureOrder('f')})::int AS n
       FROM frames f
      WHERE shoot_id = ? AND EXISTS (SELECT 1 FROM picks k WHERE k.frame_id = f.id)`,
    [shootId],
  );
  const numbers = new Map<string, number>(rows.map((r: Row) => [r.id, r.n]));
  return { numbers, digits: String(numbers.size).length };
}

async function pickNames(shootId: string, studioId: string, q: Db): Promise<PickName[]> {
  const rows = await q('picks as k').join('frames as f', 'f.id', 'k.frame_id')
    .where({ 'k.shoot_id': shootId, 'k.studio_id': studioId })
    .select('k.frame_id', 'f.original_name');
  return rows.map((r: Row) => ({ frameId: r.frame_id, name: r.original_name }));
}

/** The final in place for a pick and the one on its way, if any. */
async function finalsOfPick(frameId: string, q: Db) {
  const rows: Row[] = await q('finals').whereNull('superseded_at')
    .where((w) => w.where({ frame_id: frameId }).orWhere({ pending_frame_id: frameId }))
    .select('id', 'frame_id', 'pending_frame_id', 'state', 'object_key');
  return { current: rows.find((r) => r.frame_id === frameId) ?? null, incoming: rows.find((r) => r.pending_frame_id === frameId) ?? null };
}

/** A pick is taken when it has a final in place or one being built; a failed upload does not hold it. */
const isTaken = (f: { current: Row | null; incoming: Row | null }) => !!f.current || (!!f.incoming && f.incoming.state !== 'failed');

// ---------------------------------------------------------------------------------------------
// Uploading

async function readHead(key: string, bytes = 4096): Promise<Uint8Array> {
  const r = await s3().send(new GetObjectCommand({ Bucket: config().S3_BUCKET, Key: key, Range: `bytes=0-${bytes - 1}` }));
  return r.Body!.transformToByteArray();
}

export interface RegisteredFinal {
  id: string;
  created: boolean;
  /** matched: it went to its pick; confirm: its pick has a final (replacing needs a yes); unmatched: match it by hand. */
  outcome: 'matched' | 'confirm' | 'unmatched';
  pick: { frameId: string; name: string } | null;
}

/**
 * Registers a finished upload as a final, once (the same key twice gives the same final). The
 * object must be there with the size the uploader reported and start like the image its name says.
 */
export async function registerFinal(member: SessionMember, shoot: ShootRef, input: { key: string; name: string; size: number }): Promise<RegisteredFinal> {
  assertOwnFinalKey(shoot, input.key);
  const existing = await db()('finals').where({ object_key: input.key, shoot_id: shoot.id }).first();
  if (existing) return { id: existing.id, created: false, ...(await outcomeOf(existing)) };

  const name = cleanFileName(input.name);
  const refuse = async (err: HttpError) => {
    await deleteObject(input.key).catch((e) => console.error('[fillcard] could not remove a refused final:', e));
    return err;
  };
  const reason = finalsClosedReason(shoot.stage);
  if (reason) throw await refuse(conflict(reason));
  const head = await headObject(input.key);
  if (!head) throw new HttpError(422, `“${name}” did not arrive in storage. Please upload it again.`);
  if (head.bytes === 0) throw await refuse(new HttpError(422, `“${name}” is empty (0 bytes). Please export it again.`));
  if (head.bytes > UPLOAD_LIMITS.maxBytes) throw await refuse(new HttpError(413, `“${name}” is larger than Fillcard takes (${Math.round(UPLOAD_LIMITS.maxBytes / 1048576)} MB).`));
  if (head.bytes !== input.size) {
    throw await refuse(new HttpError(422, `“${name}” arrived with ${head.bytes} bytes instead of ${input.size}. Please upload it again.`));
  }
  // The signature, not the name or the browser's guess, says what the file is (OWASP File Upload).
  try {
    const first = await readHead(input.key);
    checkNameMatchesType(name, sniffImageType(first), first);
  } catch (err) {
    if (err instanceof ImageRejected) throw await refuse(new HttpError(err.status, err.userMessage));
    throw err;
  }

  const released: string[] = [];
  const { id, pendingFor } = await db().transaction(async (trx) => {
    const locked = await trx('shoots').where({ id: shoot.id, studio_id: shoot.studio_id }).forUpdate().first('stage');
    const closed = finalsClosedReason(locked.stage);
    if (closed) throw conflict(closed);
    const match = matchFinalName(name, await pickNames(shoot.id, shoot.studio_id, trx));
    let pendingFor: string | null = null;
    if (match.kind === 'match') {
      const taken = await finalsOfPick(match.frameId, trx);
      if (!isTaken(taken)) {
        pendingFor = match.frameId;
        // Only a failed upload can be in the way here: the new file takes its place.
        if (taken.incoming) {
          await supersede(trx, [taken.incoming.id]);
          released.push(taken.incoming.id);
        }
      }
    }
    const [row] = await trx('finals').insert({
      studio_id: shoot.studio_id,
      shoot_id: shoot.id,
      object_key: input.key,
      original_name: name,
      bytes: head.bytes,
      uploaded_by: member.userId,
      pending_frame_id: pendingFor,
      state: 'waiting',
    }).returning('id');
    if (locked.stage === 'picks_in') {
      await trx('shoots').where({ id: shoot.id }).update({ stage: 'retouching', updated_at: trx.fn.now() });
      await audit({ studioId: shoot.studio_id, actorKind: 'member', actorId: member.userId, action: 'shoot.retouching', subjectType: 'shoot', subjectId: shoot.id }, trx);
    }
    return { id: row.id as string, pendingFor };
  });
  await releaseFinals(released);
  if (pendingFor) await enqueueFinal(id);
  const row = await db()('finals').where({ id }).first();
  return { id, created: true, ...(await outcomeOf(row)) };
}

async function outcomeOf(final: Row): Promise<Pick<RegisteredFinal, 'outcome' | 'pick'>> {
  const frameId = final.frame_id ?? final.pending_frame_id;
  if (frameId) {
    const f = await db()('frames').where({ id: frameId }).first('original_name');
    return { outcome: 'matched', pick: { frameId, name: f?.original_name ?? '' } };
  }
  const match = matchFinalName(final.original_name, await pickNames(final.shoot_id, final.studio_id, db()));
  if (match.kind === 'match') {
    const f = await db()('frames').where({ id: match.frameId }).first('original_name');
    return { outcome: 'confirm', pick: { frameId: match.frameId, name: f?.original_name ?? '' } };
  }
  return { outcome: 'unmatched', pick: null };
}

export async function enqueueFinal(finalId: string) {
  try {
    await enqueue(QUEUES.finalProcess, { finalId }, `final:${finalId}`);
  } catch (err) {
    console.error('[fillcard] could not enqueue final; the worker sweep will pick it up:', err);
  }
}

/** Marks finals superseded; their objects are removed by `releaseFinals` after the transaction. */
async function supersede(trx: Knex.Transaction, ids: string[]) {
  if (ids.length) await trx('finals').whereIn('id', ids).update({ superseded_at: trx.fn.now(), pending_frame_id: null, claimed_at: null });
}

/**
 * Removes the stored files of finals that are no longer in use: the upload and every variant no
 * other final shares (variant keys are content hashes, so identical crops share one object).
 */
export async function releaseFinals(ids: string[]) {
  if (!ids.length) return;
  const finals = await db()('finals').whereIn('id', ids).whereNotNull('superseded_at').select('id', 'object_key');
  if (!finals.length) return;
  const variantKeys: string[] = await db()('final_variants').whereIn('final_id', finals.map((f) => f.id)).delete().returning('object_key').then((r) => r.map((x: Row) => x.object_key));
  const candidates = [...new Set(variantKeys)];
  const stillUsed = new Set(candidates.length ? await db()('final_variants').whereIn('object_key', candidates).pluck('object_key') : []);
  const doomed = [...candidates.filter((k) => !stillUsed.has(k)), ...finals.map((f) => f.object_key)];
  await Promise.all(doomed.map((k) => deleteObject(k).catch((e) => console.error('[fillcard] could not delete a replaced final object:', e))));
}

// ---------------------------------------------------------------------------------------------
// Matching by hand, removing

/** Matches an unmatched final to a pick; a pick that has a final is replaced only with `replace`. */
export async function matchFinal(member: SessionMember, shoot: ShootRef, finalId: string, frameId: string, replace: boolean) {
  if (!isUuid(finalId)) throw notFound('No such final in this shoot.');
  if (!isUuid(frameId)) throw notFound('That frame is not one of the picks.');
  const released: string[] = [];
  await db().transaction(async (trx) => {
    const locked = await trx('shoots').where({ id: shoot.id, studio_id: shoot.studio_id }).forUpdate().first('stage');
    assertFinalsOpen(locked);
    const final = await trx('finals').where({ id: finalId, shoot_id: shoot.id, studio_id: shoot.studio_id }).whereNull('superseded_at').first();
    if (!final) throw notFound('No such final in this shoot.');
    if (final.frame_id || final.pending_frame_id) throw conflict('This final is matched to a pick already.');
    const pick = await trx('picks as k').join('frames as f', 'f.id', 'k.frame_id')
      .where({ 'k.frame_id': frameId, 'k.shoot_id': shoot.id, 'k.studio_id': shoot.studio_id }).first('f.original_name');
    if (!pick) throw notFound('That frame is not one of the picks.');
    const taken = await finalsOfPick(frameId, trx);
    if (isTaken(taken) && !replace) {
      throw new NeedsConfirmation(
        taken.current
          ? `${pick.original_name} has a final already. Replace it with “${final.original_name}”?`
          : `A final for ${pick.original_name} is being processed. Replace it with “${final.original_name}”?`,
        { frameId },
      );
    }
    // The one on its way is dropped now; the one in place stays until the new one is ready.
    if (taken.incoming) {
      await supersede(trx, [taken.incoming.id]);
      released.push(taken.incoming.id);
    }
    await trx('finals').where({ id: final.id }).update({ pending_frame_id: frameId, state: 'waiting', error: null, claimed_at: null });
    await audit({
      studioId: shoot.studio_id, actorKind: 'member', actorId: member.userId, action: 'final.matched', subjectType: 'final', subjectId: final.id,
      details: { frameId, replacing: !!taken.current, byHand: true },
    }, trx);
  });
  await releaseFinals(released);
  await enqueueFinal(finalId);
}

/**
 * Removes an uploaded final: an unmatched or failed file at any time, one on its way, or the one in
 * place before hand-off (after hand-off the client may have it; replace it instead).
 */
export async function discardFinal(member: SessionMember, shoot: ShootRef, finalId: string) {
  if (!isUuid(finalId)) throw notFound('No such final in this shoot.');
  await db().transaction(async (trx) => {
    const locked = await trx('shoots').where({ id: shoot.id, studio_id: shoot.studio_id }).forUpdate().first('stage');
    if (locked.stage === 'archived') throw conflict('This shoot is archived; its finals can no longer change.');
    const final = await trx('finals').where({ id: finalId, shoot_id: shoot.id, studio_id: shoot.studio_id }).whereNull('superseded_at').first();
    if (!final) throw notFound('No such final in this shoot.');
    if (final.frame_id && locked.stage === 'delivered') {
      throw conflict('This final has been handed off to the client. Upload a new version to replace it instead.');
    }
    await supersede(trx, [final.id]);
    await audit({ studioId: shoot.studio_id, actorKind: 'member', actorId: member.userId, action: 'final.removed', subjectType: 'final', subjectId: final.id, details: { name: final.original_name } }, trx);
  });
  await releaseFinals([finalId]);
}

// ---------------------------------------------------------------------------------------------
// The retouch list

async function variantMap(finalIds: string[], kinds: string[]) {
  const rows: Row[] = finalIds.length
    ? await db()('final_variants').whereIn('final_id', finalIds).whereIn('kind', kinds).select('final_id', 'kind', 'object_key', 'width', 'height', 'bytes')
    : [];
  const out = new Map<string, Map<string, Row>>();
  for (const r of rows) {
    const m = out.get(r.final_id) ?? new Map<string, Row>();
    m.set(r.kind, r);
    out.set(r.final_id, m);
  }
  return out;
}

const img = async (v: Row | undefined): Promise<Img | null> => (v ? { url: await variantUrl(v.object_key), width: v.width, height: v.height } : null);

/** Everything the Finals tab shows, for a member of the shoot's studio. */
export async function finalsDesk(
  member: SessionMember,
  shoot: ShootRef & { title: string; client_name: string; download_until: string | Date | null; announced_finals: number },
): Promise<FinalsDeskData> {
  const [pickRows, finalRows, { numbers }] = await Promise.all([
    joinVariant(db()('picks as k').join('frames as f', 'f.id', 'k.frame_id'), 't', 'thumb', 'leftJoin')
      .where({ 'k.shoot_id': shoot.id, 'k.studio_id': shoot.studio_id })
      .orderByRaw(captureOrder('f'))
      .select('k.frame_id', 'k.note', 'f.original_name', ...variantColumns('t')),
    db()('finals as fi').leftJoin('users as u', 'u.id', 'fi.uploaded_by')
      .where({ 'fi.shoot_id': shoot.id, 'fi.studio_id': shoot.studio_id }).whereNull('fi.superseded_at')
      .orderBy('fi.created_at', 'asc')
      .select('fi.*', 'u.name as uploader'),
    frameNumbers(shoot.id),
  ]);
  const thumbs = await variantMap(finalRows.map((f) => f.id), ['thumb']);
  const toDesk = async (f: Row): Promise<DeskFinal> => ({
    id: f.id,
    name: f.original_name,
    bytes: Number(f.bytes),
    width: f.width,
    height: f.height,
    state: f.state,
    error: f.error,
    uploadedAt: new Date(f.created_at).toISOString(),
    uploadedBy: f.uploader ?? null,
    thumb: await img(thumbs.get(f.id)?.get('thumb')),
  });
  const picks: RetouchItem[] = await Promise.all(pickRows.map(async (p: Row, i: number) => {
    const current = finalRows.find((f) => f.frame_id === p.frame_id);
    const incoming = finalRows.find((f) => f.pending_frame_id === p.frame_id);
    const state: RetouchItem['state'] = incoming ? (incoming.state === 'failed' ? 'failed' : 'processing') : current ? 'ready' : 'waiting';
    return {
      frameId: p.frame_id,
      number: numbers.get(p.frame_id) ?? i + 1,
      name: p.original_name,
      note: p.note,
      thumb: variantImage(p, 't'),
      state,
      final: current ? await toDesk(current) : null,
      incoming: incoming ? await toDesk(incoming) : null,
    };
  }));
  const names: PickName[] = pickRows.map((p: Row) => ({ frameId: p.frame_id, name: p.original_name }));
  const unmatched: UnmatchedFinal[] = await Promise.all(finalRows.filter((f) => !f.frame_id && !f.pending_frame_id).map(async (f) => {
    const m = matchFinalName(f.original_name, names);
    const item = m.kind === 'match' ? picks.find((p) => p.frameId === m.frameId) : undefined;
    return {
      ...(await toDesk(f)),
      suggestion: item ? { frameId: item.frameId, name: item.name, number: item.number, hasFinal: !!item.final || (!!item.incoming && item.incoming.state !== 'failed') } : null,
      ambiguous: m.kind === 'ambiguous' ? m.frameIds : [],
    };
  }));
  const showLog = can(member, 'downloads:log');
  return {
    shootId: shoot.id,
    stage: shoot.stage,
    title: shoot.title,
    clientName: shoot.client_name,
    downloadUntil: shoot.download_until ? new Date(shoot.download_until).toISOString() : null,
    picks,
    unmatched,
    counts: {
      picks: picks.length,
      ready: picks.filter((p) => p.final).length,
      incoming: picks.filter((p) => p.state === 'processing').length,
      failed: picks.filter((p) => p.state === 'failed').length,
      unmatched: unmatched.length,
    },
    can: {
      upload: can(member, 'final:upload') && !finalsClosedReason(shoot.stage),
      handOff: can(member, 'shoot:hand-off'),
      downloadsLog: showLog,
      manage: can(member, 'shoot:delete'),
    },
    uploadClosed: finalsClosedReason(shoot.stage),
    downloads: showLog ? await downloadLog(shoot.id, shoot.studio_id) : null,
    unannounced: shoot.stage === 'delivered' ? Math.max(0, picks.filter((p) => p.final).length - shoot.announced_finals) : 0,
  };
}

/** The shoot with its client's name, for the Finals tab and its API. */
export async function deskShoot(member: SessionMember, shootId: string) {
  const shoot = await shootForMember(member, shootId);
  const client = await db()('clients').where({ id: shoot.client_id, studio_id: member.studioId }).first('name');
  return { ...shoot, client_name: client?.name ?? '' };
}

// ---------------------------------------------------------------------------------------------
// Hand-off, extending, archiving, deleting

export interface HandOffResult {
  downloadUntil: string;
  finals: number;
  missing: number;
  /** Set when the old link had been withdrawn and a new one went out with the e-mail. */
  newLink: string | null;
}

/**
 * Releases the finals to the client: the shoot is delivered, downloads open for the studio's
 * number of days, and the client gets an e-mail. With picks still lacking a ready final it needs
 * `partial` (a confirmed "hand off anyway").
 */
export async function handOff(member: SessionMember, shootId: string, partial: boolean): Promise<HandOffResult> {
  const found = await shootForMember(member, shootId);
  const { result, mailId } = await db().transaction(async (trx) => {
    const shoot = await trx('shoots').where({ id: found.id, studio_id: member.studioId }).forUpdate().first();
    if (shoot.stage === 'delivered') throw conflict(`These finals were handed off already; downloads are open until ${dateText(shoot.download_until)}.`);
    if (!['picks_in', 'retouching'].includes(shoot.stage)) throw conflict('Finals can be handed off once the client has sent picks and finals are uploaded.');
    const c = await readyCounts(trx, shoot.id, member.studioId);
    if (c.ready === 0) throw conflict('No final is ready yet. Upload the finals and wait until they are processed, then hand off.');
    const missing = c.picks - c.ready;
    if (missing > 0 && !partial) {
      throw new NeedsConfirmation(
        `${missing} of ${c.picks} ${c.picks === 1 ? 'pick' : 'picks'} ${missing === 1 ? 'has' : 'have'} no ready final yet. Hand off the ${c.ready} that ${c.ready === 1 ? 'is' : 'are'} ready anyway?`,
        { missing, picks: c.picks, ready: c.ready },
      );
    }
    const studio = await trx('studios').where({ id: member.studioId }).first('name', 'brand_colour', 'download_expiry_days', 'contact_email');
    const newLink = await ensureClientLink(trx, shoot);
    const [updated] = await trx('shoots').where({ id: shoot.id }).update({
      stage: 'delivered',
      announced_finals: c.ready,
      download_until: trx.raw('now() + make_interval(days => ?)', [studio.download_expiry_days]),
      updated_at: trx.fn.now(),
    }).returning('download_until');
    const count = c.ready === 1 ? 'Your finished photo is' : `Your ${c.ready} finished photos are`;
    const id = await queueFinalsMail(trx, {
      shoot: { ...shoot, download_until: updated.download_until },
      studio,
      newLink,
      heading: 'Your photos are ready',
      subject: `Your photos from ${studio.name} are ready`,
      lead: `${count} ready from “${shoot.title}”. You can download each one at full size, or all of them at once as a ZIP file, along with crops sized for social posts (4:5, 1:1 and 9:16) and an 8×10 print crop.`,
      missing,
    });
    await audit({
      studioId: member.studioId, actorKind: 'member', actorId: member.userId, action: 'shoot.handed_off', subjectType: 'shoot', subjectId: shoot.id,
      details: { finals: c.ready, missing, partial: missing > 0, downloadUntil: new Date(updated.download_until).toISOString(), newLink: !!newLink },
    }, trx);
    return { result: { downloadUntil: new Date(updated.download_until).toISOString(), finals: c.ready as number, missing, newLink }, mailId: id };
  });
  await dispatchMail([mailId]);
  return result;
}

/**
 * After a partial hand-off: tells the client in one e-mail that the finals which became ready since
 * the last e-mail are there too. The owner chooses when, so a retoucher's afternoon of uploads is
 * one message rather than many.
 */
export async function announceFinals(member: SessionMember, shootId: string): Promise<{ announced: number; newLink: string | null }> {
  const found = await shootForMember(member, shootId);
  const { result, mailId } = await db().transaction(async (trx) => {
    const shoot = await trx('shoots').where({ id: found.id, studio_id: member.studioId }).forUpdate().first();
    if (shoot.stage !== 'delivered') throw conflict('The client is told about finals when they are handed off; this shoot has not been.');
    if (!shoot.download_until || new Date(shoot.download_until) < new Date()) throw conflict('Downloads have closed for this shoot. Extend them first, then tell the client.');
    const c = await readyCounts(trx, shoot.id, member.studioId);
    const fresh = c.ready - shoot.announced_finals;
    if (fresh <= 0) throw conflict('The client has been told about every ready final already.');
    const studio = await trx('studios').where({ id: member.studioId }).first('name', 'brand_colour', 'contact_email');
    const newLink = await ensureClientLink(trx, shoot);
    await trx('shoots').where({ id: shoot.id }).update({ announced_finals: c.ready, updated_at: trx.fn.now() });
    const id = await queueFinalsMail(trx, {
      shoot,
      studio,
      newLink,
      heading: fresh === 1 ? 'One more photo is ready' : `${fresh} more photos are ready`,
      subject: `More of your photos from ${studio.name} are ready`,
      lead: `${fresh === 1 ? 'One more finished photo has' : `${fresh} more finished photos have`} joined the others from “${shoot.title}”: ${c.ready} in all, each with its crops for posting and print.`,
      missing: c.picks - c.ready,
    });
    await audit({
      studioId: member.studioId, actorKind: 'member', actorId: member.userId, action: 'shoot.finals_announced', subjectType: 'shoot', subjectId: shoot.id,
      details: { fresh, ready: c.ready, missing: c.picks - c.ready, newLink: !!newLink },
    }, trx);
    return { result: { announced: fresh, newLink }, mailId: id };
  });
  await dispatchMail([mailId]);
  return result;
}

/** Picks, and picks with a ready final, of a shoot. */
async function readyCounts(trx: Knex.Transaction, shootId: string, studioId: string): Promise<{ picks: number; ready: number }> {
  const { rows: [c] } = await trx.raw(
    `SELECT count(*)::int AS picks,
            count(fi.id)::int AS ready
       FROM picks k
       JOIN frames f ON f.id = k.frame_id
       LEFT JOIN finals fi ON fi.frame_id = k.frame_id AND fi.superseded_at IS NULL AND fi.state = 'ready'
      WHERE k.shoot_id = ? AND k.studio_id = ?`,
    [shootId, studioId],
  );
  return c;
}

/**
 * The client's link keeps working; only a withdrawn (or never made) link is replaced, since only its
 * hash is kept and the e-mail must carry a link that opens. Returns the new link when one was made.
 */
async function ensureClientLink(trx: Knex.Transaction, shoot: { id: string; link_token_hash: string | null; link_revoked_at: Date | null }): Promise<string | null> {
  if (shoot.link_token_hash && !shoot.link_revoked_at) return null;
  const token = newToken();
  await trx('shoots').where({ id: shoot.id }).update({ link_token_hash: hashToken(token), link_revoked_at: null, link_sent_at: trx.fn.now() });
  await trx('client_sessions').where({ shoot_id: shoot.id }).delete();
  return viewingLinkUrl(token);
}

/** The e-mail that tells the client finals are ready: at hand-off, and when later ones join them. */
async function queueFinalsMail(trx: Knex.Transaction, m: {
  shoot: { studio_id: string; client_id: string; download_until: Date | string; link_sent_at: Date | string | null };
  studio: { name: string; brand_colour: string };
  newLink: string | null;
  heading: string;
  subject: string;
  lead: string;
  missing: number;
}): Promise<string> {
  const client = await trx('clients').where({ id: m.shoot.client_id, studio_id: m.shoot.studio_id }).first('name', 'email');
  const paragraphs = [`Hello ${client.name},`, m.lead];
  if (m.missing > 0) paragraphs.push(`${m.missing === 1 ? 'One more photo is' : `${m.missing} more photos are`} still being finished; they will appear in the same place.`);
  paragraphs.push(`Downloads stay open until ${dateText(m.shoot.download_until)}. Please save your photos before then.`);
  if (!m.newLink) {
    paragraphs.push(`Open them with the same link as before${m.shoot.link_sent_at ? `, from our e-mail of ${dateText(m.shoot.link_sent_at)}` : ''}. If you cannot find it, reply to this e-mail and we will send it again.`);
  }
  const body = renderMail({
    studioName: m.studio.name,
    brandColour: m.studio.brand_colour,
    heading: m.heading,
    paragraphs,
    button: m.newLink ? { label: 'Open your photos', url: m.newLink } : undefined,
    footer: m.newLink ? 'This link is personal: please do not forward it. Sent by Fillcard on behalf of the studio.' : undefined,
  });
  return queueMail({ to: client.email, studioId: m.shoot.studio_id, subject: m.subject, ...body }, trx);
}

/** Keeps downloads open `days` longer, counted from today when they have already closed. */
export async function extendDownloads(member: SessionMember, shootId: string, days: number): Promise<string> {
  if (!Number.isInteger(days) || days < 1 || days > EXTEND_DAYS_MAX) throw badRequest(`Extend by 1 to ${EXTEND_DAYS_MAX} days.`);
  const found = await shootForMember(member, shootId);
  return db().transaction(async (trx) => {
    const shoot = await trx('shoots').where({ id: found.id, studio_id: member.studioId }).forUpdate().first('stage', 'download_until');
    if (shoot.stage !== 'delivered') throw conflict('Only a delivered shoot has a download date to move.');
    const [row] = await trx('shoots').where({ id: found.id }).update({
      download_until: trx.raw('greatest(coalesce(download_until, now()), now()) + make_interval(days => ?)', [days]),
      updated_at: trx.fn.now(),
    }).returning('download_until');
    await audit({
      studioId: member.studioId, actorKind: 'member', actorId: member.userId, action: 'shoot.downloads_extended', subjectType: 'shoot', subjectId: found.id,
      details: { days, from: shoot.download_until ? new Date(shoot.download_until).toISOString() : null, to: new Date(row.download_until).toISOString() },
    }, trx);
    return new Date(row.download_until).toISOString();
  });
}

/** Puts the shoot away: the gallery closes for the client; the studio keeps everything. */
export async function archiveShoot(member: SessionMember, shootId: string): Promise<void> {
  const found = await shootForMember(member, shootId);
  await db().transaction(async (trx) => {
    const shoot = await trx('shoots').where({ id: found.id, studio_id: member.studioId }).forUpdate().first('stage');
    if (shoot.stage === 'archived') throw conflict('This shoot is archived already.');
    await trx('shoots').where({ id: found.id }).update({ stage: 'archived', archived_from: shoot.stage, updated_at: trx.fn.now() });
    await audit({ studioId: member.studioId, actorKind: 'member', actorId: member.userId, action: 'shoot.archived', subjectType: 'shoot', subjectId: found.id, details: { fromStage: shoot.stage } }, trx);
  });
}

/**
 * Brings an archived shoot back to the stage it was archived from. The client's viewing link works
 * again if it has not been withdrawn and its dates have not passed; the owner can extend or resend.
 */
export async function restoreShoot(member: SessionMember, shootId: string): Promise<{ stage: string }> {
  const found = await shootForMember(member, shootId);
  return db().transaction(async (trx) => {
    const shoot = await trx('shoots').where({ id: found.id, studio_id: member.studioId }).forUpdate().first('stage', 'archived_from');
    if (shoot.stage !== 'archived') throw conflict('This shoot is not archived.');
    // Shoots archived without a record of their stage come back as drafts: nothing reopens for the client by surprise.
    const stage = shoot.archived_from ?? 'draft';
    await trx('shoots').where({ id: found.id }).update({ stage, archived_from: null, updated_at: trx.fn.now() });
    await audit({ studioId: member.studioId, actorKind: 'member', actorId: member.userId, action: 'shoot.restored', subjectType: 'shoot', subjectId: found.id, details: { toStage: stage } }, trx);
    return { stage };
  });
}

/**
 * Deletes a shoot for good: every stored object under its prefix, then its rows (frames, picks,
 * finals, orders, downloads, sessions). The audit row stays with the studio and keeps the money
 * figures, since the orders go with the shoot. The title must be typed exactly.
 */
export async function deleteShoot(member: SessionMember, shootId: string, typedTitle: string): Promise<void> {
  const shoot = await shootForMember(member, shootId);
  if (typedTitle.trim() !== String(shoot.title).trim()) {
    throw new HttpError(422, 'Type the shoot’s title exactly as it is shown to delete it.');
  }
  if (await db()('orders').where({ shoot_id: shoot.id, state: 'pending' }).first('id')) {
    throw conflict('The client has a payment in progress for this shoot. Try again once it finishes or expires (within a day).');
  }
  const prefix = keys.shootPrefix(member.studioId, shoot.id);
  // Storage first: if this fails, the shoot is still there to delete again.
  await deletePrefix(prefix);
  await db().transaction(async (trx) => {
    const locked = await trx('shoots').where({ id: shoot.id, studio_id: member.studioId }).forUpdate().first('id');
    if (!locked) throw notFound('No such shoot.');
    const [counts] = (await trx.raw(
      `SELECT (SELECT count(*)::int FROM frames WHERE shoot_id = :id) AS frames,
              (SELECT count(*)::int FROM picks WHERE shoot_id = :id) AS picks,
              (SELECT count(*)::int FROM finals WHERE shoot_id = :id AND superseded_at IS NULL) AS finals`,
      { id: shoot.id },
    )).rows;
    const orders = await trx('orders').where({ shoot_id: shoot.id })
      .select('id', 'state', 'extras', 'total_minor', 'tax_minor', 'currency', 'paid_at', 'refunded_at', 'checkout_session_id');
    await audit({
      studioId: member.studioId, actorKind: 'member', actorId: member.userId, action: 'shoot.deleted', subjectType: 'shoot', subjectId: shoot.id,
      details: { title: shoot.title, shotOn: shoot.shot_on, stage: shoot.stage, clientId: shoot.client_id, ...counts, orders },
    }, trx);
    await trx('shoots').where({ id: shoot.id, studio_id: member.studioId }).delete();
  });
  // A worker that was mid-build may have written a variant since; its rows are gone now, so sweep again.
  await deletePrefix(prefix);
}

// ---------------------------------------------------------------------------------------------
// The client's finals and downloads

/** Finals reach a client only once handed off; before that the answer is a plain "not yet". */
export async function deliveredShootForClient(client: SessionClient) {
  const shoot = await db()('shoots as s').join('clients as c', 'c.id', 's.client_id').join('studios as st', 'st.id', 's.studio_id')
    .where({ 's.id': client.shootId, 's.studio_id': client.studioId })
    .first('s.*', 'c.name as client_name', 'st.name as studio_name');
  if (!shoot) throw notFound('No such gallery.');
  if (shoot.stage !== 'delivered') throw conflict('Your finished photos are not ready yet. The studio will e-mail you when they are.');
  return shoot;
}

const CROP_PREVIEW: Record<CropKind, string> = { crop_4x5: 'preview_4x5', crop_1x1: 'preview_1x1', crop_9x16: 'preview_9x16', print_8x10: 'preview_4x5' };

/** The shoot's finals in place and ready, in frame order, with their variants. */
async function readyFinals(shootId: string, studioId: string) {
  const [rows, { numbers, digits }] = await Promise.all([
    db()('finals as fi').join('frames as f', 'f.id', 'fi.frame_id')
      .where({ 'fi.shoot_id': shootId, 'fi.studio_id': studioId, 'fi.state': 'ready' }).whereNull('fi.superseded_at')
      .orderByRaw(captureOrder('f'))
      .select('fi.id', 'fi.frame_id', 'fi.created_at', 'f.original_name'),
    frameNumbers(shootId),
  ]);
  const variants = await variantMap(rows.map((r: Row) => r.id), ['full', ...CROP_KINDS, 'preview', 'preview_4x5', 'preview_1x1', 'preview_9x16']);
  return (rows as Row[])
    .map((r, i) => ({ id: r.id as string, frameId: r.frame_id as string, createdAt: new Date(r.created_at), number: numbers.get(r.frame_id) ?? i + 1, digits, variants: variants.get(r.id) ?? new Map<string, Row>() }))
    .filter((r) => r.variants.has('full'));
}

/** What the client's finals view shows. Download links go through our routes, which log them. */
export async function galleryFinals(client: SessionClient): Promise<GalleryFinalsData> {
  const shoot = await deliveredShootForClient(client);
  const finals = await readyFinals(shoot.id, shoot.studio_id);
  const base = downloadBase(shoot.client_name, shoot.title);
  const api = `/api/gallery/${shoot.id}/finals`;
  let finalsBytes = 0;
  let cropsBytes = 0;
  const out = await Promise.all(finals.map(async (f) => {
    const full = f.variants.get('full')!;
    finalsBytes += Number(full.bytes);
    const crops = await Promise.all(CROP_KINDS.filter((k) => f.variants.has(k)).map(async (k) => {
      const v = f.variants.get(k)!;
      cropsBytes += Number(v.bytes);
      return {
        kind: k, label: KIND_LABEL[k], width: v.width, height: v.height,
        preview: await img(f.variants.get(CROP_PREVIEW[k])),
        downloadUrl: `${api}/${f.id}?kind=${k}`,
        fileName: finalFileName(base, f.number, f.digits, k),
      };
    }));
    const preview = (await img(f.variants.get('preview'))) ?? { url: '', width: full.width, height: full.height };
    return {
      id: f.id, number: f.number, fileName: finalFileName(base, f.number, f.digits, 'full'),
      width: full.width, height: full.height, bytes: Number(full.bytes), preview,
      downloadUrl: `${api}/${f.id}?kind=full`, crops,
    };
  }));
  return {
    shootId: shoot.id,
    title: shoot.title,
    clientName: shoot.client_name,
    studioName: shoot.studio_name,
    downloadUntil: new Date(shoot.download_until).toISOString(),
    finals: out,
    zip: {
      finalsUrl: `${api}/zip`, cropsUrl: `${api}/zip?set=crops`, finalsBytes, cropsBytes,
      finalsName: zipFileName(base, 'finals'), cropsName: zipFileName(base, 'crops'),
    },
  };
}

export function parseKind(value: string | null): FinalKind {
  const kind = (value ?? 'full') as FinalKind;
  if (kind !== 'full' && !(CROP_KINDS as readonly string[]).includes(kind)) throw badRequest('Ask for full, crop_4x5, crop_1x1, crop_9x16 or print_8x10.');
  return kind;
}

/**
 * Serves one final (`?kind=full`) or one of its crops to a caller who may read the shoot: logged
 * first, then a redirect to a five-minute link that saves it as "Client_Shoot_07.jpg".
 */
export async function finalDownloadResponse(
  ctx: { request: Request; clientAddress?: string; url: URL; params: Record<string, string | undefined> },
  shoot: { id: string; studio_id: string; title: string; client_id: string },
  actor: DownloadActor,
): Promise<Response> {
  const kind = parseKind(ctx.url.searchParams.get('kind'));
  const finalId = ctx.params.finalId ?? '';
  const file = await finalDownload(shoot, finalId, kind);
  await recordDownload({
    studioId: shoot.studio_id, shootId: shoot.id, finalId, frameId: file.frameId, kind,
    what: kind === 'full' ? 'final' : 'crop', ...requester(ctx, actor),
  });
  return redirectToDownload(file.key, file.fileName);
}

/** "Download all": every ready final (or, with `?set=crops`, every ratio crop) as one ZIP streamed from storage, logged. */
export async function zipDownloadResponse(
  ctx: { request: Request; clientAddress?: string; url: URL },
  shoot: { id: string; studio_id: string; title: string; client_id: string },
  actor: DownloadActor,
): Promise<Response> {
  const set = ctx.url.searchParams.get('set') === 'crops' ? 'crops' : 'finals';
  const { entries, fileName } = await zipEntries(shoot, set);
  if (!entries.length) throw conflict('There is no ready final to download yet.');
  await recordDownload({ studioId: shoot.studio_id, shootId: shoot.id, what: set === 'crops' ? 'crops_zip' : 'finals_zip', ...requester(ctx, actor) });
  return zipResponse(entries, fileName, ctx.request.signal);
}

/** One ready final's object and download name, for a shoot the caller may read. */
export async function finalDownload(shoot: { id: string; studio_id: string; title: string; client_id: string }, finalId: string, kind: FinalKind) {
  if (!isUuid(finalId)) throw notFound('No such final.');
  const final = await db()('finals as fi').join('frames as f', 'f.id', 'fi.frame_id')
    .where({ 'fi.id': finalId, 'fi.shoot_id': shoot.id, 'fi.studio_id': shoot.studio_id, 'fi.state': 'ready' }).whereNull('fi.superseded_at')
    .first('fi.id', 'fi.frame_id');
  if (!final) throw notFound('No such final.');
  const v = await db()('final_variants').where({ final_id: final.id, kind }).first('object_key');
  if (!v) throw notFound('That crop is not there for this final.');
  const [{ numbers, digits }, client] = await Promise.all([
    frameNumbers(shoot.id),
    db()('clients').where({ id: shoot.client_id }).first('name'),
  ]);
  const base = downloadBase(client?.name ?? '', shoot.title);
  return { key: v.object_key as string, fileName: finalFileName(base, numbers.get(final.frame_id) ?? 0, digits, kind), frameId: final.frame_id as string };
}

/** The entries of "download all" (full finals) or "download crops" (every ratio crop). */
export async function zipEntries(shoot: { id: string; studio_id: string; title: string; client_id: string }, set: 'finals' | 'crops') {
  const [finals, client] = await Promise.all([readyFinals(shoot.id, shoot.studio_id), db()('clients').where({ id: shoot.client_id }).first('name')]);
  const base = downloadBase(client?.name ?? '', shoot.title);
  const entries: ZipEntry[] = [];
  for (const f of finals) {
    const kinds: FinalKind[] = set === 'finals' ? ['full'] : [...CROP_KINDS];
    for (const k of kinds) {
      const v = f.variants.get(k);
      if (v) entries.push({ name: finalFileName(base, f.number, f.digits, k), key: v.object_key, size: Number(v.bytes), date: f.createdAt });
    }
  }
  return { entries, fileName: zipFileName(base, set) };
}

/** After downloads close: the date they closed, for the client's notice. */
export async function closedDownloadsDate(shootId: string, studioId: string): Promise<string | null> {
  const s = await db()('shoots').where({ id: shootId, studio_id: studioId }).first('stage', 'download_until');
  return s?.stage === 'delivered' && s.download_until ? new Date(s.download_until).toISOString() : null;
}
