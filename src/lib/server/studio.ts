/**
 * The studio as a whole: its settings, its watermark (logo and preview) and the desk's table of
 * shoots. Every query is scoped by the member's studio.
 */
import sharp from 'sharp';
import { db } from './db';
import { audit } from './audit';
import { can } from './permissions';
import { forbidden, HttpError } from './http';
import { deleteObject, getObjectBuffer, keys, putObject } from './storage';
import { checkUpload, ImageRejected } from './images';
import { watermarkOverlay } from './images/watermark';
import { parseMoney, toDecimalText } from '../currency';
import {
  LOGO_MAX_BYTES,
  type DeskShootRow,
  type DeskShootsPage,
  type DeskShootsQuery,
  type StudioSettings,
  type StudioSettingsDto,
} from '../schemas/studio';
import { STAGES, type Stage } from '../schemas/shoot';
import type { SessionMember } from './auth';

// ---------------------------------------------------------------------------------------------
// Settings

export async function getStudioSettings(studioId: string): Promise<StudioSettingsDto> {
  const s = await db()('studios').where({ id: studioId }).first();
  if (!s) throw new HttpError(404, 'No such studio.');
  const currency = String(s.default_currency).trim();
  return {
    name: s.name,
    contactEmail: s.contact_email ?? '',
    contactPhone: s.contact_phone ?? '',
    brandColour: s.brand_colour,
    watermarkText: s.watermark_text,
    watermarkOpacityPct: Math.round(Number(s.watermark_opacity) * 100),
    defaultAllowance: s.default_allowance,
    defaultExtraPrice: toDecimalText(s.default_extra_price_minor, currency),
    defaultCurrency: currency as StudioSettings['defaultCurrency'],
    taxRatePct: s.tax_rate_bp / 100,
    taxMode: s.tax_mode,
    proofExpiryDays: s.proof_expiry_days,
    downloadExpiryDays: s.download_expiry_days,
    retentionDays: s.retention_days,
    hasLogo: !!s.watermark_logo_key,
  };
}

/** Saves the settings (already checked by studioSettingsSchema) and records what changed. */
export async function saveStudioSettings(member: SessionMember, input: StudioSettings): Promise<StudioSettingsDto> {
  const row = {
    name: input.name,
    contact_email: input.contactEmail || null,
    contact_phone: input.contactPhone || null,
    brand_colour: input.brandColour,
    watermark_text: input.watermarkText,
    watermark_opacity: input.watermarkOpacityPct / 100,
    default_allowance: input.defaultAllowance,
    default_extra_price_minor: parseMoney(input.defaultExtraPrice, input.defaultCurrency),
    default_currency: input.defaultCurrency,
    tax_rate_bp: Math.round(input.taxRatePct * 100),
    tax_mode: input.taxMode,
    proof_expiry_days: input.proofExpiryDays,
    download_expiry_days: input.downloadExpiryDays,
    retention_days: input.retentionDays,
  };
  await db().transaction(async (trx) => {
    const before = await trx('studios').where({ id: member.studioId }).forUpdate().first(Object.keys(row));
    await trx('studios').where({ id: member.studioId }).update({ ...row, updated_at: trx.fn.now() });
    const changed = Object.keys(row).filter((k) => String(before?.[k] ?? '').trim() !== String((row as Record<string, unknown>)[k] ?? ''));
    await audit({ studioId: member.studioId, actorKind: 'member', actorId: member.userId, action: 'studio.settings_changed', subjectType: 'studio', subjectId: member.studioId, details: { changed } }, trx);
  });
  return getStudioSettings(member.studioId);
}

// ---------------------------------------------------------------------------------------------
// Watermark logo and preview

/**
 * Takes a PNG logo for the watermark: size first, then the file's signature (never its name or
 * declared type), then a real decode so a damaged file is refused here rather than in the worker.
 */
export async function saveWatermarkLogo(member: SessionMember, bytes: Buffer): Promise<void> {
  if (bytes.length > LOGO_MAX_BYTES) throw new HttpError(413, 'The logo is larger than 2 MB. Please export a smaller PNG.');
  let type: string;
  try {
    type = checkUpload(bytes);
  } catch (err) {
    if (err instanceof ImageRejected) throw new HttpError(err.status, err.userMessage.replace('This file', 'The logo'));
    throw err;
  }
  if (type !== 'png') throw new HttpError(422, 'The logo must be a PNG (with a transparent background, ideally).');
  try {
    const meta = await sharp(bytes, { limitInputPixels: 25_000_000, failOn: 'error' }).metadata();
    if (!meta.width || !meta.height) throw new Error('no size');
  } catch {
    throw new HttpError(422, 'The logo file is damaged or incomplete. Please export it again as PNG.');
  }
  const key = keys.studioAsset(member.studioId, 'watermark-logo.png');
  await putObject(key, bytes, 'image/png');
  const old = await db().transaction(async (trx) => {
    const s = await trx('studios').where({ id: member.studioId }).forUpdate().first('watermark_logo_key');
    await trx('studios').where({ id: member.studioId }).update({ watermark_logo_key: key, updated_at: trx.fn.now() });
    await audit({ studioId: member.studioId, actorKind: 'member', actorId: member.userId, action: 'studio.watermark_logo_set', subjectType: 'studio', subjectId: member.studioId }, trx);
    return s?.watermark_logo_key as string | null;
  });
  if (old) await deleteObject(old).catch((err) => console.error('[fillcard] old watermark logo not deleted:', err));
}

export async function removeWatermarkLogo(member: SessionMember): Promise<void> {
  const old = await db().transaction(async (trx) => {
    const s = await trx('studios').where({ id: member.studioId }).forUpdate().first('watermark_logo_key');
    await trx('studios').where({ id: member.studioId }).update({ watermark_logo_key: null, updated_at: trx.fn.now() });
    await audit({ studioId: member.studioId, actorKind: 'member', actorId: member.userId, action: 'studio.watermark_logo_removed', subjectType: 'studio', subjectId: member.studioId }, trx);
    return s?.watermark_logo_key as string | null;
  });
  if (old) await deleteObject(old).catch((err) => console.error('[fillcard] watermark logo not deleted:', err));
}

export const PREVIEW_WIDTH = 640;
export const PREVIEW_HEIGHT = 800;

/**
 * A stand-in sitting drawn once per process: a lit backdrop and a head-and-shoulders figure, so
 * the preview shows the watermark over both light and dark tones as a real proof would.
 */
let sampleFrame: Promise<Buffer> | undefined;
function sampleRaw(): Promise<Buffer> {
  sampleFrame ??= sharp(Buffer.from(`
    <svg xmlns="http://www.w3.org/2000/svg" width="${PREVIEW_WIDTH}" height="${PREVIEW_HEIGHT}" viewBox="0 0 640 800">
      <defs>
        <radialGradient id="bg" cx="0.38" cy="0.3" r="0.85">
          <stop offset="0" stop-color="#efe6da"/><stop offset="0.55" stop-color="#b9ab9a"/><stop offset="1" stop-color="#5d554d"/>
        </radialGradient>
        <radialGradient id="skin" cx="0.4" cy="0.35" r="0.7">
          <stop offset="0" stop-color="#f1cfb5"/><stop offset="0.7" stop-color="#cf9f82"/><stop offset="1" stop-color="#9c6f57"/>
        </radialGradient>
        <linearGradient id="coat" x1="0" y1="0" x2="1" y2="1">
          <stop offset="0" stop-color="#3b4a55"/><stop offset="1" stop-color="#161d22"/>
        </linearGradient>
        <linearGradient id="hair" x1="0" y1="0" x2="0.3" y2="1">
          <stop offset="0" stop-color="#5a3a26"/><stop offset="1" stop-color="#24160e"/>
        </linearGradient>
      </defs>
      <rect width="640" height="800" fill="url(#bg)"/>
      <path d="M70 800 C 90 640, 190 575, 320 565 C 450 575, 550 640, 570 800 Z" fill="url(#coat)"/>
      <path d="M282 470 L 358 470 L 366 590 C 340 610, 300 610, 274 590 Z" fill="#c2917a"/>
      <path d="M300 588 L 320 650 L 340 588 Z" fill="#f4efe6"/>
      <ellipse cx="320" cy="385" rx="102" ry="132" fill="url(#skin)"/>
      <path d="M214 380 C 200 250, 270 212, 330 214 C 410 216, 446 276, 428 392 C 418 320, 380 292, 322 290 C 262 292, 226 320, 214 380 Z" fill="url(#hair)"/>
      <ellipse cx="283" cy="388" rx="13" ry="7" fill="#3a2a22"/>
      <ellipse cx="357" cy="388" rx="13" ry="7" fill="#3a2a22"/>
      <path d="M292 462 C 308 474, 334 474, 350 462" stroke="#9a5a4c" stroke-width="6" fill="none" stroke-linecap="round"/>
      <ellipse cx="470" cy="180" rx="120" ry="60" fill="#ffffff" opacity="0.25"/>
    </svg>`))
    .blur(1.2)
    .removeAlpha()
    .raw()
    .toBuffer();
  return sampleFrame;
}

/** The sample frame with the studio's watermark, through the same overlay the proof builder uses. */
export async function renderWatermarkPreview(spec: { text: string; opacity: number; logo?: Buffer | null }): Promise<Buffer> {
  const raw = await sampleRaw();
  const overlay = await watermarkOverlay(spec, PREVIEW_WIDTH, PREVIEW_HEIGHT);
  let img = sharp(raw, { raw: { width: PREVIEW_WIDTH, height: PREVIEW_HEIGHT, channels: 3 } });
  if (overlay) img = img.composite([{ input: overlay.data, raw: { width: overlay.width, height: overlay.height, channels: overlay.channels }, blend: 'over' }]);
  return img.jpeg({ quality: 82, mozjpeg: true }).toBuffer();
}

export async function studioLogo(studioId: string): Promise<Buffer | null> {
  const s = await db()('studios').where({ id: studioId }).first('watermark_logo_key');
  if (!s?.watermark_logo_key) return null;
  return getObjectBuffer(s.watermark_logo_key, LOGO_MAX_BYTES + 1024).catch(() => null);
}

// ---------------------------------------------------------------------------------------------
// The desk's shoots table

/** Sort expressions by column name: the only SQL a request can choose, and it chooses by name. */
const SORT_SQL: Record<DeskShootsQuery['sort'], string> = {
  client: 'lower(c.name)',
  date: 's.shot_on',
  title: 'lower(s.title)',
  stage: `array_position(ARRAY[${STAGES.map((s) => `'${s}'`).join(',')}]::text[], s.stage)`,
  frames: 'frames',
  picks: 'picks',
  // Totals in different currencies are compared as plain numbers; a studio rarely mixes them.
  extras: 'extras_paid_minor',
  expiry: 's.proof_expires_at',
};

/** "100%_off" → "100\%\_off": the search text matches itself, never as a pattern. */
export function escapeLike(text: string): string {
  return text.replace(/[\\%_]/g, (c) => `\\${c}`);
}

/**
 * One page of the studio's shoots, filtered, searched and sorted. Money (paid extras) is only
 * selected for members allowed to see it, and only they may sort by it.
 */
export async function listDeskShoots(member: SessionMember, q: DeskShootsQuery): Promise<DeskShootsPage> {
  const showMoney = can(member, 'money:view');
  if (q.sort === 'extras' && !showMoney) throw forbidden('Sorting by money is for studio owners.');
  const k = db();
  const filtered = () => {
    const b = k('shoots as s').join('clients as c', 'c.id', 's.client_id').where('s.studio_id', member.studioId);
    if (q.stage === 'active') b.whereNot('s.stage', 'archived');
    else if (q.stage !== 'all') b.where('s.stage', q.stage);
    if (q.q) {
      const pattern = `%${escapeLike(q.q)}%`;
      b.where((w) => w.whereRaw(`c.name ILIKE ? ESCAPE '\\'`, [pattern]).orWhereRaw(`s.title ILIKE ? ESCAPE '\\'`, [pattern]));
    }
    return b;
  };

  const [{ n: total }] = await filtered().count<{ n: string }[]>('* as n');
  const totalN = Number(total);
  const pageCount = Math.max(1, Math.ceil(totalN / q.pageSize));
  const page = Math.min(q.page, pageCount);

  const columns: (string | ReturnType<typeof k.raw>)[] = [
    's.id', 's.title', 's.stage', 's.allowance', 's.proof_expires_at', 'c.name as client_name',
    k.raw(`to_char(s.shot_on, 'YYYY-MM-DD') AS shot_on`),
    k.raw('(SELECT count(*)::int FROM frames f WHERE f.shoot_id = s.id AND f.studio_id = s.studio_id) AS frames'),
    k.raw('(SELECT count(*)::int FROM picks p WHERE p.shoot_id = s.id AND p.studio_id = s.studio_id) AS picks'),
  ];
  if (showMoney) {
    columns.push('s.currency', k.raw(
      `(SELECT COALESCE(sum(o.total_minor), 0)::bigint FROM orders o
         WHERE o.shoot_id = s.id AND o.studio_id = s.studio_id AND o.state = 'paid' AND o.currency = s.currency) AS extras_paid_minor`,
    ));
  }
  const dir = q.dir === 'asc' ? 'ASC' : 'DESC';
  const rows = totalN === 0 ? [] : await filtered()
    .select(columns)
    .orderByRaw(`${SORT_SQL[q.sort]} ${dir} NULLS LAST, s.shot_on DESC, s.created_at DESC, s.id`)
    .limit(q.pageSize)
    .offset((page - 1) * q.pageSize);

  let studioHasShoots = totalN > 0;
  if (!studioHasShoots) studioHasShoots = !!(await k('shoots').where({ studio_id: member.studioId }).first('id'));

  return {
    rows: rows.map((r): DeskShootRow => {
      const row: DeskShootRow = {
        id: r.id,
        title: r.title,
        clientName: r.client_name,
        shotOn: r.shot_on,
        stage: r.stage as Stage,
        frames: r.frames,
        picks: r.picks,
        allowance: r.allowance,
        proofExpiresAt: new Date(r.proof_expires_at).toISOString(),
      };
      if (showMoney) {
        row.extrasPaidMinor = Number(r.extras_paid_minor);
        row.currency = String(r.currency).trim();
      }
      return row;
    }),
    total: totalN,
    page,
    pageSize: q.pageSize,
    pageCount,
    showMoney,
    studioHasShoots,
    query: { ...q, page },
  };
}
