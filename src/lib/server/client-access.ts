/**
 * How a client reaches a shoot: the viewing link carries a random token (only its hash is stored);
 * opening it starts a client session for that one shoot. A passcode, when set, must be entered before
 * the session reaches anything.
 */
import type { AstroCookies } from 'astro';
import { db } from './db';
import { hashToken, newToken } from './tokens';
import { hashPassword, verifyPassword } from './password';
import { limitRate, clearRate } from './rate-limit';
import { HttpError } from './http';
import { config, isProduction } from './config';

export const CLIENT_COOKIE = 'fillcard_gallery';
const SESSION_DAYS = 30;

export interface SessionClient {
  sessionId: string;
  clientId: string;
  clientName: string;
  shootId: string;
  studioId: string;
  passcodeOk: boolean;
  /** Set when the gallery has closed since the session began (link revoked, expired, archived). */
  closed: ReturnType<typeof galleryClosedReason>;
}

export type LinkState =
  | { kind: 'ok'; shoot: ShootRow }
  | { kind: 'unknown' }
  | { kind: 'closed'; shoot: ShootRow; reason: 'revoked' | 'expired' | 'archived' };

type ShootRow = Record<string, any> & { id: string; studio_id: string; client_id: string };

/** Whether a shoot's gallery is open to its client now, and why not. */
export function galleryClosedReason(shoot: ShootRow, now = new Date()): 'revoked' | 'expired' | 'archived' | 'draft' | null {
  if (shoot.link_revoked_at) return 'revoked';
  if (shoot.stage === 'archived') return 'archived';
  if (shoot.stage === 'draft') return 'draft';
  if (shoot.stage === 'delivered') {
    if (shoot.download_until && new Date(shoot.download_until) < now) return 'expired';
    return null;
  }
  if (new Date(shoot.proof_expires_at) < now) return 'expired';
  return null;
}

export async function findShootByLinkToken(token: string): Promise<LinkState> {
  if (!/^[A-Za-z0-9_-]{20,64}$/.test(token)) return { kind: 'unknown' };
  const shoot = await db()('shoots').where({ link_token_hash: hashToken(token) }).first();
  if (!shoot) return { kind: 'unknown' };
  const closed = galleryClosedReason(shoot);
  if (closed === 'draft') return { kind: 'unknown' };
  if (closed) return { kind: 'closed', shoot, reason: closed };
  return { kind: 'ok', shoot };
}

/** Makes a new viewing link for a shoot, replacing any earlier one (which stops working). */
export async function issueViewingLink(shootId: string, studioId: string): Promise<string> {
  const token = newToken();
  await db()('shoots')
    .where({ id: shootId, studio_id: studioId })
    .update({ link_token_hash: hashToken(token), link_revoked_at: null, updated_at: db().fn.now() });
  // Sessions opened through the old link end with it.
  await db()('client_sessions').where({ shoot_id: shootId }).delete();
  return token;
}

export async function revokeViewingLink(shootId: string, studioId: string) {
  await db()('shoots').where({ id: shootId, studio_id: studioId }).update({ link_revoked_at: db().fn.now() });
  await db()('client_sessions').where({ shoot_id: shootId }).delete();
}

export const viewingLinkUrl = (token: string) => `${config().PUBLIC_ORIGIN}/g/${token}`;

export async function startClientSession(cookies: AstroCookies, shoot: ShootRow) {
  const token = newToken();
  const expires = new Date(Date.now() + SESSION_DAYS * 86400_000);
  await db()('client_sessions').insert({
    id: hashToken(token),
    user_id: shoot.client_id,
    shoot_id: shoot.id,
    studio_id: shoot.studio_id,
    passcode_ok: !shoot.passcode_hash,
    expires_at: expires,
  });
  cookies.set(CLIENT_COOKIE, token, {
    path: '/',
    httpOnly: true,
    sameSite: 'lax',
    secure: isProduction() && config().PUBLIC_ORIGIN.startsWith('https:'),
    expires,
  });
}

export async function clientFromCookies(cookies: AstroCookies): Promise<SessionClient | null> {
  const token = cookies.get(CLIENT_COOKIE)?.value;
  if (!token || token.length > 64) return null;
  const row = await db()('client_sessions as s')
    .join('clients as c', 'c.id', 's.user_id')
    .join('shoots as sh', 'sh.id', 's.shoot_id')
    .where('s.id', hashToken(token))
    .first(
      's.id', 's.user_id', 's.shoot_id', 's.studio_id', 's.passcode_ok', 's.expires_at', 'c.name as client_name',
      'sh.stage', 'sh.link_revoked_at', 'sh.proof_expires_at', 'sh.download_until',
    );
  if (!row || new Date(row.expires_at) < new Date()) return null;
  const closed = galleryClosedReason({ ...row, id: row.shoot_id, client_id: row.user_id });
  return {
    sessionId: row.id,
    clientId: row.user_id,
    clientName: row.client_name,
    shootId: row.shoot_id,
    studioId: row.studio_id,
    passcodeOk: row.passcode_ok,
    closed,
  };
}

const PASSCODE_LIMIT = { attempts: 8, windowS: 15 * 60 };

/** Checks the passcode for the client's session; attempts are limited per shoot and per session. */
export async function enterPasscode(client: SessionClient, passcode: string) {
  await limitRate(`passcode:session:${client.sessionId}`, PASSCODE_LIMIT.attempts, PASSCODE_LIMIT.windowS);
  await limitRate(`passcode:shoot:${client.shootId}`, PASSCODE_LIMIT.attempts * 4, PASSCODE_LIMIT.windowS);
  const shoot = await db()('shoots').where({ id: client.shootId }).first('passcode_hash');
  const ok = shoot?.passcode_hash ? await verifyPassword(shoot.passcode_hash, passcode.trim()) : true;
  if (!ok) throw new HttpError(400, 'That passcode is not right. Check the message from your studio and try again.');
  await db()('client_sessions').where({ id: client.sessionId }).update({ passcode_ok: true });
  await clearRate(`passcode:session:${client.sessionId}`);
}

export const hashPasscode = (passcode: string) => hashPassword(passcode.trim());

export async function endClientSession(cookies: AstroCookies, client: SessionClient | null) {
  if (client) await db()('client_sessions').where({ id: client.sessionId }).delete();
  cookies.delete(CLIENT_COOKIE, { path: '/' });
}
