import { z } from 'zod';
import { SUPPORTED_CURRENCIES, minorUnits } from '../currency';
import { emailField, nameField } from './account';

/** The new-shoot form, checked the same way in the browser and on the server. */
export const newShootSchema = z
  .object({
    client: z.discriminatedUnion('kind', [
      z.object({ kind: z.literal('existing'), id: z.string().uuid('Choose a client.') }),
      z.object({ kind: z.literal('new'), name: nameField, email: emailField }),
    ]),
    title: z.string().trim().min(1, 'Give the shoot a title.').max(160, 'Use at most 160 characters.'),
    shotOn: z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'Enter the date of the shoot.'),
    allowance: z.coerce.number().int('Use a whole number.').min(0, 'Use 0 or more.').max(1000, 'Use at most 1000.'),
    /** Price per extra retouch in the currency's minor units (cents, pence, yen). */
    extraPriceMinor: z.coerce.number().int().min(0, 'The price cannot be negative.').max(100_000_000, 'That price is too high.'),
    currency: z.enum(SUPPORTED_CURRENCIES, { errorMap: () => ({ message: 'Choose a currency.' }) }),
    taxRateBp: z.coerce.number().int().min(0, 'Use 0% or more.').max(10_000, 'Use at most 100%.'),
    taxMode: z.enum(['exclusive', 'inclusive']),
    proofExpiresOn: z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'Enter the day the proofs close.'),
    passcode: z.string().trim().max(64, 'Use at most 64 characters.').optional().or(z.literal('')),
  })
  .refine((v) => v.proofExpiresOn > new Date().toISOString().slice(0, 10), {
    path: ['proofExpiresOn'],
    message: 'Choose a day after today.',
  })
  .refine((v) => !v.passcode || v.passcode.length >= 4, { path: ['passcode'], message: 'Use at least 4 characters, or leave it empty.' });

export type NewShootInput = z.infer<typeof newShootSchema>;

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
