/**
 * A studio's clients: the people its shoots are for. Client details are personal data, so the
 * studio keeps only what it needs, and a client can be removed once their shoots are archived.
 */
import { db } from './db';
import { audit } from './audit';
import { conflict, notFound } from './http';
import { isUuid } from './permissions';
import { escapeLike } from './studio';
import type { SessionMember } from './auth';
import type { ClientDto, ClientInput } from '../schemas/clients';

function clientQuery(studioId: string) {
  const k = db();
  return k('clients as c')
    .where('c.studio_id', studioId)
    .select(
      'c.id', 'c.name', 'c.email', 'c.phone', 'c.notes', 'c.archived_at', 'c.created_at',
      k.raw('(SELECT count(*)::int FROM shoots s WHERE s.client_id = c.id AND s.studio_id = c.studio_id) AS shoots'),
      k.raw(`(SELECT count(*)::int FROM shoots s WHERE s.client_id = c.id AND s.studio_id = c.studio_id AND s.stage <> 'archived') AS active_shoots`),
    );
}

function toDto(r: Record<string, any>): ClientDto {
  return {
    id: r.id,
    name: r.name,
    email: r.email,
    phone: r.phone ?? '',
    notes: r.notes ?? '',
    archivedAt: r.archived_at ? new Date(r.archived_at).toISOString() : null,
    createdAt: new Date(r.created_at).toISOString(),
    shoots: r.shoots,
    activeShoots: r.active_shoots,
  };
}

/** The studio's clients by name; search matches name or e-mail as typed, wildcards included. */
export async function listClients(studioId: string, opts: { q?: string; archived?: boolean; limit?: number } = {}): Promise<ClientDto[]> {
  const query = clientQuery(studioId).orderByRaw('lower(c.name), c.created_at').limit(opts.limit ?? 500);
  if (opts.archived) query.whereNotNull('c.archived_at');
  else query.whereNull('c.archived_at');
  const q = opts.q?.trim();
  if (q) {
    const pattern = `%${escapeLike(q)}%`;
    query.where((w) => w.whereRaw(`c.name ILIKE ? ESCAPE '\\'`, [pattern]).orWhereRaw(`c.email ILIKE ? ESCAPE '\\'`, [pattern]));
  }
  return (await query).map(toDto);
}

/** A client of the member's studio, or 404: another studio's id looks exactly like a missing one. */
export async function getClient(studioId: string, clientId: string): Promise<ClientDto> {
  if (!isUuid(clientId)) throw notFound('No such client.');
  const row = await clientQuery(studioId).where('c.id', clientId).first();
  if (!row) throw notFound('No such client.');
  return toDto(row);
}

export async function clientShoots(studioId: string, clientId: string) {
  return db()('shoots')
    .where({ studio_id: studioId, client_id: clientId })
    .orderBy([{ column: 'shot_on', order: 'desc' }, { column: 'created_at', order: 'desc' }])
    .select('id', 'title', 'stage', db().raw(`to_char(shot_on, 'YYYY-MM-DD') AS shot_on`));
}

export async function createClient(member: SessionMember, input: ClientInput): Promise<ClientDto> {
  const id = await db().transaction(async (trx) => {
    const [row] = await trx('clients').insert({
      studio_id: member.studioId,
      name: input.name,
      email: input.email,
      phone: input.phone || null,
      notes: input.notes || null,
    }).returning('id');
    await audit({ studioId: member.studioId, actorKind: 'member', actorId: member.userId, action: 'client.created', subjectType: 'client', subjectId: row.id }, trx);
    return row.id as string;
  });
  return getClient(member.studioId, id);
}

export async function updateClient(member: SessionMember, clientId: string, input: ClientInput): Promise<ClientDto> {
  if (!isUuid(clientId)) throw notFound('No such client.');
  await db().transaction(async (trx) => {
    const n = await trx('clients').where({ id: clientId, studio_id: member.studioId }).update({
      name: input.name,
      email: input.email,
      phone: input.phone || null,
      notes: input.notes || null,
    });
    if (!n) throw notFound('No such client.');
    // Which fields, never their values: the audit log should not become a second copy of personal data.
    await audit({ studioId: member.studioId, actorKind: 'member', actorId: member.userId, action: 'client.updated', subjectType: 'client', subjectId: clientId, details: { fields: Object.keys(input) } }, trx);
  });
  return getClient(member.studioId, clientId);
}

/**
 * Removes a client. Refused while any of their shoots is not archived. With no shoots at all the
 * row is deleted; with archived shoots it is archived (the shoots still point to it) and its
 * phone and notes are cleared.
 */
export async function deleteClient(member: SessionMember, clientId: string): Promise<{ outcome: 'deleted' | 'archived' }> {
  if (!isUuid(clientId)) throw notFound('No such client.');
  return db().transaction(async (trx) => {
    const client = await trx('clients').where({ id: clientId, studio_id: member.studioId }).forUpdate().first('id');
    if (!client) throw notFound('No such client.');
    // Lock the client's shoots so none changes stage between this check and the delete.
    const shoots = await trx('shoots').where({ client_id: clientId, studio_id: member.studioId }).forUpdate().select('stage');
    const open = shoots.filter((s) => s.stage !== 'archived').length;
    if (open > 0) {
      throw conflict(`This client has ${open} shoot${open === 1 ? '' : 's'} that ${open === 1 ? 'is' : 'are'} not archived: archive their shoots first.`);
    }
    if (shoots.length === 0) {
      await trx('clients').where({ id: clientId }).delete();
      await audit({ studioId: member.studioId, actorKind: 'member', actorId: member.userId, action: 'client.deleted', subjectType: 'client', subjectId: clientId }, trx);
      return { outcome: 'deleted' as const };
    }
    await trx('clients').where({ id: clientId }).update({ archived_at: trx.fn.now(), phone: null, notes: null });
    await audit({ studioId: member.studioId, actorKind: 'member', actorId: member.userId, action: 'client.archived', subjectType: 'client', subjectId: clientId }, trx);
    return { outcome: 'archived' as const };
  });
}
