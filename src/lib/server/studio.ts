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
        <radialGradient id="bg" cx="0.3" cy="0.28" r="0.95">
          <stop offset="0" stop-color="#f2ebe1"/><stop offset="0.5" stop-color="#b7a999"/><stop offset="1" stop-color="#3f3a35"/>
        </radialGradient>
        <linearGradient id="key" x1="0" y1="0" x2="1" y2="0.2">
          <stop offset="0" stop-color="#f3d6c0"/><stop offset="0.55" stop-color="#c8957a"/><stop offset="1" stop-color="#6e4b3c"/>
        </linearGradient>
        <linearGradient id="coat" x1="0" y1="0" x2="1" y2="0.6">
          <stop offset="0" stop-color="#56636c"/><stop offset="0.6" stop-color="#262f35"/><stop offset="1" stop-color="#111518"/>
        </linearGradient>
        <linearGradient id="hair" x1="0" y1="0" x2="1" y2="1">
          <stop offset="0" stop-color="#6b4630"/><stop offset="1" stop-color="#1c120c"/>
        </linearGradient>
        <radialGradient id="vignette" cx="0.5" cy="0.45" r="0.75">
          <stop offset="0.6" stop-color="#000" stop-opacity="0"/><stop offset="1" stop-color="#000" stop-opacity="0.45"/>
        </radialGradient>
      </defs>
      <rect width="640" height="800" fill="url(#bg)"/>
      <path d="M40 800 C 70 650, 180 580, 318 570 C 460 578, 566 650, 600 800 Z" fill="url(#coat)"/>
      <path d="M276 452 C 284 520, 282 560, 270 590 C 300 612, 344 612, 372 590 C 358 560, 354 520, 362 452 Z" fill="url(#key)"/>
      <path d="M268 588 C 296 640, 344 640, 374 588 L 380 600 C 350 660, 292 660, 262 600 Z" fill="#e9e2d6"/>
      <ellipse cx="320" cy="372" rx="104" ry="134" fill="url(#key)"/>
      <path d="M206 392 C 180 250, 262 196, 330 198 C 420 200, 462 270, 440 410 C 452 330, 410 276, 318 272 C 244 276, 210 320, 206 392 Z" fill="url(#hair)"/>
      <path d="M214 360 C 196 470, 214 560, 250 600 C 232 520, 226 440, 232 380 Z" fill="url(#hair)"/>
      <rect width="640" height="800" fill="url(#vignette)"/>
    </svg>`))
    .blur(2)
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
