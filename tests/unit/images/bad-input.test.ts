import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { syntheticPortrait } from '../../../scripts/lib/synthetic-portrait';
import {
  IMAGE_LIMITS,
  ImageRejected,
  buildFrameVariants,
  buildFinalVariants,
  checkNameMatchesType,
  checkUpload,
  sniffImageType,
} from '../../../src/lib/server/images';
import { decodeUpright } from '../../../src/lib/server/images/decode';
import { exiftoolRead, identify, pngDeclaring, removeTempFiles } from '../../fixtures/image-tools';

const watermark = { text: 'Harbour Light Studio', opacity: 0.3 };
let jpeg: Buffer;
let png: Buffer;
let webp: Buffer;
let tiff: Buffer;

beforeAll(async () => {
  jpeg = await syntheticPortrait({ width: 600, height: 400, seed: 7 });
  png = await sharp(jpeg).png().toBuffer();
  webp = await sharp(jpeg).webp().toBuffer();
  tiff = await sharp(jpeg).tiff().toBuffer();
});
afterAll(removeTempFiles);

async function rejection(p: Promise<unknown>): Promise<ImageRejected> {
  const err = await p.then(
    () => null,
    (e: unknown) => e,
  );
  expect(err).toBeInstanceOf(ImageRejected);
  return err as ImageRejected;
}

describe('file signatures', () => {
  it('knows JPEG, PNG, TIFF and WebP by their first bytes', () => {
    expect(sniffImageType(jpeg)).toBe('jpeg');
    expect(sniffImageType(png)).toBe('png');
    expect(sniffImageType(webp)).toBe('webp');
    expect(sniffImageType(tiff)).toBe('tiff');
  });
  it('is not fooled by text, markup or a few bytes', () => {
    expect(sniffImageType(Buffer.from('<svg xmlns="http://www.w3.org/2000/svg"/>'))).toBeNull();
    expect(sniffImageType(Buffer.from('<!DOCTYPE html><html></html>'))).toBeNull();
    expect(sniffImageType(Buffer.from([0xff, 0xd8]))).toBeNull();
    expect(sniffImageType(new Uint8Array(0))).toBeNull();
  });
  it('ImageMagick agrees on what the test files are', async () => {
    expect(await identify(png, '%m', 'png')).toBe('PNG');
    expect(await identify(webp, '%m', 'webp')).toBe('WEBP');
    expect(await identify(tiff, '%m', 'tif')).toBe('TIFF');
  });
});

describe('name and contents must agree', () => {
  it('accepts matching names in any case', () => {
    expect(() => checkNameMatchesType('IMG_0001.JPG', 'jpeg')).not.toThrow();
    expect(() => checkNameMatchesType('frame.jpeg', 'jpeg')).not.toThrow();
    expect(() => checkNameMatchesType('scan.tif', 'tiff')).not.toThrow();
    expect(() => checkNameMatchesType('a/b/c.webp', 'webp')).not.toThrow();
  });
  it('a PNG named .jpg is refused, saying what it really is', () => {
    try {
      checkNameMatchesType('IMG_0001.jpg', 'png');
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(ImageRejected);
      expect((e as ImageRejected).code).toBe('extension_mismatch');
      expect((e as ImageRejected).userMessage).toMatch(/“IMG_0001\.jpg”.*JPEG.*PNG/);
    }
  });
  it('a raw camera file is refused with what to do instead', () => {
    expect(() => checkNameMatchesType('DSC_0042.NEF', 'tiff')).toThrow(/raw camera file.*export it as JPEG/);
  });
  it('a name without an extension is refused', () => {
    expect(() => checkNameMatchesType('frame', 'jpeg')).toThrow(ImageRejected);
  });
});

describe('bad input to buildFrameVariants: each refused with a clear message', () => {
  it('an empty buffer', async () => {
    const e = await rejection(buildFrameVariants({ original: Buffer.alloc(0), watermark }));
    expect(e.code).toBe('empty');
    expect(e.userMessage).toMatch(/empty/);
  });

  it('a text file named .jpg', async () => {
    const e = await rejection(
      buildFrameVariants({ original: Buffer.from('Shoot notes: bring the grey backdrop.\n'), watermark, fileName: 'notes.jpg' }),
    );
    expect(e.code).toBe('not_an_image');
    expect(e.userMessage).toBe('“notes.jpg” is a text file, not a photo. Fillcard takes JPEG, PNG, TIFF or WebP files.');
  });

  it('an SVG drawing', async () => {
    const svg = Buffer.from('<?xml version="1.0"?>\n<svg xmlns="http://www.w3.org/2000/svg" width="10" height="10"><script>alert(1)</script></svg>');
    const e = await rejection(buildFrameVariants({ original: svg, watermark, fileName: 'logo.svg' }));
    expect(e.code).toBe('not_an_image');
    expect(e.userMessage).toMatch(/“logo\.svg” is an SVG drawing, not a photo/);
  });

  it('an SVG even when named .jpg, and without a name', async () => {
    const svg = Buffer.from('<svg xmlns="http://www.w3.org/2000/svg"><rect width="5" height="5"/></svg>');
    expect((await rejection(buildFrameVariants({ original: svg, watermark, fileName: 'x.jpg' }))).code).toBe('not_an_image');
    expect((await rejection(buildFrameVariants({ original: svg, watermark }))).userMessage).toMatch(/^This file is an SVG drawing/);
  });

  it('an HTML page', async () => {
    const html = Buffer.from('<!DOCTYPE html>\n<html><body><script>alert(1)</script></body></html>');
    const e = await rejection(buildFrameVariants({ original: html, watermark, fileName: 'gallery.html' }));
    expect(e.userMessage).toMatch(/is a web page \(HTML\), not a photo/);
  });

  it('a truncated JPEG (an upload cut off half way)', async () => {
    const cut = jpeg.subarray(0, Math.floor(jpeg.length / 2));
    const e = await rejection(buildFrameVariants({ original: cut, watermark, fileName: 'IMG_0002.jpg' }));
    expect(e.code).toBe('damaged');
    expect(e.userMessage).toMatch(/“IMG_0002\.jpg” looks damaged or incomplete/);
  });

  it('a JPEG with garbage after its header', async () => {
    const broken = Buffer.concat([jpeg.subarray(0, 200), Buffer.alloc(5000, 0x55)]);
    expect((await rejection(buildFrameVariants({ original: broken, watermark }))).code).toBe('damaged');
  });

  it('a PNG whose header declares 20000×20000 pixels, before decoding it', async () => {
    const bomb = pngDeclaring(20000, 20000);
    expect(bomb.length).toBeLessThan(1000);
    // ExifTool reads the same declared size from the header (ImageMagick's own policy refuses the file).
    const header = await exiftoolRead(bomb, ['-ImageWidth', '-ImageHeight'], 'png');
    expect([header.ImageWidth, header.ImageHeight]).toEqual([20000, 20000]);
    const e = await rejection(buildFrameVariants({ original: bomb, watermark, fileName: 'big.png' }));
    expect(e.code).toBe('too_many_pixels');
    expect(e.status).toBe(413);
    expect(e.userMessage).toBe(
      '“big.png” is 20000 × 20000 pixels (400 megapixels); Fillcard takes up to 150 megapixels per frame. Please export it smaller.',
    );
  });

  it('a real oversized image is refused too, and the decoder holds the same limit on its own', async () => {
    // 12500×12500 = 156 megapixels of flat colour compresses to almost nothing.
    const real = await sharp({ create: { width: 12500, height: 12500, channels: 3, background: '#808080' } }).png().toBuffer();
    expect(IMAGE_LIMITS.maxPixels).toBeLessThan(12500 * 12500);
    expect((await rejection(buildFrameVariants({ original: real, watermark }))).code).toBe('too_many_pixels');
    // Past the header check, sharp's limitInputPixels still refuses to decode it.
    expect((await rejection(decodeUpright(real, 100, 100))).code).toBe('too_many_pixels');
  });

  it('a PNG named .jpg', async () => {
    const e = await rejection(buildFrameVariants({ original: png, watermark, fileName: 'IMG_0003.jpg' }));
    expect(e.code).toBe('extension_mismatch');
  });

  it('a file over the byte limit is refused without being read', () => {
    const huge = Buffer.alloc(IMAGE_LIMITS.maxBytes + 1);
    jpeg.copy(huge, 0, 0, 16);
    expect(() => checkUpload(huge, 'huge.jpg')).toThrow(/Fillcard takes files up to 200 MB/);
  });

  it('finals get the same checks', async () => {
    expect((await rejection(buildFinalVariants(Buffer.from('<html></html>'), { x: 0.5, y: 0.5 }))).code).toBe('not_an_image');
    expect((await rejection(buildFinalVariants(jpeg.subarray(0, 3000), { x: 0.5, y: 0.5 }))).code).toBe('damaged');
  });

  it('PNG, WebP and TIFF uploads are taken', async () => {
    for (const [buf, name] of [[png, 'a.png'], [webp, 'a.webp'], [tiff, 'a.tiff']] as const) {
      const r = await buildFrameVariants({ original: buf, watermark, fileName: name });
      expect([r.width, r.height]).toEqual([600, 400]);
    }
  });
});
