/** Small display helpers shared by the desk's islands. Pure: same text on the server and in the browser. */
import type { Stage } from '../../lib/schemas/shoot';

// Dates are shown in UTC on purpose: a sitting's day is stored as a plain date and proof expiry as
// the end of a UTC day, so UTC reads back the day the owner chose, on the server and in any browser.
const DAY = new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short', year: 'numeric', timeZone: 'UTC' });

/** "2026-05-04" → "4 May 2026". */
export function formatDay(isoDay: string): string {
  return DAY.format(new Date(`${isoDay.slice(0, 10)}T00:00:00Z`));
}

export function formatInstantDay(iso: string): string {
  return DAY.format(new Date(iso));
}

/** Whole days from now until an instant, rounded up: 0 means later today, negative means past. */
export function daysUntil(iso: string, now = Date.now()): number {
  return Math.ceil((new Date(iso).getTime() - now) / 86_400_000);
}

/** Chip colours per stage, from the paper-and-clay palette; the label always carries the meaning. */
export const STAGE_TONE: Record<Stage, string> = {
  draft: 'border-ink-faint/40 text-ink-soft bg-white',
  proofing: 'border-clay/40 text-clay-dark bg-clay-light/40',
  picks_in: 'border-amber/40 text-amber bg-amber-light/60',
  retouching: 'border-ink/30 text-ink bg-paper-deep',
  delivered: 'border-moss/40 text-moss bg-moss-light',
  archived: 'border-ink-faint/30 text-ink-faint bg-white',
};

export const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;
