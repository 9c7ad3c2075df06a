import type { Knex } from 'knex';
import { db } from './db';

export interface AuditEntry {
  studioId: string;
  actorKind: 'member' | 'client' | 'system';
  actorId?: string | null;
  action: string;
  subjectType?: string;
  subjectId?: string;
  details?: Record<string, unknown>;
}

/** Records who did what; pass the transaction so the record commits with the change. */
export async function audit(entry: AuditEntry, trx: Knex | Knex.Transaction = db()) {
  await trx('audit_log').insert({
    studio_id: entry.studioId,
    actor_kind: entry.actorKind,
    actor_id: entry.actorId ?? null,
    action: entry.action,
    subject_type: entry.subjectType ?? null,
    subject_id: entry.subjectId ?? null,
    details: JSON.stringify(entry.details ?? {}),
  });
}
