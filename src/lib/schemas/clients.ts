import { z } from 'zod';
import { emailField, nameField } from './account';

export const CLIENT_NOTES_MAX = 2000;

/** A phone number as people write it: digits with spaces, +, brackets, dots, dashes or slashes. */
export const phoneField = z
  .string()
  .trim()
  .max(40, 'Use at most 40 characters.')
  .regex(/^[+0-9 ().\/-]*$/, 'Use digits, spaces and + ( ) - only.')
  .refine((v) => v === '' || /\d{3}/.test(v.replace(/\D/g, '')), 'Enter a phone number with at least three digits, or leave it empty.');

/** A client's details: the same rules in the form and on the server. */
export const clientSchema = z.object({
  name: nameField,
  email: emailField,
  phone: phoneField.default(''),
  notes: z.string().trim().max(CLIENT_NOTES_MAX, `Use at most ${CLIENT_NOTES_MAX} characters.`).default(''),
});

export type ClientInput = z.infer<typeof clientSchema>;

export interface ClientDto {
  id: string;
  name: string;
  email: string;
  phone: string;
  notes: string;
  archivedAt: string | null;
  createdAt: string;
  shoots: number;
  activeShoots: number;
}
