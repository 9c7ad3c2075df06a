import { execFile } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { promisify } from 'node:util';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { syntheticPortrait, writeExif } from '../../../scripts/lib/synthetic-portrait';
import { RATIOS } from '../../../src/lib/ratios';
import { buildFinalVariants, scrubJpegExif, type FinalVariants } from '../../../src/lib/server/images';
import { EXIFTOOL, convertToRgb, exiftoolRead, identify, meanAbsDiff, removeTempFiles, tempFile } from '../../fixtures/image-tools';

// Invented camera; a made-up position far from anyone.
const CAMERA_AND_PLACE = {
  Make: 'Northlight Optics',
  Model: 'NL-7 Mark II',
  LensModel: 'Fieldglass 85mm F1.8',
  ExposureTime: '1/250',
  FNumber: 5.6,
  ISO: 100,
  'EXIF:Flash': 1,
  DateTimeOriginal: '2024:05:01 14:30:00',
  GPSLatitude: 48.123456,
  GPSLatitudeRef: 'N',
  GPSLongitude: 11.654321,
  GPSLongitudeRef: 'E',
  GPSMapDatum: 'PLACE-MARKER-7731',
  'XMP:GPSLatitude': '48.123456 N',
  'XMP:GPSLongitude': '11.654321 E',
};

afterAll(removeTempFiles);

/** Embeds `preview` as the EXIF thumbnail with ExifTool's ThumbnailImage<=file. */
async function addPreview(jpeg: Buffer, preview: Buffer): Promise<Buffer> {
  const file = tempFile(jpeg);
  const previewFile = tempFile(preview);
  await promisify(execFile)(EXIFTOOL, ['-overwrite_original', `-ThumbnailImage<=${previewFile}`, file]);
  return readFileSync(file);
}

function gpsTags(tags: Record<string, unknown>): string[] {
  return Object.keys(tags).filter((k) => /^GPS/.test(k));
}

describe('finals of a 24-megapixel frame', () => {
  let original: Buffer;
  let built: FinalVariants;
  beforeAll(async () => {
    original = await syntheticPortrait({ width: 6000, height: 4000, seed: 31, exif: CAMERA_AND_PLACE });
    built = await buildFinalVariants(original, { x: 0.6, y: 0.4 }, 'IMG_0200.jpg');
  });

  it('the source really carries a position (ExifTool)', async () => {
    const tags = await exiftoolRead(original, ['-a']);
    expect(gpsTags(tags).length).toBeGreaterThan(2);
    expect(original.includes('PLACE-MARKER-7731')).toBe(true);
  });

  it('full resolution, sRGB with the profile embedded (ImageMagick identify)', async () => {
    expect([built.width, built.height]).toEqual([6000, 4000]);
    expect(await identify(built.full, '%w %h %[colorspace]')).toBe('6000 4000 sRGB');
    expect(await identify(built.full, '%[icc:description]')).toMatch(/sRGB/);
  });

  it('camera settings kept, GPS gone (ExifTool)', async () => {
    const tags = await exiftoolRead(built.full, ['-a']);
    expect(tags.Make).toBe('Northlight Optics');
    expect(tags.Model).toBe('NL-7 Mark II');
    expect(tags.LensModel).toBe('Fieldglass 85mm F1.8');
    expect(tags.ExposureTime).toBeCloseTo(1 / 250, 10);
    expect(tags.FNumber).toBe(5.6);
    expect(tags.ISO).toBe(100);
    expect(tags.DateTimeOriginal).toBe('2024:05:01 14:30:00');
    expect(gpsTags(tags)).toEqual([]);
    expect(tags.ColorSpace).toBe(1); // Exif says sRGB, matching the pixels
  });

  it('no trace of the position is left in the bytes', () => {
    expect(built.full.includes('PLACE-MARKER-7731')).toBe(false);
    expect(built.full.includes('http://ns.adobe.com/xap/1.0/')).toBe(false);
  });

  it('pixels match the original closely', async () => {
    const a = await convertToRgb(built.full, []);
    const b = await convertToRgb(original, []);
    expect(meanAbsDiff(a.data, b.data)).toBeLessThan(1.5);
  });

  it('full-resolution crops for every ratio, exact to a pixel, in sRGB with the profile', async () => {
    expect(built.crops.map((c) => c.kind)).toEqual(RATIOS.map((r) => r.key));
    const expected: Record<string, [number, number]> = {
      crop_4x5: [3200, 4000],
      crop_1x1: [4000, 4000],
      crop_9x16: [2250, 4000],
      print_8x10: [3200, 4000], // 8×10 is 4:5 (common practice, no published source)
    };
    for (const crop of built.crops) {
      const ratio = RATIOS.find((r) => r.key === crop.kind)!;
      const [w, h, space] = (await identify(crop.data, '%w %h %[colorspace]')).split(' ');
      expect([Number(w), Number(h)]).toEqual(expected[crop.kind]);
      expect([crop.width, crop.height]).toEqual(expected[crop.kind]);
      expect(Math.abs(Number(w) - (Number(h) * ratio.w) / ratio.h)).toBeLessThanOrEqual(1);
      expect(space).toBe('sRGB');
      expect(await identify(crop.data, '%[icc:description]')).toMatch(/sRGB/);
      expect(gpsTags(await exiftoolRead(crop.data, ['-a']))).toEqual([]);
    }
  });

  it('the 4:5 crop sits at the focus point (ImageMagick cuts the same region)', async () => {
    const crop = built.crops.find((c) => c.kind === 'crop_4x5')!;
    const left = Math.round(0.6 * 6000 - 1600);
    const ref = await convertToRgb(original, ['-crop', `3200x4000+${left}+0`, '+repage', '-resize', '800x1000!']);
    const ours = await convertToRgb(crop.data, ['-resize', '800x1000!']);
    expect(meanAbsDiff(ours.data, ref.data)).toBeLessThan(2);
  });
});

describe('finals: orientation, colour and other formats', () => {
  it('an Orientation 6 final comes out upright with the tag reset', async () => {
    const plain = await syntheticPortrait({ width: 1200, height: 800, seed: 32 });
    const tagged = await writeExif(plain, { Orientation: 6, Make: 'Northlight Optics' });
    const built = await buildFinalVariants(tagged, { x: 0.5, y: 0.5 });
    expect([built.width, built.height]).toEqual([800, 1200]);
    expect(await identify(built.full, '%w %h')).toBe('800 1200');
    const tags = await exiftoolRead(built.full);
    expect(tags.Orientation === undefined || tags.Orientation === 1).toBe(true);
    expect(tags.Make).toBe('Northlight Optics');
    const ref = await convertToRgb(tagged, ['-auto-orient']);
    expect(meanAbsDiff((await convertToRgb(built.full, [])).data, ref.data)).toBeLessThan(2);
    const square = built.crops.find((c) => c.kind === 'crop_1x1')!;
    expect([square.width, square.height]).toEqual([800, 800]);
  });

  it('a wide-gamut final is converted to sRGB as ImageMagick converts it', async () => {
    const srgb = await sharp({ create: { width: 400, height: 300, channels: 3, background: { r: 30, g: 160, b: 60 } } })
      .withIccProfile('srgb')
      .jpeg({ quality: 95 })
      .toBuffer();
    const p3 = await sharp(srgb).withIccProfile('p3').jpeg({ quality: 95 }).toBuffer();
    const built = await buildFinalVariants(p3, { x: 0.5, y: 0.5 });
    expect(await identify(built.full, '%[icc:description]')).toMatch(/sRGB/);
    const ref = await convertToRgb(p3, ['-profile', '/usr/share/color/icc/ghostscript/srgb.icc']);
    const ours = await convertToRgb(built.full, []);
    expect(meanAbsDiff(ours.data, ref.data)).toBeLessThan(2);
  });

  it('a PNG final with transparency becomes a JPEG on white', async () => {
    const png = await sharp({ create: { width: 500, height: 400, channels: 4, background: { r: 0, g: 0, b: 0, alpha: 0 } } }).png().toBuffer();
    const built = await buildFinalVariants(png, { x: 0.5, y: 0.5 }, 'final.png');
    expect(await identify(built.full, '%m %w %h %[fx:mean]')).toMatch(/^JPEG 500 400 (0\.99|1)/);
  });
});

describe('embedded preview', () => {
  it('the small preview a camera or editor embeds is dropped: it would show the frame before retouching', async () => {
    const tagged = await writeExif(await syntheticPortrait({ width: 800, height: 600, seed: 33 }), { Make: 'Northlight Optics' });
    const preview = await sharp(await syntheticPortrait({ width: 160, height: 120, seed: 34 })).jpeg().toBuffer();
    const withPreview = await addPreview(tagged, preview);
    expect((await exiftoolRead(withPreview)).ThumbnailLength).toBe(preview.length);
    const built = await buildFinalVariants(withPreview, { x: 0.5, y: 0.5 });
    const tags = await exiftoolRead(built.full, ['-a']);
    expect(tags.ThumbnailLength).toBeUndefined();
    expect(tags.ThumbnailImage).toBeUndefined();
    expect(tags.Make).toBe('Northlight Optics');
    expect(built.full.includes(preview.subarray(200, 264))).toBe(false);
  });
});

describe('GPS removal on its own', () => {
  it('leaves a JPEG without EXIF unchanged', async () => {
    const jpeg = await syntheticPortrait({ width: 200, height: 100, seed: 1 });
    expect(scrubJpegExif(jpeg).equals(jpeg)).toBe(true);
  });

  it('drops an EXIF block it cannot read rather than passing it on', async () => {
    const jpeg = await syntheticPortrait({ width: 200, height: 100, seed: 1 });
    // APP1 "Exif" whose first directory points far outside the block.
    const tiff = Buffer.from([0x4d, 0x4d, 0x00, 0x2a, 0xff, 0xff, 0xff, 0x00]);
    const payload = Buffer.concat([Buffer.from('Exif\0\0', 'latin1'), tiff]);
    const app1 = Buffer.concat([Buffer.from([0xff, 0xe1, 0, payload.length + 2]), payload]);
    const broken = Buffer.concat([jpeg.subarray(0, 2), app1, jpeg.subarray(2)]);
    const cleaned = scrubJpegExif(broken);
    expect(cleaned.includes('Exif\0\0')).toBe(false);
    expect(await identify(cleaned, '%w %h')).toBe('200 100');
  });

  it('keeps GPS-free EXIF intact as ExifTool reads it', async () => {
    const jpeg = await writeExif(await syntheticPortrait({ width: 200, height: 100, seed: 2 }), { Make: 'Northlight Optics', FNumber: 8, ISO: 200 });
    const before = await exiftoolRead(jpeg);
    const after = await exiftoolRead(scrubJpegExif(jpeg));
    for (const tag of ['Make', 'FNumber', 'ISO', 'ExifVersion', 'ImageWidth']) expect(after[tag]).toEqual(before[tag]);
  });

  it('removes a GPS block written by ExifTool and keeps the rest (ExifTool reads it back)', async () => {
    const jpeg = await writeExif(await syntheticPortrait({ width: 200, height: 100, seed: 3 }), CAMERA_AND_PLACE);
    const ours = await exiftoolRead(scrubJpegExif(jpeg), ['-a', '-G1']);
    expect(Object.keys(ours).filter((k) => /GPS/.test(k))).toEqual([]);
    expect(ours['IFD0:Make']).toBe('Northlight Optics');
    expect(ours['ExifIFD:ExposureTime']).toBeCloseTo(0.004, 10);
  });
});
