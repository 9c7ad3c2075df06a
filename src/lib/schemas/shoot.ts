import { z } from 'zod';
import { SUPPORTED_CURRENCIES, minorUnits } from '../currency';
import { emailField, nameField } from './account';

/** A calendar day as YYYY-MM-DD that exists (no 31 February), in a sane range of years. */
const isRealDay = (v: string) => {
  const [y, m, d] = v.split('-').map(Number) as [number, number, number];
  const t = new Date(Date.UTC(y, m - 1, d));
  return y >= 1900 && y <= 2199 && t.getUTCFullYear() === y && t.getUTCMonth() === m - 1 && t.getUTCDate() === d;
};
const dayField = (message: string) => z.string({ invalid_type_error: message }).regex(/^\d{4}-\d{2}-\d{2}$/, message).refine(isRealDay, 'That day does not exist; check the date.');
const wholeNumber = { invalid_type_error: 'Enter a whole number.', required_error: 'Enter a whole number.' };

/** One definition per field, shared by the new-shoot form and the shoot details form. */
export const shootFields = {
  title: z.string({ invalid_type_error: 'Give the shoot a title.' }).trim().min(1, 'Give the shoot a title.').max(160, 'Use at most 160 characters.'),
  shotOn: dayField('Enter the date of the shoot.'),
  allowance: z.number(wholeNumber).int('Use a whole number.').min(0, 'Use 0 or more.').max(1000, 'Use at most 1000.'),
  /** Price per extra retouch in the currency's minor units (cents, pence, yen). */
  extraPriceMinor: z.number(wholeNumber).int('Use a whole number of minor units.').min(0, 'The price cannot be negative.').max(100_000_000, 'That price is too high.'),
  currency: z.enum(SUPPORTED_CURRENCIES, { errorMap: () => ({ message: 'Choose a currency.' }) }),
  taxRateBp: z.number(wholeNumber).int('Use a whole number of basis points.').min(0, 'Use 0% or more.').max(10_000, 'Use at most 100%.'),
  taxMode: z.enum(['exclusive', 'inclusive'], { errorMap: () => ({ message: 'Choose whether your prices include tax.' }) }),
  proofExpiresOn: dayField('Enter the day the proofs close.'),
  passcode: z.string({ invalid_type_error: 'Type the passcode as text.' }).trim().max(64, 'Use at most 64 characters.'),
};

// The new-shoot form sends numbers typed as text; the details form and API callers send numbers.
const typedNumber = <T extends z.ZodTypeAny>(field: T) => z.preprocess((v) => Number(v), field);
const todayUtc = () => new Date().toISOString().slice(0, 10);
const passcodeLongEnough = (v: string | undefined) => !v || v.length >= 4;
const PASSCODE_TOO_SHORT = 'Use at least 4 characters, or leave it empty.';

/** The new-shoot form, checked the same way in the browser and on the server. */
export const newShootSchema = z
  .object({
    client: z.discriminatedUnion('kind', [
      z.object({ kind: z.literal('existing'), id: z.string().uuid('Choose a client.') }),
      z.object({ kind: z.literal('new'), name: nameField, email: emailField }),
    ]),
    title: shootFields.title,
    shotOn: shootFields.shotOn,
    allowance: typedNumber(shootFields.allowance),
    extraPriceMinor: typedNumber(shootFields.extraPriceMinor),
    currency: shootFields.currency,
    taxRateBp: typedNumber(shootFields.taxRateBp),
    taxMode: shootFields.taxMode,
    proofExpiresOn: shootFields.proofExpiresOn,
    passcode: shootFields.passcode.optional().or(z.literal('')),
  })
  .refine((v) => v.proofExpiresOn > todayUtc(), {
    path: ['proofExpiresOn'],
    message: 'Choose a day after today.',
  })
  .refine((v) => passcodeLongEnough(v.passcode), { path: ['passcode'], message: PASSCODE_TOO_SHORT });

export type NewShootInput = z.infer<typeof newShootSchema>;

/** The package terms: fixed once the client has sent picks or a payment for extras is under way. */
export const TERMS_FIELDS = ['allowance', 'extraPriceMinor', 'currency', 'taxRateBp', 'taxMode'] as const;
export type TermsField = (typeof TERMS_FIELDS)[number];

/**
 * A change to a shoot's details: every field is optional and only the fields sent are changed.
 * `passcode: ''` removes the passcode. The expiry may move earlier or later but not into the past
 * (today is fine: the proofs stay open to the end of the day, UTC).
 */
export const shootDetailsSchema = z
  .object({
    title: shootFields.title,
    shotOn: shootFields.shotOn,
    proofExpiresOn: shootFields.proofExpiresOn.refine((v) => v >= todayUtc(), 'Choose today or a later day; the proofs cannot close in the past.'),
    passcode: shootFields.passcode.refine(passcodeLongEnough, PASSCODE_TOO_SHORT),
    allowance: shootFields.allowance,
    extraPriceMinor: shootFields.extraPriceMinor,
    currency: shootFields.currency,
    taxRateBp: shootFields.taxRateBp,
    taxMode: shootFields.taxMode,
  })
  .partial()
  .strict('Only the shoot\'s details can be changed here.')
  // A price in minor units means something else in another currency (2500 cents vs 2500 yen).
  .refine((v) => v.currency === undefined || v.extraPriceMinor !== undefined, {
    path: ['extraPriceMinor'],
    message: 'When you change the currency, give the price per extra retouch in the new currency too.',
  });

export type ShootDetailsInput = z.infer<typeof shootDetailsSchema>;

/** A shoot's editable details as the details form shows them. */
export interface ShootDetails {
  title: string;
  /** YYYY-MM-DD */
  shotOn: string;
  /** The last day the proofs are open (UTC), YYYY-MM-DD. */
  proofExpiresOn: string;
  proofsClosed: boolean;
  hasPasscode: boolean;
  allowance: number;
  extraPriceMinor: number;
  currency: string;
  taxRateBp: number;
  taxMode: 'exclusive' | 'inclusive';
  stage: Stage;
  /** Why the package terms can no longer change, or null while they can. */
  termsLocked: string | null;
  /** Why nothing can change (an archived shoot), or null. */
  locked: string | null;
}

export interface ShootDetailsResult {
  /** The names of the fields that changed (never their values for the passcode). */
  changed: string[];
  details: ShootDetails;
}

export const minorStep = (currency: string) => 1 / 10 ** minorUnits(currency);

export const STAGES = ['draft', 'proofing', 'picks_in', 'retouching', 'delivered', 'archived'] as const;
export type Stage = (typeof STAGES)[number];
export const STAGE_LABEL: Record<Stage, string> = {
  draft: 'Draft',
  proofing: 'Proofing',
  picks_in: 'Picks in',
  retouching: 'Retouching',
  delivered: 'Delivered',
  archived: 'Archived',
};

export const frameEditSchema = z.object({
  hidden: z.boolean().optional(),
  focus: z.object({ x: z.number().min(0).max(1), y: z.number().min(0).max(1) }).optional(),
});

export const registerUploadSchema = z.object({
  key: z.string().min(1).max(300),
  // Long names are shortened on the server rather than refused: the file is already in storage.
  name: z.string().min(1).max(1000),
  // 0 is let through so the server can answer with a clear message and remove the empty object.
  size: z.number().int().nonnegative(),
});

export const signRequestSchema = z.object({
  method: z.enum(['PUT', 'POST', 'GET', 'DELETE']),
  key: z.string().max(300).default(''),
  uploadId: z.string().max(500).optional(),
  partNumber: z.number().int().min(1).max(10_000).optional(),
  contentType: z.string().max(100).optional(),
  fileName: z.string().max(255).optional(),
  size: z.number().int().nonnegative().optional(),
});
