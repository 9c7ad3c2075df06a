import { MAILDEV } from './env';

export interface CaughtMail {
  id: string;
  subject: string;
  html: string;
  text: string;
  to: { address: string; name: string }[];
  from: { address: string }[];
  date: string;
}

/** Waits for an e-mail to `to` whose subject matches, as parsed by MailDev from the real SMTP message. */
export async function waitForMail(to: string, subject: RegExp, timeoutMs = 30_000): Promise<CaughtMail> {
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    const list = (await (await fetch(`${MAILDEV}/api/email`)).json()) as CaughtMail[];
    const hit = list.reverse().find((m) => m.to.some((t) => t.address.toLowerCase() === to.toLowerCase()) && subject.test(m.subject));
    if (hit) return hit;
    await new Promise((r) => setTimeout(r, 300));
  }
  throw new Error(`no e-mail to ${to} matching ${subject} within ${timeoutMs} ms`);
}

export async function mailsTo(to: string): Promise<CaughtMail[]> {
  const list = (await (await fetch(`${MAILDEV}/api/email`)).json()) as CaughtMail[];
  return list.filter((m) => m.to.some((t) => t.address.toLowerCase() === to.toLowerCase()));
}

export function firstLink(mail: CaughtMail, pattern: RegExp): string {
  const m = mail.text.match(pattern) ?? mail.html.match(pattern);
  if (!m) throw new Error(`no link matching ${pattern} in "${mail.subject}"`);
  return m[0];
}

/** The message as it went over SMTP (headers and body), for headers the catcher does not parse, such as Reply-To. */
export async function rawMail(mail: CaughtMail): Promise<string> {
  return (await fetch(`${MAILDEV}/api/email/${mail.id}/source`)).text();
}
