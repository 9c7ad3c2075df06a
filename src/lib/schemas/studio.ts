import { z } from 'zod';
import { SUPPORTED_CURRENCIES, MoneyParseError, parseMoney } from '../currency';
import { AA_LARGE_TEXT, AA_NORMAL_TEXT, WHITE_HEX, contrastRatio } from '../contrast';
import { emailField, nameField } from './account';
import { phoneField } from './clients';
import { STAGES, type Stage } from './shoot';

// ---------------------------------------------------------------------------------------------
// Studio settings

/** Fillcard's paper background (tailwind `paper`): where a brand colour shows as text. */
export const PAPER_HEX = '#f7f3ec';

export const WATERMARK_TEXT_MAX = 80;
export const OPACITY_MIN_PCT = 5;
export const OPACITY_MAX_PCT = 90;
export const MAX_PRICE_MINOR = 100_000_000;
export const LOGO_MAX_BYTES = 2 * 1024 * 1024;

/**
 * A contrast ratio as WCAG readers quote it, cut (not rounded) to two decimals, so a colour at
 * 4.497:1 never reads as "4.50:1" beside a refusal.
 */
export function formatContrast(ratio: number): string {
  return `${(Math.floor(ratio * 100) / 100).toFixed(2)}:1`;
}

export interface ColourCheck {
  hex: string;
  /** White button text on the colour (WCAG 2.x AA, normal text: 4.5:1). Saving needs this. */
  whiteOn: { ratio: number; passes: boolean };
  /** The colour as text on Fillcard's paper: 4.5:1 for body text, 3:1 for large headings. */
  onPaper: { ratio: number; passesNormal: boolean; passesLarge: boolean };
}

export function checkBrandColour(hex: string): ColourCheck {
  const white = contrastRatio(WHITE_HEX, hex);
  const paper = contrastRatio(hex, PAPER_HEX);
  return {
    hex,
    whiteOn: { ratio: white, passes: white >= AA_NORMAL_TEXT },
    onPaper: { ratio: paper, passesNormal: paper >= AA_NORMAL_TEXT, passesLarge: paper >= AA_LARGE_TEXT },
  };
}

export function whiteTextProblem(hex: string): string | null {
  const { whiteOn } = checkBrandColour(hex);
  if (whiteOn.passes) return null;
  return (
    `White button text on ${hex} has a contrast of ${formatContrast(whiteOn.ratio)}; ` +
    `WCAG 2.x AA asks for at least 4.5:1, so clients could struggle to read your buttons. Choose a darker colour.`
  );
}

export const brandColourField = z
  .string()
  .trim()
  .toLowerCase()
  .regex(/^#[0-9a-f]{6}$/, 'Use a colour like #a4492b: a # and six hex digits.')
  .superRefine((hex, ctx) => {
    // Zod runs this even after the pattern failed; a colour that does not read has nothing to check.
    if (!/^#[0-9a-f]{6}$/.test(hex)) return;
    const problem = whiteTextProblem(hex);
    if (problem) ctx.addIssue({ code: z.ZodIssueCode.custom, message: problem });
  });

/** An optional e-mail: empty, or checked like every other e-mail in Fillcard. */
const optionalEmail = z
  .string()
  .trim()
  .toLowerCase()
  .superRefine((v, ctx) => {
    if (v === '') return;
    const r = emailField.safeParse(v);
    if (!r.success) ctx.addIssue({ code: z.ZodIssueCode.custom, message: r.error.issues[0]?.message ?? 'Enter a valid e-mail address.' });
  });

const wholeNumber = (min: number, max: number, what: string) =>
  z.coerce
    .number({ invalid_type_error: `Enter ${what}.` })
    .int('Use a whole number.')
    .min(min, `Use ${min} or more.`)
    .max(max, `Use at most ${max}.`);

/** The studio settings form, as sent to the server: prices in major units as typed, tax in percent. */
export const studioSettingsSchema = z
  .object({
    name: nameField,
    contactEmail: optionalEmail,
    contactPhone: phoneField,
    brandColour: brandColourField,
    watermarkText: z.string().trim().min(1, 'Enter the text to tile over proofs.').max(WATERMARK_TEXT_MAX, `Use at most ${WATERMARK_TEXT_MAX} characters.`),
    watermarkOpacityPct: wholeNumber(OPACITY_MIN_PCT, OPACITY_MAX_PCT, 'an opacity'),
    defaultAllowance: wholeNumber(0, 1000, 'how many retouches are included'),
    /** Price per extra retouch in major units as typed ("25.50"); stored in minor units. */
    defaultExtraPrice: z.string().trim().max(20, 'That price is too long.'),
    defaultCurrency: z.enum(SUPPORTED_CURRENCIES, { errorMap: () => ({ message: 'Choose a currency.' }) }),
    taxRatePct: z.coerce
      .number({ invalid_type_error: 'Enter a tax rate.' })
      .min(0, 'Use 0% or more.')
      .max(100, 'Use at most 100%.')
      .refine((v) => Math.abs(v * 100 - Math.round(v * 100)) < 1e-6, 'Use at most two decimals.'),
    taxMode: z.enum(['exclusive', 'inclusive']),
    proofExpiryDays: wholeNumber(1, 365, 'a number of days'),
    downloadExpiryDays: wholeNumber(1, 730, 'a number of days'),
    retentionDays: wholeNumber(30, 3650, 'a number of days'),
  })
  .superRefine((v, ctx) => {
    try {
      const minor = parseMoney(v.defaultExtraPrice, v.defaultCurrency);
      if (minor > MAX_PRICE_MINOR) ctx.addIssue({ code: z.ZodIssueCode.custom, path: ['defaultExtraPrice'], message: 'That price is too high.' });
    } catch (err) {
      if (!(err instanceof MoneyParseError)) throw err;
      ctx.addIssue({ code: z.ZodIssueCode.custom, path: ['defaultExtraPrice'], message: err.message });
    }
  });

export type StudioSettingsInput = z.input<typeof studioSettingsSchema>;
export type StudioSettings = z.output<typeof studioSettingsSchema>;

/** What the settings page and API send to the form; a logo is shown by its presence only. */
export interface StudioSettingsDto extends StudioSettings {
  hasLogo: boolean;
}

// ---------------------------------------------------------------------------------------------
// The desk's shoots table

export const DESK_SORTS = ['client', 'date', 'title', 'stage', 'frames', 'picks', 'extras', 'expiry'] as const;
export type DeskSort = (typeof DESK_SORTS)[number];
export const DESK_PAGE_SIZES = [10, 25, 50, 100] as const;
export const DESK_STAGE_FILTERS = ['active', 'all', ...STAGES] as const;
export type DeskStageFilter = (typeof DESK_STAGE_FILTERS)[number];

export const DESK_DEFAULTS = { page: 1, pageSize: 25, sort: 'date', dir: 'desc', stage: 'active', q: '' } as const;

export const deskShootsQuerySchema = z.object({
  page: z.coerce.number().int().min(1, 'Pages start at 1.').max(100_000).default(DESK_DEFAULTS.page),
  pageSize: z.coerce
    .number()
    .int()
    .refine((n) => (DESK_PAGE_SIZES as readonly number[]).includes(n), `Use a page size of ${DESK_PAGE_SIZES.join(', ')}.`)
    .default(DESK_DEFAULTS.pageSize),
  sort: z.enum(DESK_SORTS, { errorMap: () => ({ message: `Sort by one of ${DESK_SORTS.join(', ')}.` }) }).default(DESK_DEFAULTS.sort),
  dir: z.enum(['asc', 'desc']).default(DESK_DEFAULTS.dir),
  stage: z.enum(DESK_STAGE_FILTERS, { errorMap: () => ({ message: 'Choose a stage.' }) }).default(DESK_DEFAULTS.stage),
  q: z.string().trim().max(120, 'Search with at most 120 characters.').default(DESK_DEFAULTS.q),
});

export type DeskShootsQuery = z.output<typeof deskShootsQuerySchema>;

/** Reads the table state from a URL's query string; empty values count as missing. */
export function deskQueryFromSearch(search: URLSearchParams | string): Record<string, string> {
  const params = typeof search === 'string' ? new URLSearchParams(search) : search;
  const out: Record<string, string> = {};
  for (const key of ['page', 'pageSize', 'sort', 'dir', 'stage', 'q'] as const) {
    const v = params.get(key);
    if (v !== null && v !== '') out[key] = v;
  }
  return out;
}

/**
 * For pages: the table state from the URL, dropping any value that does not read (a hand-edited
 * link should still show the table, with that one setting at its default).
 */
export function deskQueryLenient(raw: Record<string, string>): DeskShootsQuery {
  const input: Record<string, string> = { ...raw };
  for (let i = 0; i < 6; i++) {
    const r = deskShootsQuerySchema.safeParse(input);
    if (r.success) return r.data;
    for (const issue of r.error.issues) delete input[String(issue.path[0])];
  }
  return deskShootsQuerySchema.parse({});
}

/** The table state as a query string, leaving out defaults so plain /desk stays plain. */
export function deskQueryToSearch(q: DeskShootsQuery): string {
  const params = new URLSearchParams();
  if (q.q) params.set('q', q.q);
  if (q.stage !== DESK_DEFAULTS.stage) params.set('stage', q.stage);
  if (q.sort !== DESK_DEFAULTS.sort || q.dir !== DESK_DEFAULTS.dir) {
    params.set('sort', q.sort);
    params.set('dir', q.dir);
  }
  if (q.pageSize !== DESK_DEFAULTS.pageSize) params.set('pageSize', String(q.pageSize));
  if (q.page !== DESK_DEFAULTS.page) params.set('page', String(q.page));
  const s = params.toString();
  return s ? `?${s}` : '';
}

export interface DeskShootRow {
  id: string;
  title: string;
  clientName: string;
  /** The day of the sitting, YYYY-MM-DD. */
  shotOn: string;
  stage: Stage;
  frames: number;
  picks: number;
  allowance: number;
  proofExpiresAt: string;
  /** Owners only: sum of paid orders' totals, in minor units of `currency`. */
  extrasPaidMinor?: number;
  currency?: string;
}

export interface DeskShootsPage {
  rows: DeskShootRow[];
  total: number;
  page: number;
  pageSize: number;
  pageCount: number;
  /** Whether money columns are part of this answer (owners only). */
  showMoney: boolean;
  /** Whether the studio has any shoot at all: tells "no shoots yet" from "no matches". */
  studioHasShoots: boolean;
  query: DeskShootsQuery;
}
