/**
 * The one place that decides who may do what. Every route asks `requireMember(locals, action)` or
 * `requireClient(locals, shootId)`; every object is then loaded through a studio-scoped query.
 */
import type { APIContext, AstroGlobal } from 'astro';
import { forbidden, unauthorized, notFound, HttpError } from './http';
import { db } from './db';
import type { SessionMember } from './auth';
import type { SessionClient } from './client-access';

export type Role = 'owner' | 'retoucher';

export type Action =
  | 'desk:view'
  | 'shoot:view'
  | 'shoot:create'
  | 'shoot:edit'
  | 'shoot:delete'
  | 'shoot:send-link'
  | 'shoot:hand-off'
  | 'picks:view'
  | 'picks:reopen'
  | 'frame:upload'
  | 'frame:edit'
  | 'original:download'
  | 'final:upload'
  | 'money:view'
  | 'money:refund'
  | 'client:manage'
  | 'team:manage'
  | 'studio:settings'
  | 'downloads:log';

const OWNER: Action[] = [
  'desk:view', 'shoot:view', 'shoot:create', 'shoot:edit', 'shoot:delete', 'shoot:send-link', 'shoot:hand-off',
  'picks:view', 'picks:reopen', 'frame:upload', 'frame:edit', 'original:download', 'final:upload',
  'money:view', 'money:refund', 'client:manage', 'team:manage', 'studio:settings', 'downloads:log',
];
// A retoucher works on picks and finals; never money, clients, team or settings.
const RETOUCHER: Action[] = ['desk:view', 'shoot:view', 'picks:view', 'original:download', 'final:upload'];

const GRANTS: Record<Role, ReadonlySet<Action>> = {
  owner: new Set(OWNER),
  retoucher: new Set(RETOUCHER),
};

export function can(member: Pick<SessionMember, 'role'> | null, action: Action): boolean {
  return !!member && GRANTS[member.role].has(action);
}

type Ctx = Pick<APIContext, 'locals'> | Pick<AstroGlobal, 'locals'>;

export function requireMember(ctx: Ctx, action: Action): SessionMember {
  const member = ctx.locals.member;
  if (!member) throw unauthorized();
  if (!can(member, action)) throw forbidden();
  return member;
}

/** A shoot of the member's own studio, or 404 (another studio's id looks exactly like a missing one). */
export async function shootForMember(member: SessionMember, shootId: string) {
  if (!isUuid(shootId)) throw notFound('No such shoot.');
  const shoot = await db()('shoots').where({ id: shootId, studio_id: member.studioId }).first();
  if (!shoot) throw notFound('No such shoot.');
  return shoot;
}

/** The client's session for exactly this shoot, with the passcode passed when one is set. */
export function requireClient(ctx: Ctx, shootId: string): SessionClient {
  const client = ctx.locals.client;
  if (!client || client.shootId !== shootId) throw unauthorized('Open the gallery from the link the studio sent you.');
  if (client.closed) throw new HttpError(410, 'This gallery has closed. Please contact your studio.');
  if (!client.passcodeOk) throw forbidden('Enter the passcode first.');
  return client;
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;
export const isUuid = (v: unknown): v is string => typeof v === 'string' && UUID.test(v);
