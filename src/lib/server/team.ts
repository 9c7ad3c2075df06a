import { db } from './db';
import { newToken, hashToken } from './tokens';
import { hashPassword, passwordProblem } from './password';
import { queueMail, dispatchMail, renderMail } from './mail';
import { limitRate } from './rate-limit';
import { audit } from './audit';
import { config } from './config';
import { badRequest, conflict, HttpError, notFound } from './http';
import type { SessionMember } from './auth';
import type { Role } from './permissions';

const INVITE_DAYS = 7;

export async function listMembers(studioId: string) {
  return db()('memberships as m')
    .join('users as u', 'u.id', 'm.user_id')
    .where('m.studio_id', studioId)
    .orderBy([{ column: 'm.role' }, { column: 'u.name' }])
    .select('u.id', 'u.name', 'u.email', 'm.role', 'm.created_at');
}

export async function listOpenInvites(studioId: string) {
  return db()('invites').where({ studio_id: studioId }).whereNull('accepted_at').where('expires_at', '>', db().fn.now())
    .orderBy('created_at', 'desc').select('id', 'email', 'role', 'expires_at');
}

/** Invites someone by e-mail with a one-time link to set their password. */
export async function inviteMember(by: SessionMember, email: string, role: Role) {
  await limitRate(`invite:studio:${by.studioId}`, 20, 3600);
  const already = await db()('memberships as m').join('users as u', 'u.id', 'm.user_id')
    .where({ 'm.studio_id': by.studioId, 'u.email': email }).first('u.id');
  if (already) throw conflict('That person is already in your studio.');
  const token = newToken();
  const studio = await db()('studios').where({ id: by.studioId }).first('name', 'brand_colour');
  const url = `${config().PUBLIC_ORIGIN}/invite/${token}`;
  const outboxId = await db().transaction(async (trx) => {
    const [invite] = await trx('invites').insert({
      studio_id: by.studioId, email, role, token_hash: hashToken(token), invited_by: by.userId,
      expires_at: new Date(Date.now() + INVITE_DAYS * 86400_000),
    }).returning('id');
    await audit({ studioId: by.studioId, actorKind: 'member', actorId: by.userId, action: 'team.invited', subjectType: 'invite', subjectId: invite.id, details: { email, role } }, trx);
    const body = renderMail({
      studioName: studio.name,
      brandColour: studio.brand_colour,
      heading: `Join ${studio.name} on Fillcard`,
      paragraphs: [
        `${by.name} has invited you to work with ${studio.name} as ${role === 'owner' ? 'an owner' : 'a retoucher'}.`,
        `Open the link below to choose your password. It works once and for ${INVITE_DAYS} days.`,
      ],
      button: { label: 'Accept the invitation', url },
    });
    return queueMail({ to: email, studioId: by.studioId, subject: `You're invited to ${studio.name}`, ...body }, trx);
  });
  await dispatchMail([outboxId]);
}

export async function findInvite(token: string) {
  if (!/^[A-Za-z0-9_-]{20,64}$/.test(token)) return null;
  const invite = await db()('invites as i').join('studios as s', 's.id', 'i.studio_id')
    .where('i.token_hash', hashToken(token)).first('i.*', 's.name as studio_name');
  if (!invite || invite.accepted_at || new Date(invite.expires_at) < new Date()) return null;
  return invite;
}

/** Accepts an invite: creates the account and membership; the link then stops working. */
export async function acceptInvite(token: string, name: string, password: string) {
  const problem = passwordProblem(password);
  if (problem) throw badRequest(problem);
  const invite = await findInvite(token);
  if (!invite) throw new HttpError(410, 'This invitation has expired or was already used. Ask the studio for a new one.');
  const passwordHash = await hashPassword(password);
  return db().transaction(async (trx) => {
    const claimed = await trx('invites').where({ id: invite.id }).whereNull('accepted_at').update({ accepted_at: trx.fn.now() });
    if (!claimed) throw new HttpError(410, 'This invitation was already used.');
    const existing = await trx('users').where({ email: invite.email }).first('id');
    if (existing) throw conflict('An account with this e-mail already exists. Sign in with it, and ask the studio owner to add it.');
    const [user] = await trx('users').insert({ email: invite.email, name, password_hash: passwordHash }).returning('id');
    await trx('memberships').insert({ studio_id: invite.studio_id, user_id: user.id, role: invite.role });
    await audit({ studioId: invite.studio_id, actorKind: 'member', actorId: user.id, action: 'team.joined', subjectType: 'invite', subjectId: invite.id }, trx);
    return { userId: user.id as string, studioId: invite.studio_id as string };
  });
}

/** Changes a member's role; the studio always keeps at least one owner. */
export async function changeRole(by: SessionMember, userId: string, role: Role) {
  await db().transaction(async (trx) => {
    const target = await trx('memberships').where({ studio_id: by.studioId, user_id: userId }).forUpdate().first();
    if (!target) throw notFound('No such member.');
    if (target.role === 'owner' && role !== 'owner') await assertAnotherOwner(trx, by.studioId, userId);
    await trx('memberships').where({ studio_id: by.studioId, user_id: userId }).update({ role });
    await audit({ studioId: by.studioId, actorKind: 'member', actorId: by.userId, action: 'team.role_changed', subjectType: 'user', subjectId: userId, details: { role } }, trx);
  });
}

export async function removeMember(by: SessionMember, userId: string) {
  await db().transaction(async (trx) => {
    const target = await trx('memberships').where({ studio_id: by.studioId, user_id: userId }).forUpdate().first();
    if (!target) throw notFound('No such member.');
    if (target.role === 'owner') await assertAnotherOwner(trx, by.studioId, userId);
    await trx('memberships').where({ studio_id: by.studioId, user_id: userId }).delete();
    await trx('auth_sessions').where({ user_id: userId, studio_id: by.studioId }).delete();
    await audit({ studioId: by.studioId, actorKind: 'member', actorId: by.userId, action: 'team.removed', subjectType: 'user', subjectId: userId }, trx);
  });
}

async function assertAnotherOwner(trx: any, studioId: string, leavingUserId: string) {
  const others = await trx('memberships').where({ studio_id: studioId, role: 'owner' }).whereNot({ user_id: leavingUserId }).forUpdate().select('user_id');
  if (others.length === 0) throw conflict('A studio needs at least one owner. Make someone else an owner first.');
}
