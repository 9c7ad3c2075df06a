import { ImageRejected, IMAGE_LIMITS, formatMegabytes } from './errors';

/** The image formats Fillcard decodes. */
export type ImageType = 'jpeg' | 'png' | 'tiff' | 'webp';

const TYPE_NAMES: Record<ImageType, string> = {
  jpeg: 'a JPEG',
  png: 'a PNG',
  tiff: 'a TIFF',
  webp: 'a WebP',
};

const EXTENSIONS: Record<string, ImageType> = {
  jpg: 'jpeg',
  jpeg: 'jpeg',
  jpe: 'jpeg',
  png: 'png',
  tif: 'tiff',
  tiff: 'tiff',
  webp: 'webp',
};

const RAW_EXTENSIONS = new Set([
  'dng', 'cr2', 'cr3', 'crw', 'nef', 'nrw', 'arw', 'srf', 'sr2', 'raf', 'orf', 'rw2', 'pef', 'srw',
  'x3f', '3fr', 'fff', 'iiq', 'erf', 'kdc', 'dcr', 'mos', 'mef', 'mrw', 'rwl', 'raw',
]);

function startsWith(head: Uint8Array, bytes: number[], at = 0): boolean {
  if (head.length < at + bytes.length) return false;
  return bytes.every((b, i) => head[at + i] === b);
}

function ascii(head: Uint8Array, from: number, to: number): string {
  return String.fromCharCode(...head.subarray(from, Math.min(to, head.length)));
}

/**
 * The image type by file signature (the first bytes), never by name or declared MIME type, which
 * a browser or a renamed file can get wrong. Twelve bytes are enough.
 */
export function sniffImageType(head: Uint8Array): ImageType | null {
  if (startsWith(head, [0xff, 0xd8, 0xff])) return 'jpeg';
  if (startsWith(head, [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a])) return 'png';
  if (startsWith(head, [0x49, 0x49, 0x2a, 0x00]) || startsWith(head, [0x4d, 0x4d, 0x00, 0x2a])) return 'tiff';
  if (ascii(head, 0, 4) === 'RIFF' && ascii(head, 8, 12) === 'WEBP') return 'webp';
  return null;
}

/** What a file that is not a supported image seems to be, in words for the rejection message. */
export function describeNonImage(head: Uint8Array): string {
  if (head.length === 0) return 'empty';
  if (startsWith(head, [0x47, 0x49, 0x46, 0x38])) return 'a GIF animation or graphic';
  if (ascii(head, 0, 5) === '%PDF-') return 'a PDF document';
  if (startsWith(head, [0x50, 0x4b, 0x03, 0x04])) return 'a ZIP archive';
  const brand = ascii(head, 4, 12);
  if (brand === 'ftypheic' || brand === 'ftypheix' || brand === 'ftyphevc' || brand === 'ftypmif1') {
    return 'a HEIC photo';
  }
  if (brand === 'ftypavif') return 'an AVIF image';
  if (brand === 'ftypcrx ') return 'a raw camera file';
  const text = new TextDecoder('utf-8', { fatal: false })
    .decode(head.subarray(0, 2048))
    .replace(/^\uFEFF/, '')
    .trimStart()
    .toLowerCase();
  if (/<svg[\s>]/.test(text) || (text.startsWith('<?xml') && text.includes('svg'))) return 'an SVG drawing';
  if (/^<(!doctype html|html|head|body|script|iframe|meta|div|p[\s>])/.test(text)) return 'a web page (HTML)';
  if (text.startsWith('<?xml')) return 'an XML document';
  // Mostly printable bytes with no NULs reads as text to a person, whatever its encoding.
  const sample = head.subarray(0, 2048);
  let printable = 0;
  for (const b of sample) if (b === 9 || b === 10 || b === 13 || (b >= 32 && b !== 127)) printable++;
  if (!sample.includes(0) && printable / sample.length > 0.95) return 'a text file';
  return 'not a photo Fillcard can read';
}

function extensionOf(fileName: string): string | null {
  const base = fileName.split(/[\\/]/).pop() ?? '';
  const dot = base.lastIndexOf('.');
  if (dot <= 0 || dot === base.length - 1) return null;
  return base.slice(dot + 1).toLowerCase();
}

/** How a message names the file: “IMG_0412.jpg”, or "This file" when the name is unknown. */
function subjectOf(fileName: string | undefined): string {
  const base = (fileName?.split(/[\\/]/).pop() ?? '').replace(/[\u0000-\u001f\u007f-\u009f]/g, '').trim();
  if (!base) return 'This file';
  return `“${base.length > 80 ? `${base.slice(0, 77)}…` : base}”`;
}

const ACCEPTED = 'JPEG, PNG, TIFF or WebP';

function notAnImage(name: string, head?: Uint8Array): ImageRejected {
  const what = head ? describeNonImage(head) : 'not a photo Fillcard can read';
  if (what === 'empty') return new ImageRejected('empty', `${name} is empty (0 bytes). Please upload it again.`);
  if (what === 'a HEIC photo' || what === 'an AVIF image' || what === 'a GIF animation or graphic') {
    return new ImageRejected(
      'unsupported_type',
      `${name} is ${what}. Fillcard takes ${ACCEPTED} files: please export it as JPEG and upload that.`,
    );
  }
  if (what === 'a raw camera file') {
    return new ImageRejected(
      'raw_not_supported',
      `${name} is a raw camera file. Please export it as JPEG from your editor and upload that.`,
    );
  }
  const phrase = what.startsWith('not ') ? `is ${what}` : `is ${what}, not a photo`;
  return new ImageRejected('not_an_image', `${name} ${phrase}. Fillcard takes ${ACCEPTED} files.`);
}

/**
 * Throws ImageRejected unless the file name's extension names the same type as its signature.
 * A mismatch is refused rather than guessed around: the name travels on into downloads and a
 * client's software trusts it. Pass the first bytes as `head` for a message saying what the file
 * really is.
 */
export function checkNameMatchesType(fileName: string, type: ImageType | null, head?: Uint8Array): void {
  const name = subjectOf(fileName);
  const ext = extensionOf(fileName);
  if (ext && RAW_EXTENSIONS.has(ext)) {
    throw new ImageRejected(
      'raw_not_supported',
      `${name} is a raw camera file. Please export it as JPEG from your editor and upload that.`,
    );
  }
  if (type === null) throw notAnImage(name, head);
  if (!ext) {
    throw new ImageRejected(
      'missing_extension',
      `${name} has no file extension. Please name it .jpg (or .png, .tif, .webp) to match its contents.`,
    );
  }
  const named = EXTENSIONS[ext];
  if (!named) {
    throw new ImageRejected(
      'extension_mismatch',
      `${name} is named .${ext} but holds ${TYPE_NAMES[type]} image. Please rename it to match its contents.`,
    );
  }
  if (named !== type) {
    throw new ImageRejected(
      'extension_mismatch',
      `${name} is named as ${TYPE_NAMES[named]} file but holds ${TYPE_NAMES[type]} image. ` +
        `Please export it again, or rename it to match its contents.`,
    );
  }
}

/**
 * The checks that need no decoding: size, signature and (when known) name. Returns the type.
 */
export function checkUpload(buf: Uint8Array, fileName?: string): ImageType {
  const name = subjectOf(fileName);
  if (buf.length === 0) throw new ImageRejected('empty', `${name} is empty (0 bytes). Please upload it again.`);
  if (buf.length > IMAGE_LIMITS.maxBytes) {
    throw new ImageRejected(
      'too_large',
      `${name} is ${formatMegabytes(buf.length)}; Fillcard takes files up to ${formatMegabytes(IMAGE_LIMITS.maxBytes)}. ` +
        `Please export it as a high-quality JPEG.`,
    );
  }
  const head = buf.subarray(0, 4096);
  const type = sniffImageType(head);
  if (fileName !== undefined) checkNameMatchesType(fileName, type, head);
  if (type === null) throw notAnImage(name, head);
  return type;
}
