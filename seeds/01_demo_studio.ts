/**
 * The demo studio: an invented portrait studio with an owner, a retoucher, three clients and shoots at
 * different stages. Frames are rendered by Fillcard itself (see scripts/seed-demo.ts).
 */
import type { Knex } from 'knex';
import { hashPassword } from '../src/lib/server/password';
import { DEMO_SIGN_INS } from '../scripts/lib/demo';

export const DEMO_PASSCODE = 'harbour';

/** The demo's light notes: a flash bounced off a board as key, a closer board as fill (invented setup). */
export const DEMO_LIGHT_NOTES = {
  room: { widthM: 2.4, depthM: 4 },
  subject: { x: 1.2, y: 2.6 },
  sources: [
    { id: 'key-flash', kind: 'flash', label: 'Key flash', power: 4, x: 0.4, y: 1.6, aimsAt: 'the key board', modifier: 'bare head' },
    { id: 'key-board', kind: 'bounce_board', label: 'Key board', x: 0.6, y: 2.1, aimsAt: 'the subject’s face, camera left' },
    { id: 'fill-board', kind: 'bounce_board', label: 'Fill board', x: 2.1, y: 3.0, aimsAt: 'the shadow side' },
  ],
  keyId: 'key-board',
  fillId: 'fill-board',
  camera: { shutterS: 1 / 250, fNumber: 5.6, iso: 100, focalLengthMm: 85 },
  notes: 'Backdrop 1.4 m behind the subject. Key flash at 1/2 was a stop hot; 1/4 was right.',
};

export const DEMO_STUDIO_NAME = 'Harbourlight Portraits';

/** Creates the demo studio unless it exists; returns its id either way. */
export async function seed(knex: Knex): Promise<string> {
  const existing = await knex('studios').where({ name: DEMO_STUDIO_NAME }).first('id');
  if (existing) return existing.id;

  const [studio] = await knex('studios').insert({
    name: DEMO_STUDIO_NAME,
    contact_email: 'hello@harbourlight.test',
    contact_phone: '+44 20 7946 0000',
    brand_colour: '#2f5d62',
    watermark_text: 'HARBOURLIGHT PROOF',
    watermark_opacity: 0.3,
    default_allowance: 8,
    default_extra_price_minor: 3500,
    default_currency: 'GBP',
    tax_rate_bp: 2000,
    tax_mode: 'inclusive',
  }).returning('id');

  for (const s of DEMO_SIGN_INS) {
    const [user] = await knex('users').insert({ email: s.email, name: s.name, password_hash: await hashPassword(s.password) }).returning('id');
    await knex('memberships').insert({ studio_id: studio.id, user_id: user.id, role: s.role });
  }

  const clients = await knex('clients').insert([
    { studio_id: studio.id, name: 'Mira Calloway', email: 'mira.calloway@example.test', phone: '+44 20 7946 0101' },
    { studio_id: studio.id, name: 'Jonah Brightwater', email: 'jonah.b@example.test' },
    { studio_id: studio.id, name: 'Priya Lindqvist-Amari', email: 'priya.la@example.test' },
    { studio_id: studio.id, name: 'Oren Vellacourt', email: 'oren.v@example.test' },
  ]).returning(['id', 'name']);

  const day = 86400_000;
  const now = Date.now();
  await knex('shoots').insert([
    {
      studio_id: studio.id, client_id: clients[0].id, title: 'Spring headshots', shot_on: new Date(now - 6 * day),
      stage: 'proofing', allowance: 5, extra_price_minor: 3500, currency: 'GBP', tax_rate_bp: 2000, tax_mode: 'inclusive',
      proof_expires_at: new Date(now + 24 * day), passcode_hash: await hashPassword(DEMO_PASSCODE), link_sent_at: new Date(now - 5 * day),
      light_notes: JSON.stringify(DEMO_LIGHT_NOTES),
    },
    {
      studio_id: studio.id, client_id: clients[1].id, title: 'Family sitting in the garden room', shot_on: new Date(now - 1 * day),
      stage: 'draft', allowance: 10, extra_price_minor: 3500, currency: 'GBP', tax_rate_bp: 2000, tax_mode: 'inclusive',
      proof_expires_at: new Date(now + 30 * day),
    },
    {
      studio_id: studio.id, client_id: clients[2].id, title: 'Graduation portraits', shot_on: new Date(now - 20 * day),
      stage: 'picks_in', allowance: 3, extra_price_minor: 4000, currency: 'GBP', tax_rate_bp: 2000, tax_mode: 'inclusive',
      proof_expires_at: new Date(now + 10 * day), picks_submitted_at: new Date(now - 3 * day),
    },
    {
      studio_id: studio.id, client_id: clients[3].id, title: 'Autumn portraits by the window', shot_on: new Date(now - 40 * day),
      stage: 'delivered', allowance: 3, extra_price_minor: 3500, currency: 'GBP', tax_rate_bp: 2000, tax_mode: 'inclusive',
      proof_expires_at: new Date(now - 10 * day), picks_submitted_at: new Date(now - 30 * day), link_sent_at: new Date(now - 38 * day),
      download_until: new Date(now + 50 * day),
    },
  ]);
  return studio.id;
}
