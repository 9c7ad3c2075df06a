import { Lucia, TimeSpan } from 'lucia';
import { NodePostgresAdapter } from '@lucia-auth/adapter-postgresql';
import type { AstroCookies } from 'astro';
import { pool, db } from './db';
import { config, isProduction } from './config';
import { hashPassword, verifyPassword, passwordProblem } from './password';
import { limitRate, clearRate } from './rate-limit';
import { badRequest, conflict, HttpError } from './http';
import type { Role } from './permissions';

function secureCookies(): boolean {
  const setting = config().SESSION_COOKIE_SECURE;
  if (setting === 'auto') return isProduction() && config().PUBLIC_ORIGIN.startsWith('https:');
  return setting === 'true';
}

let luciaInstance: ReturnType<typeof makeLucia> | undefined;

function makeLucia() {
  return new Lucia(new NodePostgresAdapter(pool(), { user: 'users', session: 'auth_sessions' }), {
    sessionExpiresIn: new TimeSpan(14, 'd'),
    sessionCookie: {
      name: 'fillcard_session',
      attributes: { secure: secureCookies(), sameSite: 'lax' },
    },
    getSessionAttributes: (a) => ({ studioId: a.studio_id }),
    getUserAttributes: (a) => ({ email: a.email, name: a.name }),
  });
}

export function lucia() {
  luciaInstance ??= makeLucia();
  return luciaInstance;
}

declare module 'lucia' {
  interface Register {
    Lucia: ReturnType<typeof makeLucia>;
    DatabaseSessionAttributes: { studio_id: string };
    DatabaseUserAttributes: { email: string; name: string };
  }
}

export interface SessionMember {
  userId: string;
  email: string;
  name: string;
  studioId: string;
  studioName: string;
  role: Role;
  sessionId: string;
}

/** Reads the member's session cookie; refreshes or clears it as Lucia advises. */
export async function memberFromCookies(cookies: AstroCookies): Promise<SessionMember | null> {
  const l = lucia();
  const id = cookies.get(l.sessionCookieName)?.value;
  if (!id) return null;
  const { session, user } = await l.validateSession(id);
  if (session?.fresh) {
    const c = l.createSessionCookie(session.id);
    cookies.set(c.name, c.value, c.attributes);
  }
  if (!session || !user) {
    const c = l.createBlankSessionCookie();
    cookies.set(c.name, c.value, c.attributes);
    return null;
  }
  const membership = await db()('memberships')
    .join('studios', 'studios.id', 'memberships.studio_id')
    .where({ 'memberships.user_id': user.id, 'memberships.studio_id': session.studioId })
    .first('memberships.role', 'studios.name as studioName');
  if (!membership) {
    // Removed from the studio since signing in: the session no longer reaches anything.
    await l.invalidateSession(session.id);
    return null;
  }
  return {
    userId: user.id,
    email: user.email,
    name: user.name,
    studioId: session.studioId,
    studioName: membership.studioName,
    role: membership.role,
    sessionId: session.id,
  };
}

export async function startMemberSession(cookies: AstroCookies, userId: string, studioId: string) {
  const l = lucia();
  const session = await l.createSession(userId, { studio_id: studioId });
  const c = l.createSessionCookie(session.id);
  cookies.set(c.name, c.value, c.attributes);
}

export async function endMemberSession(cookies: AstroCookies, sessionId: string) {
  const l = lucia();
  await l.invalidateSession(sessionId);
  const c = l.createBlankSessionCookie();
  cookies.set(c.name, c.value, c.attributes);
}

export const normaliseEmail = (e: string) => e.trim().toLowerCase();

/** Sign-up makes a studio and its owner in one transaction. */
export async function signUp(input: { studioName: string; name: string; email: string; password: string }) {
  const problem = passwordProblem(input.password);
  if (problem) throw badRequest(problem);
  const email = normaliseEmail(input.email);
  const passwordHash = await hashPassword(input.password);
  return db().transaction(async (trx) => {
    const taken = await trx('users').where({ email }).first('id');
    if (taken) throw conflict('An account with this e-mail already exists. Sign in instead.');
    const [studio] = await trx('studios').insert({ name: input.studioName.trim(), contact_email: email }).returning('id');
    const [user] = await trx('users').insert({ email, name: input.name.trim(), password_hash: passwordHash }).returning('id');
    await trx('memberships').insert({ studio_id: studio.id, user_id: user.id, role: 'owner' });
    await trx('audit_log').insert({ studio_id: studio.id, actor_kind: 'member', actor_id: user.id, action: 'studio.created' });
    return { userId: user.id as string, studioId: studio.id as string };
  });
}

// Per account the limit is strict; per address it is loose, since a studio's whole office or a
// mobile carrier can share one address. Both are settings (SIGN_IN_LIMIT_PER_ADDRESS).
const SIGN_IN_LIMIT = { perAccount: 8, windowS: 15 * 60 };

/** Checks e-mail and password, rate-limited per account and per address. Same message for every miss. */
export async function signIn(input: { email: string; password: string; address: string }) {
  const email = normaliseEmail(input.email);
  await limitRate(`signin:addr:${input.address}`, config().SIGN_IN_LIMIT_PER_ADDRESS, SIGN_IN_LIMIT.windowS);
  await limitRate(`signin:acct:${email}`, SIGN_IN_LIMIT.perAccount, SIGN_IN_LIMIT.windowS);
  const user = await db()('users').where({ email }).first('id', 'password_hash');
  const ok = user?.password_hash ? await verifyPassword(user.password_hash, input.password) : false;
  if (!user || !ok) throw new HttpError(400, 'That e-mail and password do not match an account.');
  const membership = await db()('memberships').where({ user_id: user.id }).orderBy('created_at').first('studio_id');
  if (!membership) throw new HttpError(403, 'This account no longer belongs to a studio.');
  await clearRate(`signin:acct:${email}`);
  return { userId: user.id as string, studioId: membership.studio_id as string };
}

export async function changePassword(userId: string, current: string, next: string) {
  const problem = passwordProblem(next);
  if (problem) throw badRequest(problem);
  const user = await db()('users').where({ id: userId }).first('password_hash');
  if (!user?.password_hash || !(await verifyPassword(user.password_hash, current))) {
    throw badRequest('Your current password is not right.');
  }
  await db()('users').where({ id: userId }).update({ password_hash: await hashPassword(next) });
  // Other devices are signed out; the caller starts a fresh session for this one.
  await lucia().invalidateUserSessions(userId);
}
