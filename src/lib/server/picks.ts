/**
 * The client's side of a shoot and the studio's handling of it: sending the viewing link, the
 * gallery listing, picks with notes, submitting them, and reopening them.
 *
 * Concurrency: every pick write takes a shared lock on its shoot row and submitting takes an
 * exclusive one, so a pick either lands before the picks are sent (and is counted) or waits and is
 * refused; picks from two devices of one client meet in one row per frame (frame_id is unique).
 */
import type { Knex } from 'knex';
import { db } from './db';
import { captureOrder } from './frame-order';
import { audit } from './audit';
import { conflict, notFound, HttpError } from './http';
import { isUuid, shootForMember } from './permissions';
import { limitRate } from './rate-limit';
import { queueMail, dispatchMail, renderMail } from './mail';
import { joinVariant, variantColumns, variantImage } from './media';
import { newToken, hashToken } from './tokens';
import { viewingLinkUrl, type SessionClient } from './client-access';
import { config } from './config';
import { priceExtras, type TaxMode } from '../pricing';
import { formatMoney } from '../currency';
import type { GalleryData, GalleryFrame, GalleryPick, GalleryTerms, PickInput, SendLinkInput, SubmitResult } from '../schemas/picks';
import type { SessionMember } from './auth';

type Db = Knex | Knex.Transaction;

/** Link e-mails a studio may send per hour: generous for real work, a wall against a runaway script. */
export const LINK_SENDS_PER_HOUR = 30;

// ---------------------------------------------------------------------------------------------
// What the client sees

/** Frames a client may see and pick: processed and not hidden by the studio. */
type Row = Record<string, any>;
const visibleFrames = (q: Knex.QueryBuilder, alias = 'f') =>
  q.where(`${alias}.state`, 'ready').where(`${alias}.hidden`, false);

/**
 * The shoot's visible frames with their thumbnail and watermarked proof only. Originals, finals and
 * the social crops never reach a client; object keys never leave the server.
 */
export async function galleryFrames(shootId: string, studioId: string): Promise<GalleryFrame[]> {
  const rows: Row[] = await joinVariant(joinVariant(visibleFrames(db()('frames as f')), 't', 'thumb'), 'p', 'proof')
    .where({ 'f.shoot_id': shootId, 'f.studio_id': studioId })
    .orderByRaw(captureOrder('f'))
    .select('f.id', 'f.original_name', ...variantColumns('t'), ...variantColumns('p'));
  return rows.map((r) => ({ id: r.id, name: r.original_name, thumb: variantImage(r, 't')!, proof: variantImage(r, 'p')! }));
}

/**
 * Recent listings, by shoot, under the shoot's frames version (moved by the database whenever one of
 * its frames or variants changes). A client's gallery is listed again and again while the frames
 * stay the same; a changed version simply misses. Bounded: the oldest entry goes first.
 */
const LISTING_CACHE_SHOOTS = 50;
const listingCache = new Map<string, { version: string; frames: GalleryFrame[] }>();

async function cachedGalleryFrames(shootId: string, studioId: string, version: string): Promise<GalleryFrame[]> {
  const key = `${studioId}/${shootId}`;
  const hit = listingCache.get(key);
  if (hit?.version === version) return hit.frames;
  // Read after the version: the rows are at least as new as it, so storing them under it is safe.
  const frames = await galleryFrames(shootId, studioId);
  listingCache.delete(key);
  listingCache.set(key, { version, frames });
  if (listingCache.size > LISTING_CACHE_SHOOTS) listingCache.delete(listingCache.keys().next().value!);
  return frames;
}

async function visiblePicks(shootId: string, studioId: string, q: Db = db()): Promise<GalleryPick[]> {
  const rows: Row[] = await visibleFrames(q('picks as k').join('frames as f', 'f.id', 'k.frame_id'))
    .where({ 'k.shoot_id': shootId, 'k.studio_id': studioId })
    .orderByRaw(captureOrder('f'))
    .select('k.frame_id', 'k.note', 'k.updated_at');
  return rows.map((r) => ({ frameId: r.frame_id, note: r.note, updatedAt: new Date(r.updated_at).toISOString() }));
}

const termsOf = (shoot: Record<string, any>): GalleryTerms => ({
  allowance: shoot.allowance,
  extraPriceMinor: shoot.extra_price_minor,
  currency: String(shoot.currency).trim(),
  taxRateBp: shoot.tax_rate_bp,
  taxMode: shoot.tax_mode as TaxMode,
});

async function hasPaidOrder(shootId: string, q: Db = db()) {
  return !!(await q('orders').where({ shoot_id: shootId, state: 'paid' }).first('id'));
}

/** Everything the gallery island needs, for the client's own shoot. */
export async function galleryData(client: SessionClient): Promise<GalleryData> {
  const shoot = await db()('shoots as s').join('studios as st', 'st.id', 's.studio_id')
    .where({ 's.id': client.shootId, 's.studio_id': client.studioId })
    .first('s.*', 'st.name as studio_name', db().raw(`EXISTS (SELECT 1 FROM orders o WHERE o.shoot_id = s.id AND o.state = 'paid') AS paid`));
  if (!shoot) throw notFound('No such gallery.');
  const paid: boolean = shoot.paid;
  const [frames, picks] = await Promise.all([
    cachedGalleryFrames(shoot.id, shoot.studio_id, String(shoot.frames_version)),
    visiblePicks(shoot.id, shoot.studio_id),
  ]);
  const terms = termsOf(shoot);
  const submittedAt = shoot.picks_submitted_at ? new Date(shoot.picks_submitted_at).toISOString() : null;
  const extras = priceExtras({ picks: picks.length, allowance: terms.allowance, unitPriceMinor: terms.extraPriceMinor, taxRateBp: terms.taxRateBp, taxMode: terms.taxMode }).extras;
  return {
    shootId: shoot.id,
    title: shoot.title,
    studioName: shoot.studio_name,
    terms,
    frames,
    picks,
    submittedAt,
    canPick: shoot.stage === 'proofing' && !submittedAt,
    awaitingPayment: !!submittedAt && shoot.stage === 'proofing' && extras > 0 && !paid,
    extrasPaid: paid,
  };
}

// ---------------------------------------------------------------------------------------------
// Picks

const dateText = (d: Date | string) => new Date(d).toLocaleDateString('en-GB', { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' });

/**
 * Locks the client's shoot against a concurrent submit (shared: pick writes do not wait for each
 * other) and refuses once picks are sent or the shoot has moved past proofing.
 */
async function openShootForPicks(trx: Knex.Transaction, client: SessionClient) {
  const shoot = await trx('shoots').where({ id: client.shootId, studio_id: client.studioId }).forShare().first('id', 'studio_id', 'stage', 'picks_submitted_at');
  if (!shoot) throw notFound('No such gallery.');
  if (shoot.picks_submitted_at) {
    const studio = await trx('studios').where({ id: shoot.studio_id }).first('name');
    throw conflict(`Your picks were sent to the studio on ${dateText(shoot.picks_submitted_at)}. To change them, ask ${studio?.name ?? 'the studio'} to reopen them.`);
  }
  if (shoot.stage !== 'proofing') throw conflict('Picks for this shoot are closed. Please contact your studio.');
  return shoot;
}

async function assertPickableFrame(trx: Knex.Transaction, client: SessionClient, frameId: string) {
  if (!isUuid(frameId)) throw notFound('No such frame in this gallery.');
  const frame = await visibleFrames(trx('frames as f')).where({ 'f.id': frameId, 'f.shoot_id': client.shootId, 'f.studio_id': client.studioId }).first('f.id');
  if (!frame) throw notFound('No such frame in this gallery.');
}

/** Picks a frame (again), setting its note when one is given. Repeating it changes nothing. */
export async function savePick(client: SessionClient, frameId: string, input: PickInput): Promise<GalleryPick> {
  return db().transaction(async (trx) => {
    await openShootForPicks(trx, client);
    await assertPickableFrame(trx, client, frameId);
    const hasNote = input.note !== undefined;
    const { rows } = await trx.raw(
      `INSERT INTO picks (studio_id, shoot_id, frame_id, note) VALUES (?, ?, ?, ?)
       ON CONFLICT (frame_id) DO UPDATE SET
         note = CASE WHEN ?::boolean THEN EXCLUDED.note ELSE picks.note END,
         updated_at = CASE WHEN ?::boolean AND picks.note IS DISTINCT FROM EXCLUDED.note THEN now() ELSE picks.updated_at END
       RETURNING frame_id, note, updated_at`,
      [client.studioId, client.shootId, frameId, input.note ?? '', hasNote, hasNote],
    );
    const r = rows[0];
    return { frameId: r.frame_id, note: r.note, updatedAt: new Date(r.updated_at).toISOString() };
  });
}

/** Takes a frame out of the picks. Taking out a frame that is not picked is fine (idempotent). */
export async function removePick(client: SessionClient, frameId: string): Promise<void> {
  await db().transaction(async (trx) => {
    await openShootForPicks(trx, client);
    await assertPickableFrame(trx, client, frameId);
    await trx('picks').where({ frame_id: frameId, shoot_id: client.shootId, studio_id: client.studioId }).delete();
  });
}

/**
 * Sends the client's picks to the studio and locks them. Without extras the shoot moves to
 * `picks_in` and the studio's owners get the list by e-mail; with extras the picks stay locked
 * in `proofing` until the extras are paid (the payment side then calls `completePicks`).
 */
export async function submitPicks(client: SessionClient): Promise<SubmitResult> {
  const { result, mailIds } = await db().transaction(async (trx) => {
    const shoot = await trx('shoots').where({ id: client.shootId, studio_id: client.studioId }).forUpdate().first();
    if (!shoot) throw notFound('No such gallery.');
    if (shoot.picks_submitted_at) {
      throw conflict(`Your picks were sent to the studio on ${dateText(shoot.picks_submitted_at)}. To change them, ask the studio to reopen them.`);
    }
    if (shoot.stage !== 'proofing') throw conflict('Picks for this shoot are closed. Please contact your studio.');
    // A frame the studio hid after it was picked is no longer the client's to pay for.
    const dropped = await trx('picks').where({ shoot_id: shoot.id, studio_id: shoot.studio_id })
      .whereIn('frame_id', trx('frames').where({ shoot_id: shoot.id }).where((q) => q.whereNot('state', 'ready').orWhere('hidden', true)).select('id'))
      .delete();
    const picks = await visiblePicks(shoot.id, shoot.studio_id, trx);
    if (picks.length === 0) throw conflict('Pick at least one frame before sending your picks.');
    const terms = termsOf(shoot);
    const price = priceExtras({ picks: picks.length, allowance: terms.allowance, unitPriceMinor: terms.extraPriceMinor, taxRateBp: terms.taxRateBp, taxMode: terms.taxMode });
    await trx('shoots').where({ id: shoot.id }).update({ picks_submitted_at: trx.fn.now(), updated_at: trx.fn.now() });
    await audit({
      studioId: shoot.studio_id, actorKind: 'client', actorId: client.clientId, action: 'picks.submitted', subjectType: 'shoot', subjectId: shoot.id,
      details: { picks: picks.length, extras: price.extras, totalMinor: price.totalMinor, currency: terms.currency, droppedHidden: dropped },
    }, trx);
    const needsPayment = price.extras > 0 && price.totalMinor > 0;
    const ids = needsPayment ? [] : await completePicks(trx, shoot.id);
    return { result: { needsPayment, extras: price.extras, totalMinor: price.totalMinor }, mailIds: ids };
  });
  await dispatchMail(mailIds);
  return result;
}

/**
 * The picks are final (sent without extras, or the extras are paid): the shoot moves to
 * `picks_in` and the studio's owners get the list, with the payment in the same e-mail when the
 * extras were paid. Call inside the transaction that makes them final; returns outbox ids to hand
 * to `dispatchMail` after commit.
 */
export interface PicksPayment {
  /** The amount paid, formatted for its currency. */
  total: string;
  /** The receipt's lines (extras × price, tax, total). */
  lines: string[];
}

export async function completePicks(trx: Knex.Transaction, shootId: string, payment?: PicksPayment): Promise<string[]> {
  const shoot = await trx('shoots as s').join('clients as c', 'c.id', 's.client_id').join('studios as st', 'st.id', 's.studio_id')
    .where('s.id', shootId)
    .first('s.id', 's.studio_id', 's.title', 's.allowance', 's.stage', 'c.name as client_name', 'st.name as studio_name', 'st.brand_colour');
  if (!shoot) throw notFound('No such shoot.');
  if (shoot.stage === 'proofing') await trx('shoots').where({ id: shootId }).update({ stage: 'picks_in', updated_at: trx.fn.now() });
  const picks: Row[] = await visibleFrames(trx('picks as k').join('frames as f', 'f.id', 'k.frame_id'))
    .where({ 'k.shoot_id': shootId })
    .orderByRaw(captureOrder('f'))
    .select('f.original_name', 'k.note');
  const owners: string[] = await trx('memberships as m').join('users as u', 'u.id', 'm.user_id')
    .where({ 'm.studio_id': shoot.studio_id, 'm.role': 'owner' }).pluck('u.email');
  const extra = Math.max(0, picks.length - shoot.allowance);
  const sent = `${picks.length} ${picks.length === 1 ? 'pick' : 'picks'}`;
  const paragraphs = [
    `${shoot.client_name} has chosen ${picks.length} ${picks.length === 1 ? 'frame' : 'frames'} from “${shoot.title}”. The package includes ${shoot.allowance}` +
      (extra ? `, so ${extra} ${extra === 1 ? 'is an extra retouch' : 'are extra retouches'}${payment ? ', paid' : ''}.` : '.'),
  ];
  if (payment) {
    paragraphs.push(
      `${shoot.client_name} paid ${payment.total}. The picks are locked and the shoot has moved to retouching.`,
      payment.lines.join('\n'),
      'Fillcard works out the figures; your local tax rules decide how they must appear on an invoice.',
    );
  }
  paragraphs.push(picks.map((p, i) => `${i + 1}. ${p.original_name}${p.note ? `\n    Note: ${p.note}` : ''}`).join('\n'));
  const body = renderMail({
    studioName: shoot.studio_name,
    brandColour: shoot.brand_colour,
    heading: payment ? `${shoot.client_name} sent ${sent} and paid for the extras` : `${shoot.client_name} sent ${sent}`,
    paragraphs,
    button: { label: 'Open the picks', url: `${config().PUBLIC_ORIGIN}/desk/shoots/${shootId}/client` },
  });
  // One e-mail per event: a paid submission is announced once, with the money and the list together.
  const subject = payment
    ? `Paid: ${shoot.client_name} — ${payment.total} for “${shoot.title}” (${sent})`
    : `Picks in: “${shoot.title}” (${picks.length})`;
  const ids: string[] = [];
  for (const to of owners) {
    ids.push(await queueMail({ to, studioId: shoot.studio_id, subject, ...body }, trx));
  }
  return ids;
}

// ---------------------------------------------------------------------------------------------
// The studio's side

export interface StudioPick {
  frameId: string;
  name: string;
  note: string;
  hidden: boolean;
  thumb: { url: string; width: number; height: number } | null;
  updatedAt: string;
}

/** The client's picks with their notes and thumbnails, for the studio's Client & picks tab. */
export async function picksForStudio(shootId: string, studioId: string): Promise<StudioPick[]> {
  const rows: Row[] = await joinVariant(db()('picks as k').join('frames as f', 'f.id', 'k.frame_id'), 't', 'thumb', 'leftJoin')
    .where({ 'k.shoot_id': shootId, 'k.studio_id': studioId })
    .orderByRaw(captureOrder('f'))
    .select('k.frame_id', 'k.note', 'k.updated_at', 'f.original_name', 'f.hidden', 'f.state', ...variantColumns('t'));
  return rows.map((r) => ({
    frameId: r.frame_id,
    name: r.original_name,
    note: r.note,
    hidden: r.hidden || r.state !== 'ready',
    thumb: variantImage(r, 't'),
    updatedAt: new Date(r.updated_at).toISOString(),
  }));
}

export async function readyFrameCount(shootId: string, studioId: string): Promise<number> {
  const row = await visibleFrames(db()('frames as f')).where({ 'f.shoot_id': shootId, 'f.studio_id': studioId }).count<{ n: string }[]>('* as n').first();
  return Number(row?.n ?? 0);
}

export interface SentLink {
  url: string;
  to: string;
  sentAt: string;
  /** An earlier link existed and has stopped working. */
  replaced: boolean;
}

function extraPriceText(shoot: { extra_price_minor: number; currency: string; tax_mode: string; tax_rate_bp: number }) {
  const price = formatMoney(shoot.extra_price_minor, String(shoot.currency).trim());
  if (shoot.tax_rate_bp === 0) return price;
  return `${price} ${shoot.tax_mode === 'inclusive' ? 'including tax' : 'plus tax'}`;
}

/**
 * Sends the client a fresh viewing link (the earlier one stops working, and so do sessions opened
 * with it). The link, the e-mail, the stage move and the audit record commit together.
 */
export async function sendViewingLink(member: SessionMember, shootId: string, input: SendLinkInput): Promise<SentLink> {
  const shoot = await shootForMember(member, shootId);
  if (shoot.stage === 'archived') throw conflict('This shoot is archived. Bring it back before sending a link.');
  if (['draft', 'proofing', 'picks_in', 'retouching'].includes(shoot.stage) && new Date(shoot.proof_expires_at) < new Date()) {
    throw conflict(`The proofs closed on ${dateText(shoot.proof_expires_at)}. Move the proof expiry date on the Details tab first, then send the link.`);
  }
  const ready = await readyFrameCount(shoot.id, shoot.studio_id);
  if (ready === 0) throw conflict('There are no ready frames to show yet. Upload frames and wait until they are processed, then send the link.');
  try {
    await limitRate(`link:studio:${member.studioId}`, LINK_SENDS_PER_HOUR, 3600);
  } catch (err) {
    if (err instanceof HttpError && err.status === 429) {
      throw new HttpError(429, `Your studio has sent ${LINK_SENDS_PER_HOUR} viewing links in the last hour. Please wait a little before sending another.`, err.headers);
    }
    throw err;
  }

  const token = newToken();
  const url = viewingLinkUrl(token);
  const { outboxId, to, sentAt, replaced } = await db().transaction(async (trx) => {
    const locked = await trx('shoots').where({ id: shoot.id, studio_id: member.studioId }).forUpdate().first('stage', 'link_token_hash', 'link_revoked_at');
    const client = await trx('clients').where({ id: shoot.client_id, studio_id: member.studioId }).first('name', 'email');
    const studio = await trx('studios').where({ id: member.studioId }).first('name', 'brand_colour');
    // The same steps as issueViewingLink, inside this transaction so link and e-mail commit as one.
    const [updated] = await trx('shoots').where({ id: shoot.id, studio_id: member.studioId }).update({
      link_token_hash: hashToken(token),
      link_revoked_at: null,
      link_sent_at: trx.fn.now(),
      stage: locked.stage === 'draft' ? 'proofing' : locked.stage,
      updated_at: trx.fn.now(),
    }).returning('link_sent_at');
    await trx('client_sessions').where({ shoot_id: shoot.id }).delete();
    const paragraphs = [`Hello ${client.name},`];
    if (input.message) paragraphs.push(input.message);
    paragraphs.push(
      shoot.picks_submitted_at
        ? `Here is a fresh link to the proofs from “${shoot.title}”. Your picks are already with me; you can look through all ${ready} ${ready === 1 ? 'frame' : 'frames'} again.`
        : `The proofs from “${shoot.title}” are ready: ${ready} ${ready === 1 ? 'frame' : 'frames'} to look through. Pick the ones you would like retouched, and add a note to any of them.`,
      `Your package includes ${shoot.allowance} retouched ${shoot.allowance === 1 ? 'frame' : 'frames'}` +
        (shoot.extra_price_minor > 0 ? `; each extra one is ${extraPriceText(shoot)}.` : '.'),
      `The gallery is open until ${dateText(shoot.proof_expires_at)}.` + (shoot.passcode_hash ? ' Open it with the passcode I gave you.' : ''),
    );
    const body = renderMail({
      studioName: studio.name,
      brandColour: studio.brand_colour,
      heading: 'Your proofs are ready to choose from',
      paragraphs,
      button: { label: 'Open your gallery', url },
      footer: 'This link is personal: please do not forward it. Sent by Fillcard on behalf of the studio.',
    });
    const id = await queueMail({ to: client.email, studioId: member.studioId, subject: `Your proofs from ${studio.name}`, ...body }, trx);
    await audit({
      studioId: member.studioId, actorKind: 'member', actorId: member.userId, action: 'link.sent', subjectType: 'shoot', subjectId: shoot.id,
      details: { to: client.email, replacedEarlierLink: !!locked.link_token_hash && !locked.link_revoked_at, withMessage: !!input.message },
    }, trx);
    return { outboxId: id, to: client.email as string, sentAt: new Date(updated.link_sent_at).toISOString(), replaced: !!locked.link_token_hash && !locked.link_revoked_at };
  });
  await dispatchMail([outboxId]);
  return { url, to, sentAt, replaced };
}

/** Withdraws the viewing link: it and every session opened with it stop working at once. */
export async function withdrawViewingLink(member: SessionMember, shootId: string): Promise<void> {
  const shoot = await shootForMember(member, shootId);
  await db().transaction(async (trx) => {
    // The hash stays, so the withdrawn link can still show whose it was and how to reach them.
    await trx('shoots').where({ id: shoot.id, studio_id: member.studioId }).update({ link_revoked_at: trx.fn.now(), updated_at: trx.fn.now() });
    await trx('client_sessions').where({ shoot_id: shoot.id }).delete();
    await audit({ studioId: member.studioId, actorKind: 'member', actorId: member.userId, action: 'link.revoked', subjectType: 'shoot', subjectId: shoot.id }, trx);
  });
}

/**
 * Lets the client change sent picks. Refused once extras are paid (what was paid for must stay
 * clear) and once retouching has begun.
 */
export async function reopenPicks(member: SessionMember, shootId: string): Promise<void> {
  const found = await shootForMember(member, shootId);
  await db().transaction(async (trx) => {
    const shoot = await trx('shoots').where({ id: found.id, studio_id: member.studioId }).forUpdate().first('id', 'stage', 'picks_submitted_at');
    if (!shoot.picks_submitted_at) throw conflict('The client has not sent picks yet, so there is nothing to reopen.');
    if (!['proofing', 'picks_in'].includes(shoot.stage)) throw conflict('Retouching has started on these picks; they can no longer be reopened.');
    if (await hasPaidOrder(shoot.id, trx)) {
      throw conflict('The client has paid for extra retouches on these picks. Refund that order first, so what was paid for stays clear.');
    }
    // A payment page still open would let the client pay for picks that are being changed.
    if (await trx('orders').where({ shoot_id: shoot.id, state: 'pending' }).first('id')) {
      throw conflict('The client has a payment in progress for these picks. Try again once it finishes or expires (within a day).');
    }
    await trx('shoots').where({ id: shoot.id }).update({ picks_submitted_at: null, stage: 'proofing', updated_at: trx.fn.now() });
    await audit({ studioId: member.studioId, actorKind: 'member', actorId: member.userId, action: 'picks.reopened', subjectType: 'shoot', subjectId: shoot.id, details: { fromStage: shoot.stage } }, trx);
  });
}

