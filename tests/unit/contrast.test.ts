import { describe, expect, it } from 'vitest';
import {
  INK_HEX,
  bestTextOn,
  contrastRatio,
  isHexColor,
  parseHexColor,
  passesAA,
  relativeLuminance,
} from '@/lib/contrast';

/**
 * A second, independent derivation written out step by step from the definitions in
 * WCAG 2.1 (relative luminance; contrast ratio), used to cross-check the module.
 */
function derivedGreyOnWhite(level: number): number {
  const srgb = level / 255;
  const linear = srgb <= 0.03928 ? srgb / 12.92 : Math.pow((srgb + 0.055) / 1.055, 2.4);
  // A grey has R = G = B, and the weights 0.2126 + 0.7152 + 0.0722 sum to 1.
  const grey = linear * (0.2126 + 0.7152 + 0.0722);
  const white = 1;
  return (white + 0.05) / (grey + 0.05);
}

describe('WCAG 2.1, 1.4.3 and the relative luminance definition', () => {
  it('black and white are 0 and 1 in luminance, and 21:1 in contrast (the top of the 1–21 range)', () => {
    expect(relativeLuminance('#000000')).toBe(0);
    expect(relativeLuminance('#ffffff')).toBeCloseTo(1, 12);
    expect(contrastRatio('#000000', '#ffffff')).toBeCloseTo(21, 10);
    expect(contrastRatio('#ffffff', '#000000')).toBeCloseTo(21, 10);
  });

  it('a colour against itself is 1:1 (the bottom of the range)', () => {
    for (const c of ['#000', '#a4492b', '#f7f3ec', '#767676']) expect(contrastRatio(c, c)).toBeCloseTo(1, 12);
  });

  it('#777777 on white is about 4.48:1 and fails AA for normal text (value from memory, derived below)', () => {
    const ratio = contrastRatio('#777777', '#ffffff');
    expect(ratio).toBeCloseTo(4.48, 2);
    expect(ratio).toBeCloseTo(derivedGreyOnWhite(0x77), 10);
    expect(passesAA('#777777', '#ffffff')).toBe(false);
    // 1.4.3: large text needs only 3:1.
    expect(passesAA('#777777', '#ffffff', { largeText: true })).toBe(true);
  });

  it('#767676 on white is about 4.54:1 and passes AA for normal text (value from memory, derived below)', () => {
    const ratio = contrastRatio('#767676', '#ffffff');
    expect(ratio).toBeCloseTo(4.54, 2);
    expect(ratio).toBeCloseTo(derivedGreyOnWhite(0x76), 10);
    expect(passesAA('#767676', '#ffffff')).toBe(true);
  });

  it('uses the channel weights 0.2126, 0.7152, 0.0722 for pure red, green, blue', () => {
    expect(relativeLuminance('#ff0000')).toBeCloseTo(0.2126, 12);
    expect(relativeLuminance('#00ff00')).toBeCloseTo(0.7152, 12);
    expect(relativeLuminance('#0000ff')).toBeCloseTo(0.0722, 12);
  });

  it('uses the linear segment below 0.03928 (channel 10/255 = 0.0392 → /12.92)', () => {
    expect(relativeLuminance('#0a0a0a')).toBeCloseTo(10 / 255 / 12.92, 12);
  });

  it('AA large text threshold is 3:1: a grey just above and just below it', () => {
    // Find, by the derivation above, the lightest grey that still reaches 3:1 on white.
    let level = 255;
    while (derivedGreyOnWhite(level) < 3) level--;
    const hex = (v: number) => `#${v.toString(16).padStart(2, '0').repeat(3)}`;
    expect(passesAA(hex(level), '#fff', { largeText: true })).toBe(true);
    expect(passesAA(hex(level + 1), '#fff', { largeText: true })).toBe(false);
  });
});

describe('bestTextOn', () => {
  it('picks whichever of ink and white contrasts more', () => {
    for (const bg of ['#000000', '#ffffff', '#a4492b', '#3f6b4a', '#f6e3b8', '#7f7f7f', '#1f2a30']) {
      const choice = bestTextOn(bg);
      const ink = contrastRatio(INK_HEX, bg);
      const white = contrastRatio('#ffffff', bg);
      expect(choice.ratio).toBe(Math.max(ink, white));
      expect(choice.name).toBe(white > ink ? 'white' : 'ink');
    }
  });

  it('ink on white, white on black', () => {
    expect(bestTextOn('#ffffff').name).toBe('ink');
    expect(bestTextOn('#000000').name).toBe('white');
  });
});

describe('hex parsing', () => {
  it('reads 3 and 6 digit forms, with or without #', () => {
    expect(parseHexColor('#a42')).toEqual({ r: 0xaa, g: 0x44, b: 0x22 });
    expect(parseHexColor('A4492B')).toEqual({ r: 164, g: 73, b: 43 });
    expect(isHexColor('#12345')).toBe(false);
    expect(() => parseHexColor('red')).toThrow(RangeError);
  });
});
