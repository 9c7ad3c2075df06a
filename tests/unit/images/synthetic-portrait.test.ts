import { afterAll, describe, expect, it } from 'vitest';
import { syntheticPortrait } from '../../../scripts/lib/synthetic-portrait';
import { exiftoolRead, identify, removeTempFiles } from '../../fixtures/image-tools';

afterAll(removeTempFiles);

describe('synthetic portraits for tests and demo data', () => {
  it('the same seed gives the same bytes; another seed another picture', async () => {
    const a = await syntheticPortrait({ width: 640, height: 480, seed: 5 });
    const b = await syntheticPortrait({ width: 640, height: 480, seed: 5 });
    const c = await syntheticPortrait({ width: 640, height: 480, seed: 6 });
    expect(a.equals(b)).toBe(true);
    expect(a.equals(c)).toBe(false);
  });

  it('is a JPEG of the asked size at the asked quality (ImageMagick)', async () => {
    const jpeg = await syntheticPortrait({ width: 1200, height: 1800, seed: 9, quality: 80 });
    expect(await identify(jpeg, '%m %w %h %Q')).toBe('JPEG 1200 1800 80');
  });

  it('carries the EXIF it was given (ExifTool)', async () => {
    const jpeg = await syntheticPortrait({ width: 300, height: 200, seed: 1, exif: { ExposureTime: '1/250', FNumber: 5.6, Orientation: 6, Model: 'NL-7' } });
    const tags = await exiftoolRead(jpeg);
    expect([tags.ExposureTime, tags.FNumber, tags.Orientation, tags.Model]).toEqual([0.004, 5.6, 6, 'NL-7']);
  });

  it('a 24-megapixel frame is about as large as a camera JPEG', async () => {
    const jpeg = await syntheticPortrait({ width: 6000, height: 4000, seed: 2 });
    expect(await identify(jpeg, '%w %h')).toBe('6000 4000');
    // Grain keeps the file in the range camera JPEGs of this size fall in (several megabytes).
    expect(jpeg.length).toBeGreaterThan(3_000_000);
  });

  it('refuses sizes it cannot draw', async () => {
    await expect(syntheticPortrait({ width: 10.5, height: 100, seed: 1 })).rejects.toThrow(RangeError);
  });
});
