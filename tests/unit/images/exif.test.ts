import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { syntheticPortrait, writeExif } from '../../../scripts/lib/synthetic-portrait';
import { evAtIso } from '../../../src/lib/exposure';
import { buildFrameVariants, readFrameExif, type FrameExif } from '../../../src/lib/server/images';
import { exiftoolRead, removeTempFiles } from '../../fixtures/image-tools';

// Reference: ExifTool reads back what it wrote (`exiftool -j -n`); Fillcard must agree with it.
// Camera and lens names are invented.
const STUDIO_FLASH_FRAME = {
  Make: 'Northlight Optics',
  Model: 'NL-7 Mark II',
  LensModel: 'Fieldglass 85mm F1.8',
  ExposureTime: '1/250',
  FNumber: 5.6,
  ISO: 400,
  FocalLength: 85,
  FocalLengthIn35mmFormat: 128,
  ExposureCompensation: -0.7,
  // 0x19: fired, auto mode. The group is named: a bare Flash= may land in XMP only.
  'EXIF:Flash': 25,
  DateTimeOriginal: '2024:05:01 14:30:00',
  SubSecTimeOriginal: '27',
  OffsetTimeOriginal: '+02:00',
  Orientation: 1,
};

let plain: Buffer;
afterAll(removeTempFiles);
beforeAll(async () => {
  plain = await syntheticPortrait({ width: 600, height: 400, seed: 11 });
});

/** ExifTool's composite date-time ("2024:05:01 14:30:00.27+02:00") as an instant. */
function exiftoolInstant(value: unknown): number {
  const iso = String(value).replace(/^(\d{4}):(\d{2}):(\d{2}) /, '$1-$2-$3T');
  return Date.parse(iso);
}

function expectAgreesWithExiftool(ours: FrameExif, ref: Record<string, unknown>) {
  expect(ours.cameraMake).toBe(ref.Make);
  expect(ours.cameraModel).toBe(ref.Model);
  expect(ours.lens).toBe(ref.LensModel);
  expect(ours.fNumber).toBe(ref.FNumber);
  expect(ours.exposureTimeS).toBeCloseTo(ref.ExposureTime as number, 12);
  expect(ours.iso).toBe(ref.ISO);
  expect(ours.focalLengthMm).toBe(ref.FocalLength);
  expect(ours.focalLength35mm).toBe(ref.FocalLengthIn35mmFormat);
  expect(ours.exposureBiasEv).toBeCloseTo(ref.ExposureCompensation as number, 6);
  expect(ours.flashFired).toBe(((ref.Flash as number) & 1) === 1);
  expect(ours.orientation).toBe(ref.Orientation);
}

describe('EXIF against ExifTool', () => {
  it('a studio flash frame: every setting as ExifTool reads it', async () => {
    const jpeg = await writeExif(plain, STUDIO_FLASH_FRAME);
    const ref = await exiftoolRead(jpeg, ['-a', '-SubSecDateTimeOriginal', '-all']);
    const ours = await readFrameExif(jpeg);
    expectAgreesWithExiftool(ours, ref);
    expect(ours.takenAt!.getTime()).toBe(exiftoolInstant(ref.SubSecDateTimeOriginal));
    expect(ours.takenAt!.toISOString()).toBe('2024-05-01T12:30:00.270Z');
    expect(ours.takenAtOffset).toBe(ref.OffsetTimeOriginal);
  });

  it("settings restated at ISO 100 match ExifTool's LightValue", async () => {
    const jpeg = await writeExif(plain, STUDIO_FLASH_FRAME);
    const ref = await exiftoolRead(jpeg, ['-LightValue', '-FNumber', '-ExposureTime', '-ISO']);
    const ours = await readFrameExif(jpeg);
    expect(Math.abs(evAtIso(ours.fNumber!, ours.exposureTimeS!, ours.iso!) - (ref.LightValue as number))).toBeLessThanOrEqual(0.05);
  });

  it('buildFrameVariants reports the same EXIF and EV 12.94 for 1/250 s at f/5.6 (APEX table, CIPA DC-008 / Wikipedia "Exposure value")', async () => {
    const jpeg = await writeExif(plain, STUDIO_FLASH_FRAME);
    const built = await buildFrameVariants({ original: jpeg, watermark: { text: 'Studio', opacity: 0.3 } });
    expect(built.exif).toEqual(await readFrameExif(jpeg));
    expect(Math.abs(built.ev100! - 12.937)).toBeLessThanOrEqual(0.05);
  });

  it('flash not fired, negative offset, no sub-seconds', async () => {
    const jpeg = await writeExif(plain, {
      ...STUDIO_FLASH_FRAME,
      'EXIF:Flash': 16, // 0x10: off, did not fire
      OffsetTimeOriginal: '-03:30',
      SubSecTimeOriginal: '',
      ExposureTime: '1/60',
      FNumber: 2.8,
      ISO: 100,
    });
    const ref = await exiftoolRead(jpeg, ['-a', '-SubSecDateTimeOriginal', '-all']);
    const ours = await readFrameExif(jpeg);
    expectAgreesWithExiftool(ours, ref);
    expect(ours.flashFired).toBe(false);
    expect(ours.takenAt!.getTime()).toBe(exiftoolInstant(ref.SubSecDateTimeOriginal));
    expect(ours.takenAtOffset).toBe('-03:30');
  });

  for (const orientation of [1, 3, 6, 8]) {
    it(`Orientation ${orientation} as ExifTool reads it`, async () => {
      const jpeg = await writeExif(plain, { ...STUDIO_FLASH_FRAME, Orientation: orientation });
      const ref = await exiftoolRead(jpeg);
      expect(ref.Orientation).toBe(orientation);
      expect((await readFrameExif(jpeg)).orientation).toBe(ref.Orientation);
      expect((await buildFrameVariants({ original: jpeg, watermark: { text: 'S', opacity: 0.3 } })).orientation).toBe(orientation);
    });
  }

  it('without an offset the camera clock is kept as UTC wall time', async () => {
    const jpeg = await writeExif(plain, { DateTimeOriginal: '2023:12:24 09:05:00' });
    const ours = await readFrameExif(jpeg);
    expect(ours.takenAt!.toISOString()).toBe('2023-12-24T09:05:00.000Z');
    expect(ours.takenAtOffset).toBeNull();
  });

  it('markup in a text tag comes back as the same plain text', async () => {
    const jpeg = await writeExif(plain, { LensModel: '<script>alert(1)</script>', Make: '<b onmouseover="x()">Northlight</b>' });
    const ref = await exiftoolRead(jpeg);
    const ours = await readFrameExif(jpeg);
    expect(ours.lens).toBe('<script>alert(1)</script>');
    expect(ours.lens).toBe(ref.LensModel);
    expect(ours.cameraMake).toBe(ref.Make);
  });

  it('control characters are removed and long text is cut to 200 characters', async () => {
    const jpeg = await writeExif(plain, { Make: 'North\u0007light\u001b Optics\u202e', LensModel: 'L'.repeat(300) });
    const ref = await exiftoolRead(jpeg);
    expect(String(ref.LensModel).length).toBe(300); // ExifTool stored all of it
    const ours = await readFrameExif(jpeg);
    expect(ours.cameraMake).toBe('North light Optics');
    expect(ours.lens).toBe('L'.repeat(200));
  });

  it('a frame without EXIF gives nulls, not errors', async () => {
    const ref = await exiftoolRead(plain);
    expect(ref.ExposureTime).toBeUndefined();
    const ours = await readFrameExif(plain);
    expect(Object.values(ours).every((v) => v === null)).toBe(true);
    const built = await buildFrameVariants({ original: plain, watermark: { text: 'S', opacity: 0.3 } });
    expect(built.ev100).toBeNull();
    expect(built.orientation).toBe(1);
  });

  for (const format of ['png', 'webp', 'tiff'] as const) {
    it(`a ${format.toUpperCase()} frame: EXIF as ExifTool reads it`, async () => {
      const converted = await sharp(plain).toFormat(format).toBuffer();
      const tagged = await writeExif(converted, {
        Make: 'Northlight Optics',
        Model: 'NL-7',
        ExposureTime: '1/125',
        FNumber: 8,
        ISO: 200,
        'EXIF:Flash': 16,
      });
      const ref = await exiftoolRead(tagged, [], format === 'tiff' ? 'tif' : format);
      const ours = await readFrameExif(tagged);
      expect(ref.Make).toBe('Northlight Optics');
      expect(ours.cameraMake).toBe(ref.Make);
      expect(ours.cameraModel).toBe(ref.Model);
      expect(ours.fNumber).toBe(ref.FNumber);
      expect(ours.exposureTimeS).toBeCloseTo(ref.ExposureTime as number, 12);
      expect(ours.iso).toBe(ref.ISO);
      expect(ours.flashFired).toBe(((ref.Flash as number) & 1) === 1);
    });
  }

  it('unreadable input gives empty EXIF rather than throwing', async () => {
    const ours = await readFrameExif(Buffer.from('not a photo at all'));
    expect(ours.fNumber).toBeNull();
    expect(ours.takenAt).toBeNull();
  });
});
