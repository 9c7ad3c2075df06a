import type PgBoss from 'pg-boss';
import { deliverOutboxRow } from '../lib/server/mail';

/** Sends one outbox e-mail. Idempotent: a row already sent is skipped. Retries: see QUEUES.mailSend. */
export async function mailSend(jobs: PgBoss.Job<{ outboxId: string }>[]) {
  for (const job of jobs) await deliverOutboxRow(job.data.outboxId);
}
