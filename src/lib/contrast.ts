/**
 * Contrast of a studio's brand colour against text, by the WCAG 2.x definitions of relative
 * luminance and contrast ratio. Pure: the settings form warns live, the server can refuse.
 */

/** Fillcard's ink (tailwind `ink`), the dark text choice on light brand colours. */
export const INK_HEX = '#1f2a30';
export const WHITE_HEX = '#ffffff';

/** WCAG 2.x AA minimums: normal text 4.5:1; large text (18 pt, or 14 pt bold) 3:1. */
export const AA_NORMAL_TEXT = 4.5;
export const AA_LARGE_TEXT = 3;

export type Rgb = { r: number; g: number; b: number };

const HEX = /^#?([0-9a-f]{3}|[0-9a-f]{6})$/i;

export function isHexColor(value: string): boolean {
  return HEX.test(value.trim());
}

/** "#a4492b", "a4492b" or "#a42" → 0–255 channels. Throws on anything else. */
export function parseHexColor(value: string): Rgb {
  const match = HEX.exec(value.trim());
  if (!match) throw new RangeError(`Not a hex colour: ${value}`);
  let hex = match[1]!;
  if (hex.length === 3) hex = [...hex].map((c) => c + c).join('');
  return {
    r: parseInt(hex.slice(0, 2), 16),
    g: parseInt(hex.slice(2, 4), 16),
    b: parseInt(hex.slice(4, 6), 16),
  };
}

/** sRGB channel (0–255) to linear light, with WCAG 2.x's 0.03928 threshold. */
function linearChannel(channel: number): number {
  const c = channel / 255;
  return c <= 0.03928 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4;
}

/** WCAG 2.x relative luminance, 0 (black) to 1 (white). */
export function relativeLuminance(color: string | Rgb): number {
  const { r, g, b } = typeof color === 'string' ? parseHexColor(color) : color;
  return 0.2126 * linearChannel(r) + 0.7152 * linearChannel(g) + 0.0722 * linearChannel(b);
}

/** (L1 + 0.05) / (L2 + 0.05) with L1 the lighter: 1 to 21, order of arguments does not matter. */
export function contrastRatio(a: string | Rgb, b: string | Rgb): number {
  const la = relativeLuminance(a);
  const lb = relativeLuminance(b);
  const [lighter, darker] = la >= lb ? [la, lb] : [lb, la];
  return (lighter + 0.05) / (darker + 0.05);
}

/** Whether fg on bg meets WCAG 2.x AA for normal text (4.5:1) or large text (3:1). */
export function passesAA(fg: string | Rgb, bg: string | Rgb, options: { largeText?: boolean } = {}): boolean {
  return contrastRatio(fg, bg) >= (options.largeText ? AA_LARGE_TEXT : AA_NORMAL_TEXT);
}

export type TextChoice = { name: 'ink' | 'white'; hex: string; ratio: number };

/** Ink or white text on bg, whichever contrasts more (ties go to ink). */
export function bestTextOn(bg: string | Rgb): TextChoice {
  const ink = contrastRatio(INK_HEX, bg);
  const white = contrastRatio(WHITE_HEX, bg);
  return white > ink ? { name: 'white', hex: WHITE_HEX, ratio: white } : { name: 'ink', hex: INK_HEX, ratio: ink };
}
