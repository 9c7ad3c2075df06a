/**
 * Picks and the viewing link: the rules and shapes shared by the gallery island, the review screen
 * and the server, so a note the browser accepts is a note the server accepts.
 */
import { z } from 'zod';
import type { TaxMode } from '../pricing';

export const MAX_NOTE = 1000;
export const MAX_LINK_MESSAGE = 1000;

/**
 * Plain text only: line ends made uniform and control characters (other than new line and tab)
 * dropped, because PostgreSQL refuses NUL and the others only ever arrive by accident. Nothing is
 * interpreted as markup; every screen and e-mail escapes the text when it shows it.
 */
export function plainText(value: string): string {
  return value.replace(/\r\n?/g, '\n').replace(/[\u0000-\u0008\u000b\u000c\u000e-\u001f\u007f]/g, '');
}

const noteText = z
  .string()
  .transform(plainText)
  .pipe(z.string().max(MAX_NOTE, `Keep the note to ${MAX_NOTE} characters.`));

/**
 * PUT /api/gallery/:shootId/picks/:frameId. Without `note` the frame is picked and any note it already
 * has stays (so a second device that only taps "pick" never wipes a note typed on the first).
 */
export const pickInputSchema = z.object({ note: noteText.optional() }).strict();
export type PickInput = z.infer<typeof pickInputSchema>;

export const sendLinkSchema = z.object({
  message: z
    .string()
    .transform((v) => plainText(v).trim())
    .pipe(z.string().max(MAX_LINK_MESSAGE, `Keep the message to ${MAX_LINK_MESSAGE} characters.`))
    .optional()
    .default(''),
});
export type SendLinkInput = z.infer<typeof sendLinkSchema>;

// ---------------------------------------------------------------------------------------------
// What the gallery API sends to the client's browser

export interface GalleryImage {
  url: string;
  width: number;
  height: number;
}

/** A frame as the client sees it: its name and its watermarked proof and thumbnail, nothing more. */
export interface GalleryFrame {
  id: string;
  name: string;
  thumb: GalleryImage;
  proof: GalleryImage;
}

export interface GalleryPick {
  frameId: string;
  note: string;
  updatedAt: string;
}

export interface GalleryTerms {
  allowance: number;
  extraPriceMinor: number;
  currency: string;
  taxRateBp: number;
  taxMode: TaxMode;
}

export interface GalleryData {
  shootId: string;
  title: string;
  studioName: string;
  terms: GalleryTerms;
  frames: GalleryFrame[];
  picks: GalleryPick[];
  /** When the client sent the picks; null while they are still choosing. */
  submittedAt: string | null;
  /** Picks can be changed now (proofing, not yet sent). */
  canPick: boolean;
  /** Picks were sent with extras and the extras are not paid yet. */
  awaitingPayment: boolean;
  /** The extras have been paid for. */
  extrasPaid: boolean;
}

export interface SubmitResult {
  needsPayment: boolean;
  extras: number;
  totalMinor: number;
}
