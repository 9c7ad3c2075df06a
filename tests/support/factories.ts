/**
 * Builds real rows through Fillcard's own server modules (real hashing, real tokens), so tests start
 * from a studio, members, clients and shoots without clicking through every form.
 */
import { randomUUID } from 'node:crypto';
import { db } from '../../src/lib/server/db';
import { hashPassword } from '../../src/lib/server/password';
import { issueViewingLink, hashPasscode } from '../../src/lib/server/client-access';
import { Agent } from './http';

export const PASSWORD = 'test-password-123';

export interface TestStudio {
  studioId: string;
  owner: { id: string; email: string };
  retoucher: { id: string; email: string };
}

export async function makeStudio(label = 'Test'): Promise<TestStudio> {
  const tag = randomUUID().slice(0, 8);
  const hash = await hashPassword(PASSWORD);
  const [studio] = await db()('studios').insert({ name: `${label} Studio ${tag}`, contact_email: `studio-${tag}@example.test` }).returning('id');
  const [owner] = await db()('users').insert({ email: `owner-${tag}@example.test`, name: `Owner ${tag}`, password_hash: hash }).returning(['id', 'email']);
  const [retoucher] = await db()('users').insert({ email: `retoucher-${tag}@example.test`, name: `Retoucher ${tag}`, password_hash: hash }).returning(['id', 'email']);
  await db()('memberships').insert([
    { studio_id: studio.id, user_id: owner.id, role: 'owner' },
    { studio_id: studio.id, user_id: retoucher.id, role: 'retoucher' },
  ]);
  return { studioId: studio.id, owner, retoucher };
}

export async function makeShoot(studioId: string, opts: { passcode?: string; stage?: string; allowance?: number; proofExpiresInDays?: number; clientEmail?: string; extraPriceMinor?: number; currency?: string } = {}) {
  const tag = randomUUID().slice(0, 8);
  const [client] = await db()('clients').insert({ studio_id: studioId, name: `Client ${tag}`, email: opts.clientEmail ?? `client-${tag}@example.test` }).returning(['id', 'email', 'name']);
  const [shoot] = await db()('shoots').insert({
    studio_id: studioId,
    client_id: client.id,
    title: `Sitting ${tag}`,
    shot_on: new Date(),
    stage: opts.stage ?? 'proofing',
    allowance: opts.allowance ?? 3,
    extra_price_minor: opts.extraPriceMinor ?? 2500,
    currency: opts.currency ?? 'EUR',
    proof_expires_at: new Date(Date.now() + (opts.proofExpiresInDays ?? 14) * 86400_000),
    passcode_hash: opts.passcode ? await hashPasscode(opts.passcode) : null,
  }).returning('*');
  const token = await issueViewingLink(shoot.id, studioId);
  return { shoot, client, token };
}

export async function memberAgent(email: string, password = PASSWORD): Promise<Agent> {
  const agent = new Agent();
  const res = await agent.postForm('/signin', { email, password });
  if (res.status !== 303) throw new Error(`sign-in for ${email} answered ${res.status}`);
  return agent;
}

export async function clientAgent(token: string, passcode?: string): Promise<Agent> {
  const agent = new Agent();
  const res = await agent.get(`/g/${token}`);
  if (res.status !== 303) throw new Error(`viewing link answered ${res.status}`);
  if (passcode) {
    const shootId = res.headers.get('location')!.split('/')[2];
    const r = await agent.postForm(`/gallery/${shootId}/passcode`, { passcode });
    if (r.status !== 303) throw new Error(`passcode answered ${r.status}`);
  }
  return agent;
}
