/**
 * Photo-like portrait JPEGs for tests, benchmarks and demo data: a soft backdrop, a head and
 * shoulders lit from one side, hair with fine texture, and sensor grain, so file sizes, sharpness
 * and perceptual hashes behave like a real frame's. Deterministic per seed. Optional EXIF is
 * written by ExifTool, so the tags are laid out the way real tools lay them out.
 */
import { execFile } from 'node:child_process';
import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { promisify } from 'node:util';
import sharp from 'sharp';

const run = promisify(execFile);

export interface SyntheticPortraitOptions {
  width: number;
  height: number;
  seed: number;
  /**
   * ExifTool tag names and values, e.g. { ExposureTime: '1/250', FNumber: 5.6, Orientation: 6 }.
   * Numbers are written as raw values (ExifTool's `TAG#=`), strings as ExifTool reads them.
   */
  exif?: Record<string, string | number>;
  quality?: number;
}

/** mulberry32: small, fast, and the same sequence for the same seed everywhere. */
export function prng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

type Rgb = [number, number, number];

const BACKDROPS: Array<[Rgb, Rgb]> = [
  [[86, 98, 112], [34, 40, 48]], // slate
  [[190, 182, 168], [120, 112, 100]], // warm paper
  [[60, 60, 62], [18, 18, 20]], // charcoal
  [[170, 190, 200], [90, 110, 125]], // pale blue
  [[140, 120, 100], [60, 48, 40]], // brown canvas
  [[235, 235, 232], [200, 200, 196]], // high key white
];
const SKIN: Rgb[] = [
  [238, 200, 176],
  [224, 172, 140],
  [198, 142, 108],
  [160, 108, 76],
  [120, 78, 52],
  [88, 56, 38],
];
const CLOTHES: Rgb[] = [
  [28, 32, 48],
  [110, 30, 38],
  [220, 214, 200],
  [40, 70, 60],
  [30, 30, 30],
  [150, 120, 90],
];
const HAIR: Rgb[] = [
  [30, 22, 18],
  [70, 46, 30],
  [140, 100, 60],
  [200, 170, 120],
  [20, 20, 22],
];

function pick<T>(list: T[], r: () => number): T {
  return list[Math.floor(r() * list.length)]!;
}

function smoothstep(e0: number, e1: number, x: number): number {
  const t = Math.min(1, Math.max(0, (x - e0) / (e1 - e0)));
  return t * t * (3 - 2 * t);
}

function mix(a: number, b: number, t: number): number {
  return a + (b - a) * t;
}

/** Coverage (0..1) of an ellipse, anti-aliased over `soft` normalised units at its rim. */
function ellipse(x: number, y: number, cx: number, cy: number, rx: number, ry: number, soft: number): number {
  const d = Math.sqrt(((x - cx) / rx) ** 2 + ((y - cy) / ry) ** 2);
  return 1 - smoothstep(1 - soft, 1 + soft, d);
}

/** The scene at a quarter of the final size: smooth shapes that upscale without jaggies. */
function renderScene(w: number, h: number, r: () => number): Buffer {
  const [bgLight, bgDark] = pick(BACKDROPS, r);
  const skin = pick(SKIN, r);
  const cloth = pick(CLOTHES, r);
  const hair = pick(HAIR, r);
  const gradient = Math.floor(r() * 4); // 0 vertical, 1 spot, 2 diagonal, 3 side light
  const flipGradient = r() < 0.5;
  const spotX = 0.25 + r() * 0.5;
  const spotY = 0.2 + r() * 0.4;
  const keyFromLeft = r() < 0.5;
  const unit = Math.min(w, h);
  // Framing from a tight head-and-shoulders to a looser half-body, placed anywhere from the
  // left to the right third, so different seeds make differently composed frames.
  const headR = unit * (0.08 + r() * 0.12);
  const cx = w * (0.2 + r() * 0.6);
  const cy = h * (0.22 + r() * 0.2);
  const tilt = (r() - 0.5) * 0.25;
  const shoulderW = headR * (2.4 + r() * 0.7);
  const shoulderTop = cy + headR * (1.2 + r() * 0.2);
  const shoulderMid = shoulderTop + headR * 1.1;
  const hairLen = 0.4 + r() * 0.9;
  const stripe = 2 + r() * 2;
  const out = Buffer.alloc(w * h * 3);
  for (let y = 0; y < h; y++) {
    const ny = y / h;
    for (let x = 0; x < w; x++) {
      const nx = x / w;
      let t: number;
      if (gradient === 0) t = ny;
      else if (gradient === 1) t = Math.min(1, Math.hypot(nx - spotX, (ny - spotY) * (h / w)) * 1.4);
      else if (gradient === 2) t = (nx + ny) / 2;
      else t = nx;
      if (flipGradient) t = 1 - t;
      const vignette = 1 - 0.18 * ((nx - 0.5) ** 2 + (ny - 0.5) ** 2) * 4;
      let R = mix(bgLight[0], bgDark[0], t) * vignette;
      let G = mix(bgLight[1], bgDark[1], t) * vignette;
      let B = mix(bgLight[2], bgDark[2], t) * vignette;
      // Shoulders: rounded on top, then the torso widening a little down to the frame's edge.
      let body = 0;
      if (y >= shoulderTop - 2) {
        if (y < shoulderMid) body = ellipse(x, y, cx, shoulderMid, shoulderW, shoulderMid - shoulderTop, 0.02);
        else {
          const half = shoulderW * (1 + (0.06 * (y - shoulderMid)) / headR);
          body = 1 - smoothstep(half - 1.5, half + 1.5, Math.abs(x - cx));
        }
      }
      if (body > 0) {
        const fold = 0.85 + 0.15 * Math.sin((x - cx) / (headR * 0.35) + y / (headR * 0.9));
        const side = keyFromLeft ? 1 - (x - cx + shoulderW) / (2 * shoulderW) : (x - cx + shoulderW) / (2 * shoulderW);
        const light = fold * (0.65 + 0.45 * Math.min(1, Math.max(0, side)));
        R = mix(R, cloth[0] * light, body);
        G = mix(G, cloth[1] * light, body);
        B = mix(B, cloth[2] * light, body);
      }
      // Neck, then head: rotated slightly, shaded from the key side.
      const neck = ellipse(x, y, cx, cy + headR * 0.95, headR * 0.4, headR * 0.6, 0.04);
      const dx = x - cx;
      const dy = y - cy;
      const rx = dx * Math.cos(tilt) + dy * Math.sin(tilt);
      const ry = -dx * Math.sin(tilt) + dy * Math.cos(tilt);
      const head = Math.max(neck, ellipse(rx, ry, 0, 0, headR * 0.78, headR, 0.03));
      if (head > 0) {
        const side = keyFromLeft ? -rx / headR : rx / headR;
        const light = 0.72 + 0.32 * smoothstep(-1, 1, side) - 0.12 * smoothstep(0.4, 1.2, ry / headR);
        R = mix(R, Math.min(255, skin[0] * light), head);
        G = mix(G, Math.min(255, skin[1] * light), head);
        B = mix(B, Math.min(255, skin[2] * light), head);
        // Eyes and mouth as soft dark marks, so the face has structure for focus finding.
        const eyeY = -headR * 0.1;
        const eye =
          ellipse(rx, ry, -headR * 0.3, eyeY, headR * 0.11, headR * 0.06, 0.2) +
          ellipse(rx, ry, headR * 0.3, eyeY, headR * 0.11, headR * 0.06, 0.2);
        const mouth = ellipse(rx, ry, 0, headR * 0.45, headR * 0.22, headR * 0.05, 0.25);
        const dark = Math.min(1, eye * 0.8 + mouth * 0.45) * head;
        R = mix(R, 40, dark);
        G = mix(G, 26, dark);
        B = mix(B, 24, dark);
      }
      // Hair: a cap over the crown falling to the sides, with fine strands.
      const hairCap = ellipse(rx, ry + headR * 0.15, 0, -headR * 0.1, headR * 0.9, headR * (0.85 + hairLen * 0.5), 0.03);
      const face = ellipse(rx, ry, 0, headR * 0.22, headR * 0.66, headR * 0.85, 0.05);
      const hairCover = Math.max(0, hairCap - face) * (ry < headR * hairLen ? 1 : 0);
      if (hairCover > 0) {
        const strands = 0.75 + 0.25 * Math.sin(rx * stripe + Math.sin(ry * 0.2) * 3);
        R = mix(R, hair[0] * strands, hairCover);
        G = mix(G, hair[1] * strands, hairCover);
        B = mix(B, hair[2] * strands, hairCover);
      }
      const o = (y * w + x) * 3;
      out[o] = R;
      out[o + 1] = G;
      out[o + 2] = B;
    }
  }
  return out;
}

/**
 * Adds luminance grain in place, clamped to 0..255: enough texture that JPEG sizes and sharpness
 * behave like a camera file's.
 */
function addGrain(rgb: Buffer, seed: number, strength: number): void {
  const px = new Uint8ClampedArray(rgb.buffer, rgb.byteOffset, rgb.length);
  let s = (seed * 2654435761) >>> 0 || 1;
  for (let i = 0; i < px.length; i += 3) {
    // xorshift32; two 8-bit draws summed give a soft, roughly bell-shaped grain
    s ^= s << 13;
    s ^= s >>> 17;
    s ^= s << 5;
    const n = (((s & 0xff) + ((s >>> 8) & 0xff) - 255) * strength) / 255;
    px[i] = px[i]! + n;
    px[i + 1] = px[i + 1]! + n;
    px[i + 2] = px[i + 2]! + n;
  }
}

export async function syntheticPortrait(opts: SyntheticPortraitOptions): Promise<Buffer> {
  const { width, height, seed } = opts;
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 16 || height < 16) {
    throw new RangeError(`synthetic portrait needs whole-number sides of at least 16 px, got ${width}×${height}`);
  }
  const r = prng(seed);
  const bw = Math.max(16, Math.round(width / 4));
  const bh = Math.max(16, Math.round(height / 4));
  const scene = renderScene(bw, bh, r);
  const full = await sharp(scene, { raw: { width: bw, height: bh, channels: 3 } })
    .resize(width, height, { fit: 'fill', kernel: 'linear' })
    .raw()
    .toBuffer();
  addGrain(full, seed, 14);
  let jpeg = await sharp(full, { raw: { width, height, channels: 3 } })
    .jpeg({ quality: opts.quality ?? 90 })
    .toBuffer();
  if (opts.exif && Object.keys(opts.exif).length > 0) jpeg = await writeExif(jpeg, opts.exif);
  return jpeg;
}

/** The extension ExifTool expects for these bytes (it writes by file type). */
function extensionFor(image: Buffer): string {
  if (image[0] === 0x89 && image.toString('latin1', 1, 4) === 'PNG') return 'png';
  if (image.toString('latin1', 0, 4) === 'RIFF' && image.toString('latin1', 8, 12) === 'WEBP') return 'webp';
  if (image.toString('latin1', 0, 4) === 'II*\0' || image.toString('latin1', 0, 4) === 'MM\0*') return 'tif';
  return 'jpg';
}

/** Writes tags with ExifTool through a temporary file; the file is removed afterwards. */
export async function writeExif(image: Buffer, tags: Record<string, string | number>): Promise<Buffer> {
  const dir = await mkdtemp(path.join(os.tmpdir(), 'fillcard-exif-'));
  const file = path.join(dir, `frame.${extensionFor(image)}`);
  try {
    await writeFile(file, image);
    const args = ['-overwrite_original', '-q'];
    for (const [tag, value] of Object.entries(tags)) {
      if (!/^[A-Za-z0-9:_-]+$/.test(tag)) throw new RangeError(`not an ExifTool tag name: ${tag}`);
      args.push(typeof value === 'number' ? `-${tag}#=${value}` : `-${tag}=${value}`);
    }
    args.push(file);
    await run('exiftool', args);
    return await readFile(file);
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}
