import { createHash } from 'node:crypto';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { syntheticPortrait, writeExif } from '../../../scripts/lib/synthetic-portrait';
import { RATIOS, SOCIAL_SIZES } from '../../../src/lib/ratios';
import {
  buildCropVariants,
  buildFrameVariants,
  hammingDistance,
  NEAR_DUPLICATE_BITS,
  type FrameVariants,
  type VariantOut,
} from '../../../src/lib/server/images';
import { convertFx, convertToRgb, exiftoolRead, identify, meanAbsDiff, removeTempFiles } from '../../fixtures/image-tools';

const watermark = { text: 'Harbour Light Studio', opacity: 0.35 };
const none = { text: '', opacity: 0 };
afterAll(removeTempFiles);

function variant(built: FrameVariants, kind: VariantOut['kind']): VariantOut {
  const v = built.variants.find((x) => x.kind === kind);
  if (!v) throw new Error(`no ${kind} variant`);
  return v;
}

async function rgb(jpeg: Buffer): Promise<{ data: Buffer; width: number; height: number }> {
  const { data, info } = await sharp(jpeg).raw().toBuffer({ resolveWithObject: true });
  return { data, width: info.width, height: info.height };
}

/** Rec. 709 luma per pixel of an RGB buffer. */
function luma(img: { data: Buffer }): Float32Array {
  const out = new Float32Array(img.data.length / 3);
  for (let p = 0; p < out.length; p++) out[p] = 0.2126 * img.data[p * 3]! + 0.7152 * img.data[p * 3 + 1]! + 0.0722 * img.data[p * 3 + 2]!;
  return out;
}

describe('a 24-megapixel frame: the full variant set', () => {
  let original: Buffer;
  let built: FrameVariants;
  beforeAll(async () => {
    original = await syntheticPortrait({
      width: 6000,
      height: 4000,
      seed: 21,
      exif: { Make: 'Northlight Optics', Model: 'NL-7', GPSLatitude: 48.1, GPSLatitudeRef: 'N', GPSLongitude: 11.5, GPSLongitudeRef: 'E' },
    });
    built = await buildFrameVariants({ original, watermark, fileName: 'IMG_0100.jpg' });
  });

  it('reports the upright size of the original', () => {
    expect([built.width, built.height, built.orientation]).toEqual([6000, 4000, 1]);
  });

  it('ImageMagick sees each variant at its reported size, in sRGB, with no orientation tag', async () => {
    for (const v of built.variants) {
      const [w, h, space, orientation] = (await identify(v.data, '%w %h %[colorspace] %[orientation]')).split(' ');
      expect([Number(w), Number(h)]).toEqual([v.width, v.height]);
      expect(space).toBe('sRGB');
      expect(orientation).toBe('Undefined');
      expect(await identify(v.data, '%m')).toBe('JPEG');
    }
  });

  it('thumbnail 480 and proof 2048 on the long edge; social crops at 1080×1350, 1080×1080, 1080×1920 (common practice, no published source)', () => {
    expect([variant(built, 'thumb').width, variant(built, 'thumb').height]).toEqual([480, 320]);
    expect([variant(built, 'proof').width, variant(built, 'proof').height]).toEqual([2048, 1365]);
    expect([variant(built, 'crop_4x5').width, variant(built, 'crop_4x5').height]).toEqual([1080, 1350]);
    expect([variant(built, 'crop_1x1').width, variant(built, 'crop_1x1').height]).toEqual([1080, 1080]);
    expect([variant(built, 'crop_9x16').width, variant(built, 'crop_9x16').height]).toEqual([1080, 1920]);
  });

  it('content hashes are the SHA-256 of each file', () => {
    for (const v of built.variants) expect(v.contentHash).toBe(createHash('sha256').update(v.data).digest('hex'));
    expect(new Set(built.variants.map((v) => v.contentHash)).size).toBe(built.variants.length);
  });

  it('variants carry no metadata: ExifTool finds no camera name and no GPS', async () => {
    const ref = await exiftoolRead(original);
    expect(ref.Make).toBe('Northlight Optics');
    expect(ref.GPSLatitude).toBeDefined();
    for (const v of built.variants) {
      const tags = await exiftoolRead(v.data);
      expect(tags.Make).toBeUndefined();
      expect(Object.keys(tags).filter((k) => k.startsWith('GPS'))).toEqual([]);
    }
  });

  it('crops are cut around the focus point it reports', async () => {
    // ImageMagick cuts the same 9:16 strip from the original at the reported focus.
    const cropW = 2250;
    const left = Math.min(6000 - cropW, Math.max(0, Math.round(built.focus.x * 6000 - cropW / 2)));
    const ref = await convertToRgb(original, ['-crop', `${cropW}x4000+${left}+0`, '+repage', '-resize', '1080x1920!']);
    const ours = await rgb(variant(built, 'crop_9x16').data);
    expect(meanAbsDiff(ours.data, ref.data)).toBeLessThan(3);
    // and a strip from the far edge is clearly something else
    const other = await convertToRgb(original, ['-crop', `${cropW}x4000+${left > 1875 ? 0 : 3750}+0`, '+repage', '-resize', '1080x1920!']);
    expect(meanAbsDiff(ours.data, other.data)).toBeGreaterThan(10);
  });
});

describe('small frames keep exact ratios', () => {
  for (const [w, h] of [[800, 600], [600, 900], [1001, 333]] as const) {
    it(`${w}×${h}: every crop exact to one pixel and no larger than the frame`, async () => {
      const built = await buildFrameVariants({ original: await syntheticPortrait({ width: w, height: h, seed: 3 }), watermark });
      for (const r of RATIOS) {
        if (r.key === 'print_8x10') continue;
        const v = variant(built, r.key);
        const [iw, ih] = (await identify(v.data, '%w %h')).split(' ').map(Number) as [number, number];
        expect([iw, ih]).toEqual([v.width, v.height]);
        expect(Math.min(Math.abs(iw - (ih * r.w) / r.h), Math.abs(ih - (iw * r.h) / r.w))).toBeLessThanOrEqual(1);
        expect(iw).toBeLessThanOrEqual(Math.max(w, SOCIAL_SIZES[r.key].width));
        expect(iw === w || ih === h || (iw === SOCIAL_SIZES[r.key].width && ih === SOCIAL_SIZES[r.key].height)).toBe(true);
      }
    });
  }
});

describe('orientation: every output upright', () => {
  let plain: Buffer;
  beforeAll(async () => {
    plain = await syntheticPortrait({ width: 900, height: 600, seed: 5 });
  });
  for (const orientation of [3, 6, 8]) {
    it(`Orientation ${orientation} comes out as ImageMagick's -auto-orient does`, async () => {
      const tagged = await writeExif(plain, { Orientation: orientation });
      expect((await exiftoolRead(tagged)).Orientation).toBe(orientation);
      const built = await buildFrameVariants({ original: tagged, watermark: none });
      const swapped = orientation >= 5;
      expect([built.width, built.height]).toEqual(swapped ? [600, 900] : [900, 600]);
      expect(built.orientation).toBe(orientation);
      for (const v of built.variants) {
        if (v.kind === 'thumb' || v.kind === 'proof') expect(v.height > v.width).toBe(swapped);
      }
      const thumb = variant(built, 'thumb');
      const ours = await rgb(thumb.data);
      const upright = await convertToRgb(tagged, ['-auto-orient', '-resize', `${thumb.width}x${thumb.height}!`]);
      expect(meanAbsDiff(ours.data, upright.data)).toBeLessThan(3);
      // The comparison can tell a wrong turn apart: the half turn away from upright differs.
      const rightAngle = { 3: 180, 6: 90, 8: 270 }[orientation]!;
      const wrong = await convertToRgb(plain, ['-rotate', String(rightAngle + 180), '-resize', `${thumb.width}x${thumb.height}!`]);
      expect(meanAbsDiff(ours.data, wrong.data)).toBeGreaterThan(8);
    });
  }
  it('6 and 8 turn opposite ways', async () => {
    const six = await buildFrameVariants({ original: await writeExif(plain, { Orientation: 6 }), watermark: none });
    const eight = await buildFrameVariants({ original: await writeExif(plain, { Orientation: 8 }), watermark: none });
    expect(meanAbsDiff((await rgb(variant(six, 'thumb').data)).data, (await rgb(variant(eight, 'thumb').data)).data)).toBeGreaterThan(8);
  });
});

describe('watermark on the proof', () => {
  let original: Buffer;
  let reference: { data: Buffer; width: number; height: number };
  beforeAll(async () => {
    original = await syntheticPortrait({ width: 3000, height: 2000, seed: 8 });
    // An unwatermarked 2048-px resize of the same file, made by ImageMagick.
    reference = await convertToRgb(original, ['-resize', '2048x1365!']);
  });

  /** Share of pixels whose luma differs from the reference by more than 12 levels, per cell of a 3×3 grid. */
  function changedShares(proof: { data: Buffer; width: number; height: number }): number[] {
    const a = luma(proof);
    const b = luma(reference);
    const cells = new Array(9).fill(0) as number[];
    const counts = new Array(9).fill(0) as number[];
    for (let y = 0; y < proof.height; y++) {
      for (let x = 0; x < proof.width; x++) {
        const cell = Math.floor((3 * y) / proof.height) * 3 + Math.floor((3 * x) / proof.width);
        const i = y * proof.width + x;
        counts[cell]!++;
        if (Math.abs(a[i]! - b[i]!) > 12) cells[cell]!++;
      }
    }
    return cells.map((c, i) => c / counts[i]!);
  }

  it('differs from an unwatermarked resize in every ninth of the picture', async () => {
    const built = await buildFrameVariants({ original, watermark });
    const proof = await rgb(variant(built, 'proof').data);
    expect([proof.width, proof.height]).toEqual([reference.width, reference.height]);
    const shares = changedShares(proof);
    for (const share of shares) expect(share).toBeGreaterThan(0.03);
    // The pixels the text covers are brighter on average: white text over a darker backdrop.
    const a = luma(proof);
    const b = luma(reference);
    let sumDiff = 0;
    let n = 0;
    for (let i = 0; i < a.length; i++) {
      if (Math.abs(a[i]! - b[i]!) > 12) {
        sumDiff += a[i]! - b[i]!;
        n++;
      }
    }
    expect(sumDiff / n).toBeGreaterThan(12);
  });

  it('the thumbnail clients see carries the watermark too', async () => {
    const built = await buildFrameVariants({ original, watermark });
    const thumb = await rgb(variant(built, 'thumb').data);
    const plain = await convertToRgb(original, ['-resize', `${thumb.width}x${thumb.height}!`]);
    const clean = await buildFrameVariants({ original, watermark: { ...watermark, opacity: 0 } });
    const cleanThumb = await rgb(variant(clean, 'thumb').data);
    // The watermarked thumbnail is further from ImageMagick's plain resize than the unmarked one is.
    expect(meanAbsDiff(thumb.data, plain.data)).toBeGreaterThan(meanAbsDiff(cleanThumb.data, plain.data) + 1);
  });

  it('with opacity 0 the proof matches the unwatermarked resize', async () => {
    const built = await buildFrameVariants({ original, watermark: { text: 'Harbour Light Studio', opacity: 0 } });
    const shares = changedShares(await rgb(variant(built, 'proof').data));
    for (const share of shares) expect(share).toBeLessThan(0.002);
  });

  it('a stronger opacity changes the picture more', async () => {
    const faint = changedShares(await rgb(variant(await buildFrameVariants({ original, watermark: { ...watermark, opacity: 0.15 } }), 'proof').data));
    const strong = changedShares(await rgb(variant(await buildFrameVariants({ original, watermark: { ...watermark, opacity: 0.7 } }), 'proof').data));
    expect(strong.reduce((s, v) => s + v, 0)).toBeGreaterThan(faint.reduce((s, v) => s + v, 0));
  });

  it('text with markup characters is drawn as text', async () => {
    const built = await buildFrameVariants({ original, watermark: { text: 'Studio <b>North</b> & "Co"', opacity: 0.4 } });
    for (const share of changedShares(await rgb(variant(built, 'proof').data))) expect(share).toBeGreaterThan(0.02);
  });

  it('a logo is tiled instead of the text', async () => {
    const logo = await sharp({ create: { width: 200, height: 120, channels: 4, background: { r: 0, g: 0, b: 0, alpha: 0 } } })
      .composite([{ input: await sharp({ create: { width: 120, height: 80, channels: 4, background: { r: 230, g: 20, b: 20, alpha: 1 } } }).png().toBuffer(), left: 40, top: 20 }])
      .png()
      .toBuffer();
    const built = await buildFrameVariants({ original, watermark: { text: 'ignored', opacity: 0.5, logo } });
    const proof = await rgb(variant(built, 'proof').data);
    // Red pulls ahead of green where the logo lies, in every ninth of the picture.
    const cells = new Array(9).fill(0) as number[];
    for (let y = 0; y < proof.height; y++) {
      for (let x = 0; x < proof.width; x++) {
        const i = (y * proof.width + x) * 3;
        const redder = proof.data[i]! - proof.data[i + 1]! - (reference.data[i]! - reference.data[i + 1]!) > 40;
        if (redder) cells[Math.floor((3 * y) / proof.height) * 3 + Math.floor((3 * x) / proof.width)]!++;
      }
    }
    const cellPixels = (proof.width * proof.height) / 9;
    for (const c of cells) expect(c / cellPixels).toBeGreaterThan(0.01);
  });
});

describe('focus point', () => {
  it('finds a face-coloured head on a plain backdrop', async () => {
    const w = 1500;
    const h = 1000;
    const head = await sharp({
      create: { width: 160, height: 200, channels: 4, background: { r: 0, g: 0, b: 0, alpha: 0 } },
    })
      .composite([{ input: Buffer.from('<svg xmlns="http://www.w3.org/2000/svg" width="160" height="200"><ellipse cx="80" cy="100" rx="78" ry="98" fill="rgb(224,172,140)"/></svg>') }])
      .png()
      .toBuffer();
    const scene = await sharp({ create: { width: w, height: h, channels: 3, background: { r: 70, g: 80, b: 90 } } })
      .composite([{ input: head, left: 1100, top: 150 }])
      .jpeg()
      .toBuffer();
    const built = await buildFrameVariants({ original: scene, watermark: none });
    expect(Math.abs(built.focus.x - 1180 / w)).toBeLessThan(0.08);
    expect(Math.abs(built.focus.y - 250 / h)).toBeLessThan(0.12);
  });

  it('a focus point given by the owner is used as given, and buildCropVariants recuts only the crops', async () => {
    const original = await syntheticPortrait({ width: 3000, height: 2000, seed: 12 });
    const left = await buildFrameVariants({ original, watermark: none, focus: { x: 0, y: 0.5 } });
    expect(left.focus).toEqual({ x: 0, y: 0.5 });
    // ImageMagick's cut of the leftmost 9:16 strip is the reference.
    const ref = await convertToRgb(original, ['-crop', '1125x2000+0+0', '+repage', '-resize', '1080x1920!']);
    expect(meanAbsDiff((await rgb(variant(left, 'crop_9x16').data)).data, ref.data)).toBeLessThan(3);

    const recut = await buildCropVariants(original, { x: 1, y: 0.5 });
    expect(recut.map((v) => v.kind)).toEqual(['crop_4x5', 'crop_1x1', 'crop_9x16']);
    const right = recut.find((v) => v.kind === 'crop_9x16')!;
    const refRight = await convertToRgb(original, ['-crop', '1125x2000+1875+0', '+repage', '-resize', '1080x1920!']);
    expect(meanAbsDiff((await rgb(right.data)).data, refRight.data)).toBeLessThan(3);
    // Same focus, same crops as the full build.
    const again = await buildCropVariants(original, { x: 0, y: 0.5 });
    for (const v of again) {
      const first = variant(left, v.kind);
      expect([v.width, v.height]).toEqual([first.width, first.height]);
      expect(meanAbsDiff((await rgb(v.data)).data, (await rgb(first.data)).data)).toBeLessThan(1.5);
    }
  });
});

describe('cull measures', () => {
  it("mean luminance matches ImageMagick's Rec709Luma mean", async () => {
    for (const seed of [2, 4, 6]) {
      const png = await sharp(await syntheticPortrait({ width: 1200, height: 800, seed })).png().toBuffer();
      const built = await buildFrameVariants({ original: png, watermark: none });
      const im = await convertFx(png, ['-colorspace', 'Rec709Luma'], 'mean', 'png');
      expect(Math.abs(built.cull.meanLuminance - im)).toBeLessThan(0.003);
    }
  });

  it("clipped share matches ImageMagick's count of luma at or above 250/255", async () => {
    // Overexposed by about a stop so the backdrop and skin blow out in places.
    const png = await sharp(await syntheticPortrait({ width: 1200, height: 800, seed: 6 })).linear(2, 10).png().toBuffer();
    const built = await buildFrameVariants({ original: png, watermark: none });
    const im = await convertFx(png, ['-colorspace', 'Rec709Luma', '-threshold', `${(250 / 255) * 100}%`], 'mean', 'png');
    expect(im).toBeGreaterThan(0.05);
    expect(Math.abs(built.cull.clippedShare - im)).toBeLessThan(0.001);
    const normal = await buildFrameVariants({ original: await syntheticPortrait({ width: 1200, height: 800, seed: 6 }), watermark: none });
    expect(normal.cull.clippedShare).toBeLessThan(built.cull.clippedShare);
  });

  it('a soft frame scores lower sharpness than the crisp one', async () => {
    const crisp = await syntheticPortrait({ width: 6000, height: 4000, seed: 14 });
    const soft = await sharp(crisp).blur(12).jpeg({ quality: 90 }).toBuffer();
    const a = await buildFrameVariants({ original: crisp, watermark: none });
    const b = await buildFrameVariants({ original: soft, watermark: none });
    expect(b.cull.sharpness).toBeLessThan(a.cull.sharpness / 2);
  });

  it(`near-duplicates are within ${NEAR_DUPLICATE_BITS} bits; different compositions more than 20 apart`, async () => {
    const base = await syntheticPortrait({ width: 1500, height: 1000, seed: 1 });
    const hash = async (buf: Buffer) => (await buildFrameVariants({ original: buf, watermark: none })).cull.phash;
    const h0 = await hash(base);
    expect(h0).toMatch(/^[0-9a-f]{16}$/);
    const nearDuplicates = [
      await sharp(base).jpeg({ quality: 60 }).toBuffer(), // recompressed
      await sharp(base).resize(900).jpeg().toBuffer(), // smaller copy
      await sharp(base).linear(1.08, 4).jpeg().toBuffer(), // a touch brighter
      await sharp(base).extract({ left: 30, top: 20, width: 1470, height: 980 }).jpeg().toBuffer(), // nudged framing
    ];
    for (const near of nearDuplicates) expect(hammingDistance(h0, await hash(near))).toBeLessThanOrEqual(NEAR_DUPLICATE_BITS);
    const others = [h0];
    for (let seed = 2; seed <= 6; seed++) others.push(await hash(await syntheticPortrait({ width: 1500, height: 1000, seed })));
    for (let i = 0; i < others.length; i++) {
      for (let j = i + 1; j < others.length; j++) expect(hammingDistance(others[i]!, others[j]!)).toBeGreaterThan(20);
    }
  });
});

describe('colour', () => {
  it("a frame in a wide-gamut profile comes out in sRGB as ImageMagick converts it", async () => {
    const srgb = await sharp({ create: { width: 600, height: 400, channels: 3, background: { r: 200, g: 40, b: 40 } } })
      .withIccProfile('srgb')
      .jpeg({ quality: 95 })
      .toBuffer();
    const p3 = await sharp(srgb).withIccProfile('p3').jpeg({ quality: 95 }).toBuffer();
    expect(await identify(p3, '%[icc:description]')).toMatch(/P3/);
    // The numbers stored in the file are not the sRGB ones...
    const stored = await convertToRgb(p3, []);
    expect(Math.abs(stored.data[0]! - 200) + Math.abs(stored.data[1]! - 40)).toBeGreaterThan(10);
    // ...and the proof shows what ImageMagick makes of them with an sRGB profile.
    const converted = await convertToRgb(p3, ['-profile', '/usr/share/color/icc/ghostscript/srgb.icc']);
    const built = await buildFrameVariants({ original: p3, watermark: none });
    const proof = await rgb(variant(built, 'proof').data);
    const mid = ((proof.height >> 1) * proof.width + (proof.width >> 1)) * 3;
    const refMid = ((converted.height >> 1) * converted.width + (converted.width >> 1)) * 3;
    for (let c = 0; c < 3; c++) expect(Math.abs(proof.data[mid + c]! - converted.data[refMid + c]!)).toBeLessThanOrEqual(3);
  });
});
