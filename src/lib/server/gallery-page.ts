import type { AstroGlobal } from 'astro';
import { db } from './db';
import { isUuid } from './permissions';
import type { SessionClient } from './client-access';

export interface GalleryStudio {
  name: string;
  brand_colour: string;
  contact_email: string | null;
  contact_phone: string | null;
}

export type GalleryPage =
  | { kind: 'open'; client: SessionClient; shoot: Record<string, any>; studio: GalleryStudio }
  | { kind: 'passcode'; client: SessionClient; shoot: Record<string, any>; studio: GalleryStudio }
  | { kind: 'closed'; reason: string; studio: GalleryStudio }
  | { kind: 'no-session' };

/** What a client sees at /gallery/<shootId>: the gallery, the passcode screen, a closed notice, or nothing. */
export async function galleryPageState(astro: AstroGlobal, shootId: string): Promise<GalleryPage> {
  const client = astro.locals.client;
  if (!client || !isUuid(shootId) || client.shootId !== shootId) return { kind: 'no-session' };
  const shoot = await db()('shoots').where({ id: shootId, studio_id: client.studioId }).first();
  if (!shoot) return { kind: 'no-session' };
  const studio = await studioForGallery(shoot.studio_id);
  if (client.closed) return { kind: 'closed', reason: client.closed, studio };
  if (!client.passcodeOk) return { kind: 'passcode', client, shoot, studio };
  return { kind: 'open', client, shoot, studio };
}

/**
 * The state for a gallery page behind the passcode: a redirect to the passcode screen when it is
 * still owed, otherwise the state, with the response status set for a missing session or a closed gallery.
 */
export async function galleryPage(astro: AstroGlobal): Promise<Response | Exclude<GalleryPage, { kind: 'passcode' }>> {
  const shootId = astro.params.shootId ?? '';
  const state = await galleryPageState(astro, shootId);
  if (state.kind === 'passcode') return astro.redirect(`/gallery/${shootId}/passcode`, 303);
  if (state.kind === 'no-session') astro.response.status = 401;
  if (state.kind === 'closed') astro.response.status = 410;
  return state;
}

export async function studioForGallery(studioId: string): Promise<GalleryStudio> {
  return db()('studios').where({ id: studioId }).first('name', 'brand_colour', 'contact_email', 'contact_phone');
}
