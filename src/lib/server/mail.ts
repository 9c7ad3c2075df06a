/**
 * E-mail goes through an outbox: the message is a row written with the change it reports, then the
 * worker sends it. If SMTP is down the row waits and the job retries; nothing is lost.
 */
import nodemailer, { type Transporter } from 'nodemailer';
import type { Knex } from 'knex';
import { db } from './db';
import { config } from './config';
import { enqueue, QUEUES } from './jobs';
import { escapeHtml } from '../escape';

export interface MailContent {
  subject: string;
  html: string;
  text: string;
}

export interface OutgoingMail extends MailContent {
  to: string;
  studioId?: string | null;
}

/** Writes the message into the outbox (inside `trx` when given). Call `dispatchMail` after commit. */
export async function queueMail(mail: OutgoingMail, trx: Knex | Knex.Transaction = db()): Promise<string> {
  const [row] = await trx('mail_outbox')
    .insert({ studio_id: mail.studioId ?? null, to_address: mail.to, subject: mail.subject, html: mail.html, text: mail.text })
    .returning('id');
  return row.id;
}

/** Hands outbox rows to the worker. A failure here is harmless: the worker's sweep picks them up. */
export async function dispatchMail(ids: string[]) {
  for (const id of ids) {
    try {
      await enqueue(QUEUES.mailSend, { outboxId: id }, `mail:${id}`);
    } catch (err) {
      console.error('[fillcard] could not enqueue mail, the sweep will retry:', err);
    }
  }
}

let transporter: Transporter | undefined;
function smtp(): Transporter {
  const c = config();
  transporter ??= nodemailer.createTransport({
    host: c.SMTP_HOST,
    port: c.SMTP_PORT,
    secure: c.SMTP_SECURE,
    ignoreTLS: !c.SMTP_SECURE && c.SMTP_HOST === '127.0.0.1',
    auth: c.SMTP_USER ? { user: c.SMTP_USER, pass: c.SMTP_PASSWORD } : undefined,
    connectionTimeout: 10_000,
  });
  return transporter;
}

/**
 * Mail goes out from Fillcard's address, but a reply should reach the studio: its contact address
 * from settings, else its first owner's sign-in address. With the studio's name as the display name.
 */
async function studioReplyTo(studioId: string): Promise<{ name: string; address: string } | undefined> {
  const studio = await db()('studios').where({ id: studioId }).first('name', 'contact_email');
  if (!studio) return undefined;
  const address = studio.contact_email || (await db()('memberships as m').join('users as u', 'u.id', 'm.user_id')
    .where({ 'm.studio_id': studioId, 'm.role': 'owner' }).orderBy('m.created_at').first('u.email'))?.email;
  return address ? { name: studio.name, address } : undefined;
}

/** The worker's half: sends one outbox row once. Throws on SMTP failure so the job retries. */
export async function deliverOutboxRow(id: string) {
  const row = await db()('mail_outbox').where({ id }).first();
  if (!row || row.state === 'sent') return;
  try {
    const replyTo = row.studio_id ? await studioReplyTo(row.studio_id) : undefined;
    await smtp().sendMail({ from: config().MAIL_FROM, replyTo, to: row.to_address, subject: row.subject, html: row.html, text: row.text });
    await db()('mail_outbox').where({ id }).update({ state: 'sent', sent_at: db().fn.now(), attempts: row.attempts + 1, last_error: null });
  } catch (err) {
    await db()('mail_outbox').where({ id }).update({ attempts: row.attempts + 1, last_error: String((err as Error).message).slice(0, 500) });
    throw err;
  }
}

/** Queued rows the queue may have lost (crash between commit and send): hand them over again. */
export async function sweepOutbox() {
  const rows = await db()('mail_outbox').where({ state: 'queued' }).where('created_at', '<', db().raw("now() - interval '30 seconds'")).limit(100).pluck('id');
  await dispatchMail(rows);
}

interface Layout {
  studioName: string;
  brandColour?: string;
  heading: string;
  paragraphs: string[];
  button?: { label: string; url: string };
  footer?: string;
}

/** One HTML + text e-mail in Fillcard's plain style, with the studio's name and colour. All text is escaped. */
export function renderMail(l: Layout): Pick<MailContent, 'html' | 'text'> {
  const colour = /^#[0-9a-f]{6}$/i.test(l.brandColour ?? '') ? l.brandColour! : '#1f2a30';
  const paras = l.paragraphs.map((p) => `<p style="margin:0 0 14px;line-height:1.55">${escapeHtml(p).replace(/\n/g, '<br>')}</p>`).join('');
  const button = l.button
    ? `<p style="margin:22px 0"><a href="${escapeHtml(l.button.url)}" style="background:${colour};color:#ffffff;padding:12px 20px;border-radius:8px;text-decoration:none;font-weight:600;display:inline-block">${escapeHtml(l.button.label)}</a></p><p style="font-size:13px;color:#6b777d;word-break:break-all">${escapeHtml(l.button.url)}</p>`
    : '';
  const html = `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width"><title>${escapeHtml(l.heading)}</title></head>
<body style="margin:0;background:#f7f3ec;font-family:Helvetica,Arial,sans-serif;color:#1f2a30">
<table role="presentation" width="100%" cellpadding="0" cellspacing="0"><tr><td align="center" style="padding:24px 12px">
<table role="presentation" width="100%" style="max-width:560px;background:#ffffff;border-radius:10px;border-top:6px solid ${colour}" cellpadding="0" cellspacing="0"><tr><td style="padding:26px 26px 18px">
<p style="margin:0 0 18px;font-size:14px;font-weight:700;color:${colour}">${escapeHtml(l.studioName)}</p>
<h1 style="margin:0 0 16px;font-family:Georgia,serif;font-size:22px;font-weight:600">${escapeHtml(l.heading)}</h1>
${paras}${button}
<p style="margin:22px 0 0;font-size:12px;color:#6b777d">${escapeHtml(l.footer ?? 'Sent by Fillcard on behalf of the studio.')}</p>
</td></tr></table></td></tr></table></body></html>`;
  const text = [l.studioName, '', l.heading, '', ...l.paragraphs.flatMap((p) => [p, '']), ...(l.button ? [`${l.button.label}: ${l.button.url}`, ''] : []), l.footer ?? 'Sent by Fillcard on behalf of the studio.'].join('\n');
  return { html, text };
}
