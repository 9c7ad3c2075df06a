import { describe, expect, it } from 'vitest';
import { RATIOS, SOCIAL_SIZES, cropRect, maxPrintLongEdgeInches, normaliseFocus } from '../../src/lib/ratios';

const centre = { x: 0.5, y: 0.5 };

describe('largest crop of a ratio (print and post sizes: common practice, no published source)', () => {
  it('an upright 4:5 inside a 6000×4000 frame keeps 3200×4000', () => {
    expect(cropRect(6000, 4000, 4, 5, centre)).toEqual({ left: 1400, top: 0, width: 3200, height: 4000 });
  });
  it('a landscape 5:4 inside a 6000×4000 frame keeps 5000×4000', () => {
    expect(cropRect(6000, 4000, 5, 4, centre)).toEqual({ left: 500, top: 0, width: 5000, height: 4000 });
  });
  it('8×10 is the same shape as 4:5, and at 300 ppi (common practice) wants 2400×3000', () => {
    const print = RATIOS.find((r) => r.key === 'print_8x10')!;
    expect(cropRect(6000, 4000, print.w, print.h, centre)).toEqual(cropRect(6000, 4000, 4, 5, centre));
    expect(maxPrintLongEdgeInches({ width: 2400, height: 3000 })).toBe(10);
  });
  it('social sizes keep their ratios: 1080×1350 is 4:5, 1080×1920 is 9:16', () => {
    for (const r of RATIOS) {
      if (r.key === 'print_8x10') continue;
      const s = SOCIAL_SIZES[r.key];
      expect(s.width * r.h).toBe(s.height * r.w);
    }
  });
  it('a portrait frame keeps its full width for 4:5 and 1:1', () => {
    expect(cropRect(4000, 6000, 4, 5, centre)).toEqual({ left: 0, top: 500, width: 4000, height: 5000 });
    expect(cropRect(4000, 6000, 1, 1, centre)).toEqual({ left: 0, top: 1000, width: 4000, height: 4000 });
  });
});

describe('ratio exact to one pixel on awkward sizes', () => {
  const sizes: Array<[number, number]> = [
    [6000, 4000], [4000, 6000], [5473, 3649], [1001, 997], [17, 4999], [4999, 17], [1, 1], [3, 2],
  ];
  for (const [w, h] of sizes) {
    for (const r of RATIOS) {
      it(`${r.w}:${r.h} from ${w}×${h}`, () => {
        const c = cropRect(w, h, r.w, r.h, centre);
        expect(c.width).toBeGreaterThanOrEqual(1);
        expect(c.height).toBeGreaterThanOrEqual(1);
        expect(c.left + c.width).toBeLessThanOrEqual(w);
        expect(c.top + c.height).toBeLessThanOrEqual(h);
        // One side fills the frame; the other is the exact ratio rounded to the nearest pixel.
        expect(c.width === w || c.height === h).toBe(true);
        const offWidth = Math.abs(c.width - (c.height * r.w) / r.h);
        const offHeight = Math.abs(c.height - (c.width * r.h) / r.w);
        expect(Math.min(offWidth, offHeight)).toBeLessThanOrEqual(0.5);
      });
    }
  }
});

describe('focus point and clamping', () => {
  it('centres on the focus when there is room', () => {
    const c = cropRect(6000, 4000, 4, 5, { x: 0.4, y: 0.5 });
    expect(c.left + c.width / 2).toBe(2400);
  });
  it('near the top-left corner the crop stops at the edges', () => {
    expect(cropRect(6000, 4000, 4, 5, { x: 0.02, y: 0.01 })).toEqual({ left: 0, top: 0, width: 3200, height: 4000 });
    expect(cropRect(4000, 6000, 1, 1, { x: 0, y: 0 })).toEqual({ left: 0, top: 0, width: 4000, height: 4000 });
  });
  it('near the bottom-right corner the crop stops at the edges', () => {
    expect(cropRect(6000, 4000, 9, 16, { x: 0.99, y: 0.99 })).toEqual({ left: 6000 - 2250, top: 0, width: 2250, height: 4000 });
    expect(cropRect(4000, 6000, 1, 1, { x: 1, y: 1 })).toEqual({ left: 0, top: 2000, width: 4000, height: 4000 });
  });
  it('a focus outside 0..1 or not a number is brought back inside', () => {
    expect(normaliseFocus({ x: -3, y: 7 })).toEqual({ x: 0, y: 1 });
    expect(normaliseFocus({ x: Number.NaN, y: 0.2 })).toEqual({ x: 0.5, y: 0.2 });
    expect(normaliseFocus(null)).toEqual(centre);
  });
  it('refuses sizes that are not whole pixels', () => {
    expect(() => cropRect(0, 100, 4, 5, centre)).toThrow(RangeError);
    expect(() => cropRect(100.5, 100, 4, 5, centre)).toThrow(RangeError);
    expect(() => cropRect(100, 100, 0, 5, centre)).toThrow(RangeError);
  });
});
