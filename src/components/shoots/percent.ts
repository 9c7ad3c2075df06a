/** Tax rates as people type them ("20", "7.5", "19,6") and as Fillcard stores them (basis points). */

/** Basis points for a typed percentage, or a message saying what is wrong with it. */
export function parsePercent(text: string): number | string {
  const t = text.trim().replace(/\s*%$/, '');
  if (t === '') return 'Enter the tax rate, or 0.';
  const m = /^(\d{1,3})(?:[.,](\d{1,2}))?$/.exec(t);
  if (!m) return `"${text.trim()}" is not a percentage; type it like 20 or 7.5.`;
  const bp = Number(m[1]) * 100 + Number((m[2] ?? '').padEnd(2, '0'));
  if (bp > 10_000) return 'Use at most 100%.';
  return bp;
}

/** "20", "7.5", "19.25": the shortest text that reads back to the same basis points. */
export function percentText(bp: number): string {
  return String(Number((bp / 100).toFixed(2)));
}
