import exifr from 'exifr';
import sharp from 'sharp';
import { sniffImageType } from './signature';
import type { CameraSettings } from '../../dto';

/** Camera settings and capture facts of a frame, as stored with it. */
export interface FrameExif extends CameraSettings {
  /**
   * When the shutter fired. With an offset recorded this is the true instant; without one the
   * camera's wall-clock reading is stored as if it were UTC, so showing it in UTC shows what the
   * camera's clock said.
   */
  takenAt: Date | null;
  /** The camera's UTC offset at capture, "+02:00", when it recorded one. */
  takenAtOffset: string | null;
  /** Exif Orientation 1..8. */
  orientation: number | null;
}

export const EMPTY_EXIF: FrameExif = Object.freeze({
  cameraMake: null,
  cameraModel: null,
  lens: null,
  focalLengthMm: null,
  focalLength35mm: null,
  fNumber: null,
  exposureTimeS: null,
  exposureBiasEv: null,
  iso: null,
  flashFired: null,
  takenAt: null,
  takenAtOffset: null,
  orientation: null,
});

export const EXIF_TEXT_MAX = 200;

// C0/C1 controls, zero-width and bidirectional override characters: none belongs in a camera
// name, and the bidi ones can make a stored name display as something else.
const UNWANTED_CHARS = /[\u0000-\u001f\u007f-\u009f\u200b-\u200f\u202a-\u202e\u2060-\u2064\u2066-\u2069\ufeff]/g;

/**
 * A text tag made safe to store: controls removed, whitespace runs collapsed, trimmed, at most 200
 * characters. Markup is kept as the literal text it is; pages escape it when they render it.
 */
export function cleanExifText(value: unknown): string | null {
  if (typeof value !== 'string' && typeof value !== 'number') return null;
  const text = String(value).replace(UNWANTED_CHARS, ' ').replace(/\s+/g, ' ').trim();
  if (!text) return null;
  const chars = Array.from(text);
  return chars.length > EXIF_TEXT_MAX ? chars.slice(0, EXIF_TEXT_MAX).join('').trimEnd() : text;
}

function positive(value: unknown): number | null {
  const n = Array.isArray(value) ? value[0] : value;
  return typeof n === 'number' && Number.isFinite(n) && n > 0 ? n : null;
}

function finite(value: unknown): number | null {
  return typeof value === 'number' && Number.isFinite(value) ? value : null;
}

/** Removes binary-float noise (5.6000000001) without changing any meaningful digit. */
function tidy(n: number | null): number | null {
  return n === null ? null : Number(n.toPrecision(10));
}

const OFFSET = /^([+-])(\d{2}):(\d{2})$/;

function parseOffsetMinutes(offset: string): number | null {
  const m = OFFSET.exec(offset);
  if (!m) return null;
  const hours = Number(m[2]);
  const minutes = Number(m[3]);
  if (hours > 14 || minutes > 59) return null;
  return (m[1] === '-' ? -1 : 1) * (hours * 60 + minutes);
}

/** "2024:05:01 14:30:00" (Exif's own form; dashes tolerated) with optional sub-seconds and offset. */
export function parseExifDate(
  value: unknown,
  subSec: unknown,
  offset: unknown,
): { takenAt: Date; takenAtOffset: string | null } | null {
  if (typeof value !== 'string') return null;
  const m = /^(\d{4})[:-](\d{2})[:-](\d{2})[ T](\d{2}):(\d{2}):(\d{2})/.exec(value.trim());
  if (!m) return null;
  const [year, month, day, hour, minute, second] = m.slice(1).map(Number) as [number, number, number, number, number, number];
  if (year < 1900 || year > 2200 || month < 1 || month > 12 || day < 1 || day > 31 || hour > 23 || minute > 59 || second > 60) {
    return null;
  }
  let ms = 0;
  const sub = typeof subSec === 'number' ? String(subSec) : typeof subSec === 'string' ? subSec.trim() : '';
  if (/^\d+$/.test(sub)) ms = Math.round(Number(`0.${sub}`) * 1000) % 1000;
  const wallClock = Date.UTC(year, month - 1, day, hour, minute, Math.min(second, 59), ms);
  const check = new Date(wallClock);
  if (check.getUTCDate() !== day) return null; // 31 February and the like
  const offsetText = typeof offset === 'string' ? offset.trim() : '';
  const offsetMinutes = parseOffsetMinutes(offsetText);
  if (offsetMinutes === null) return { takenAt: check, takenAtOffset: null };
  return { takenAt: new Date(wallClock - offsetMinutes * 60_000), takenAtOffset: offsetText };
}

const PARSE_OPTIONS = {
  tiff: true,
  exif: true,
  gps: false,
  interop: false,
  ifd1: false,
  xmp: false,
  icc: false,
  iptc: false,
  jfif: false,
  ihdr: false,
  makerNote: false,
  userComment: false,
  translateKeys: true,
  // Raw numbers (Flash bit field, Orientation 1..8) and raw date strings: exifr's revived dates
  // would be read in the server's time zone.
  translateValues: false,
  reviveValues: false,
  sanitize: true,
  mergeOutput: true,
} as const;

/** Maps exifr's tag object to a FrameExif; exported for images whose EXIF block comes separately. */
export function frameExifFromTags(tags: Record<string, unknown> | null | undefined): FrameExif {
  if (!tags) return { ...EMPTY_EXIF };
  let fNumber = positive(tags.FNumber);
  const apertureValue = finite(tags.ApertureValue);
  if (fNumber === null && apertureValue !== null) fNumber = Number(Math.pow(2, apertureValue / 2).toFixed(1));
  let exposureTimeS = positive(tags.ExposureTime);
  const shutterSpeedValue = finite(tags.ShutterSpeedValue);
  if (exposureTimeS === null && shutterSpeedValue !== null) exposureTimeS = Math.pow(2, -shutterSpeedValue);
  const iso = positive(tags.ISO);
  const flash = finite(tags.Flash);
  const orientation = finite(tags.Orientation);
  const taken =
    parseExifDate(tags.DateTimeOriginal, tags.SubSecTimeOriginal, tags.OffsetTimeOriginal) ??
    parseExifDate(tags.CreateDate, tags.SubSecTimeDigitized, tags.OffsetTimeDigitized);
  return {
    cameraMake: cleanExifText(tags.Make),
    cameraModel: cleanExifText(tags.Model),
    lens: cleanExifText(tags.LensModel),
    focalLengthMm: tidy(positive(tags.FocalLength)),
    focalLength35mm: tidy(positive(tags.FocalLengthIn35mmFormat)),
    fNumber: tidy(fNumber),
    exposureTimeS: tidy(exposureTimeS),
    exposureBiasEv: tidy(finite(tags.ExposureCompensation)),
    iso: iso === null ? null : Math.round(iso),
    flashFired: flash === null ? null : (flash & 1) === 1,
    takenAt: taken?.takenAt ?? null,
    takenAtOffset: taken?.takenAtOffset ?? null,
    orientation: orientation !== null && Number.isInteger(orientation) && orientation >= 1 && orientation <= 8 ? orientation : null,
  };
}

/**
 * Reads a frame's EXIF with exifr. Never throws: a file with no or damaged EXIF is still a frame,
 * it just has no settings to show.
 */
export async function readFrameExif(buf: Buffer): Promise<FrameExif> {
  if (!buf || buf.length === 0) return { ...EMPTY_EXIF };
  let tags: Record<string, unknown> | undefined;
  try {
    // exifr does not read WebP's EXIF chunk; libvips hands it over as a TIFF block instead.
    tags = (await exifr.parse(sniffImageType(buf.subarray(0, 16)) === 'webp' ? await webpExifBlock(buf) : buf, PARSE_OPTIONS)) as
      | Record<string, unknown>
      | undefined;
  } catch {
    tags = undefined;
  }
  return frameExifFromTags(tags);
}

const EXIF_PREFIX = Buffer.from('Exif\0\0', 'latin1');

async function webpExifBlock(buf: Buffer): Promise<Buffer> {
  const block = (await sharp(buf, { limitInputPixels: false }).metadata()).exif;
  if (!block) throw new Error('no EXIF in this WebP');
  return block.subarray(0, 6).equals(EXIF_PREFIX) ? block.subarray(6) : block;
}

/** Whether any GPS position survives in a file; used to prove a delivered final carries none. */
export async function hasGpsPosition(buf: Buffer): Promise<boolean> {
  // No catch: if the file cannot be read we cannot say it is clean.
  const tags = (await exifr.parse(buf, { tiff: true, gps: true, exif: false, xmp: true, translateValues: false })) as
    | Record<string, unknown>
    | undefined;
  if (!tags) return false;
  return Object.keys(tags).some((k) => /^GPS(Latitude|Longitude|Position)$|^latitude$|^longitude$/.test(k));
}
