import { createHash } from 'node:crypto';
import { createRequire } from 'node:module';
import sharp from 'sharp';
import { sniffImageType } from './signature';

/** What the studio wants on its proofs. */
export interface WatermarkSpec {
  /** Usually the studio's name; tiled diagonally. */
  text: string;
  /** 0 (invisible) to 1 (solid). */
  opacity: number;
  /** A PNG (or JPEG/WebP) logo tiled upright instead of the text. */
  logo?: Buffer | null;
}

export interface WatermarkTile {
  data: Buffer;
  width: number;
  height: number;
  channels: 4;
}

/**
 * The font ships with the app: rendering through the system's fontconfig would pick whatever font
 * a server happens to have, or none.
 */
export const WATERMARK_FONT_FILE = createRequire(import.meta.url).resolve('dejavu-fonts-ttf/ttf/DejaVuSans-Bold.ttf');
const WATERMARK_FONT_FAMILY = 'DejaVu Sans Bold';

export const WATERMARK_TEXT_MAX = 80;
const ANGLE_DEGREES = -30; // rising left to right
const LOGO_MAX_PIXELS = 25_000_000;

/** Watermark text made safe for Pango, which reads sharp's text input as markup. */
export function watermarkMarkup(text: string): string {
  const clean = Array.from(text.replace(/[\u0000-\u001f\u007f-\u009f\u202a-\u202e\u2066-\u2069]/g, ' ').replace(/\s+/g, ' ').trim())
    .slice(0, WATERMARK_TEXT_MAX)
    .join('');
  return clean.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;').replace(/'/g, '&#39;');
}

async function renderTextMask(markup: string, fontPx: number): Promise<{ data: Buffer; width: number; height: number }> {
  const { data, info } = await sharp({
    text: { text: markup, font: `${WATERMARK_FONT_FAMILY} ${fontPx}`, fontfile: WATERMARK_FONT_FILE, dpi: 72 },
  })
    .extractChannel(0)
    .raw()
    .toBuffer({ resolveWithObject: true });
  return { data, width: info.width, height: info.height };
}

async function oneBand(
  input: { data: Buffer; width: number; height: number },
  edit: (s: sharp.Sharp) => sharp.Sharp,
): Promise<{ data: Buffer; width: number; height: number }> {
  const { data, info } = await edit(sharp(input.data, { raw: { width: input.width, height: input.height, channels: 1 } }))
    .extractChannel(0)
    .raw()
    .toBuffer({ resolveWithObject: true });
  return { data, width: info.width, height: info.height };
}

/**
 * A tile holding the stamp twice, the second copy half a tile lower (wrapping at the edge). The
 * tile's own repeat puts copies on shared diagonals; the second copy fills the band between them.
 * Where copies overlap the more opaque pixel wins.
 */
function staggered(stamp: WatermarkTile, gapX: number, gapY: number): WatermarkTile {
  const tileW = stamp.width + gapX;
  const tileH = stamp.height + gapY;
  const out = Buffer.alloc(tileW * tileH * 4);
  for (const [ox, oy] of [
    [0, 0],
    [0, tileH >> 1],
  ] as const) {
    for (let y = 0; y < stamp.height; y++) {
      const ty = (y + oy) % tileH;
      for (let x = 0; x < stamp.width; x++) {
        const s = (y * stamp.width + x) * 4;
        const alpha = stamp.data[s + 3]!;
        if (alpha === 0) continue;
        const d = (ty * tileW + ((x + ox) % tileW)) * 4;
        if (alpha > out[d + 3]!) stamp.data.copy(out, d, s, s + 4);
      }
    }
  }
  return { data: out, width: tileW, height: tileH, channels: 4 };
}

async function buildTextTile(text: string, opacity: number, shortEdge: number, longEdge: number): Promise<WatermarkTile | null> {
  const markup = watermarkMarkup(text);
  if (!markup) return null;
  let fontPx = Math.max(12, Math.round(shortEdge / 24));
  let mask = await renderTextMask(markup, fontPx);
  const maxWidth = longEdge * 0.4;
  if (mask.width > maxWidth) {
    fontPx = Math.max(10, Math.floor((fontPx * maxWidth) / mask.width));
    mask = await renderTextMask(markup, fontPx);
  }
  const pad = Math.ceil(fontPx / 6);
  const rotated = await oneBand(mask, (s) =>
    s.extend({ top: pad, bottom: pad, left: pad, right: pad, background: '#000' }).rotate(ANGLE_DEGREES, { background: '#000' }),
  );
  // A soft dark halo keeps white text readable on a white backdrop.
  const halo = await oneBand(rotated, (s) => s.blur(Math.max(1, fontPx / 20)));
  const px = rotated.width * rotated.height;
  const rgba = Buffer.alloc(px * 4);
  for (let i = 0; i < px; i++) {
    const aText = (rotated.data[i]! / 255) * opacity;
    const aHalo = Math.min(1, (halo.data[i]! / 255) * 1.6) * opacity * 0.45;
    const a = aText + aHalo * (1 - aText);
    if (a <= 0) continue;
    const v = Math.round((255 * aText) / a);
    rgba[i * 4] = v;
    rgba[i * 4 + 1] = v;
    rgba[i * 4 + 2] = v;
    rgba[i * 4 + 3] = Math.round(a * 255);
  }
  const stamp: WatermarkTile = { data: rgba, width: rotated.width, height: rotated.height, channels: 4 };
  return staggered(stamp, Math.round(fontPx * 1.5), 0);
}

async function buildLogoTile(logo: Buffer, opacity: number, shortEdge: number): Promise<WatermarkTile> {
  if (!sniffImageType(logo.subarray(0, 16))) throw new Error('watermark logo is not a PNG, JPEG, TIFF or WebP image');
  const box = Math.max(16, Math.round(shortEdge * 0.28));
  const { data, info } = await sharp(logo, { limitInputPixels: LOGO_MAX_PIXELS, failOn: 'error' })
    .rotate()
    .resize(box, box, { fit: 'inside' })
    .toColourspace('srgb')
    .ensureAlpha()
    .raw()
    .toBuffer({ resolveWithObject: true });
  if (info.channels !== 4) throw new Error(`watermark logo decoded to ${info.channels} channels`);
  for (let i = 3; i < data.length; i += 4) data[i] = Math.round(data[i]! * opacity);
  const stamp: WatermarkTile = { data, width: info.width, height: info.height, channels: 4 };
  return staggered(stamp, Math.round(box * 0.6), Math.round(box * 0.4));
}

/** Repeats a tile over a width×height canvas, centred so the pattern sits evenly on both sides. */
export function tileOver(tile: WatermarkTile, width: number, height: number): WatermarkTile {
  const out = Buffer.alloc(width * height * 4);
  const ox = (((tile.width - (width % tile.width)) >> 1) + tile.width) % tile.width;
  const oy = (((tile.height - (height % tile.height)) >> 1) + tile.height) % tile.height;
  const rowBytes = tile.width * 4;
  for (let y = 0; y < height; y++) {
    const srcRow = ((y + oy) % tile.height) * rowBytes;
    let x = 0;
    let sx = ox;
    while (x < width) {
      const run = Math.min(tile.width - sx, width - x);
      tile.data.copy(out, (y * width + x) * 4, srcRow + sx * 4, srcRow + (sx + run) * 4);
      x += run;
      sx = 0;
    }
  }
  return { data: out, width, height, channels: 4 };
}

// Proofs of one shoot share sizes and settings: render each tile and overlay once.
const tiles = new Map<string, Promise<WatermarkTile | null>>();
const overlays = new Map<string, Promise<WatermarkTile | null>>();
const TILES_MAX = 16;
const OVERLAYS_MAX = 4; // about 11 MB each at proof size

function remember<T>(map: Map<string, Promise<T>>, max: number, key: string, make: () => Promise<T>): Promise<T> {
  let value = map.get(key);
  if (!value) {
    value = make();
    value.catch(() => map.delete(key));
    map.set(key, value);
    if (map.size > max) map.delete(map.keys().next().value as string);
  }
  return value;
}

/**
 * A full-size RGBA overlay for a proof of width×height: the text (or logo) repeated over the whole
 * picture. Null when the spec draws nothing (no text and no logo, or opacity 0).
 */
export function watermarkOverlay(spec: WatermarkSpec, width: number, height: number): Promise<WatermarkTile | null> {
  const opacity = Number.isFinite(spec.opacity) ? Math.min(1, Math.max(0, spec.opacity)) : 0;
  if (opacity === 0) return Promise.resolve(null);
  const shortEdge = Math.min(width, height);
  const longEdge = Math.max(width, height);
  const logoKey = spec.logo ? createHash('sha256').update(spec.logo).digest('hex') : '';
  const tileKey = logoKey
    ? `logo|${logoKey}|${opacity}|${shortEdge}`
    : `text|${JSON.stringify(spec.text)}|${opacity}|${shortEdge}|${longEdge}`;
  return remember(overlays, OVERLAYS_MAX, `${tileKey}|${width}x${height}`, async () => {
    const tile = await remember(tiles, TILES_MAX, tileKey, () =>
      spec.logo ? buildLogoTile(spec.logo, opacity, shortEdge) : buildTextTile(spec.text, opacity, shortEdge, longEdge),
    );
    return tile ? tileOver(tile, width, height) : null;
  });
}

/**
 * Lays an RGBA overlay of the same size over RGB pixels, in place. Plain arithmetic here is about
 * four times cheaper than a general composite for this one case.
 */
export function blendOverlay(rgb: Buffer, width: number, height: number, overlay: WatermarkTile): void {
  if (overlay.width !== width || overlay.height !== height) throw new RangeError('overlay size differs from the image');
  const ov = overlay.data;
  for (let p = 0, i = 0, o = 0; p < width * height; p++, i += 3, o += 4) {
    const a = ov[o + 3]!;
    if (a === 0) continue;
    const keep = 255 - a;
    rgb[i] = (ov[o]! * a + rgb[i]! * keep + 127) / 255;
    rgb[i + 1] = (ov[o + 1]! * a + rgb[i + 1]! * keep + 127) / 255;
    rgb[i + 2] = (ov[o + 2]! * a + rgb[i + 2]! * keep + 127) / 255;
  }
}
