/**
 * Dependencies stop and come back during work; nothing is lost: the e-mail outbox waits for SMTP,
 * and the app answers cleanly while PostgreSQL is away and recovers without a restart.
 */
import { describe, it, expect } from 'vitest';
import { setTimeout as sleep } from 'node:timers/promises';
import { randomUUID } from 'node:crypto';
import { mailCatcher, database } from '../support/stack';
import { waitForMail } from '../support/mail';
import { makeStudio, memberAgent } from '../support/factories';
import { db } from '../../src/lib/server/db';
import { APP } from '../support/env';

describe('faults', () => {
  it('SMTP down: the outbox keeps the e-mail and sends it when SMTP returns', async () => {
    const studio = await makeStudio('Faults');
    const owner = await memberAgent(studio.owner.email);
    await mailCatcher.stop();
    try {
      const invitee = `late-${randomUUID().slice(0, 6)}@example.test`;
      const res = await owner.postForm('/desk/team', { intent: 'invite', email: invitee, role: 'retoucher' });
      expect(res.status).toBe(200);
      // The worker tries, fails, and the row waits with the reason.
      let row;
      for (let i = 0; i < 60; i++) {
        row = await db()('mail_outbox').where({ to_address: invitee }).first();
        if (row?.attempts >= 1) break;
        await sleep(500);
      }
      expect(row.state).toBe('queued');
      expect(row.attempts).toBeGreaterThanOrEqual(1);
      expect(row.last_error).toBeTruthy();

      await mailCatcher.start();
      const mail = await waitForMail(invitee, /invited/, 120_000);
      expect(mail.text).toContain('/invite/');
      const sent = await db()('mail_outbox').where({ id: row.id }).first();
      expect(sent.state).toBe('sent');
      expect(await db()('mail_outbox').where({ to_address: invitee }).count('* as n')).toEqual([{ n: 1 }]);
    } finally {
      if (!(await fetch(process.env.MAILDEV_URL + '/api/healthz').then((r) => r.ok).catch(() => false))) await mailCatcher.start();
    }
  }, 180_000);

  it('PostgreSQL away for a few seconds: requests fail cleanly, then recover without a restart', async () => {
    const studio = await makeStudio('Faults');
    const owner = await memberAgent(studio.owner.email);
    expect((await owner.get('/desk')).status).toBe(200);
    database.stop();
    const during: number[] = [];
    try {
      for (let i = 0; i < 5; i++) {
        const health = await fetch(`${APP}/api/health`);
        during.push(health.status);
        const body = await health.json();
        expect(body.ok).toBe(false);
        const page = await owner.get('/desk');
        during.push(page.status);
        expect(await page.text()).not.toMatch(/at .*\.js:\d+/); // no stack traces shown
        await sleep(400);
      }
    } finally {
      database.start();
    }
    expect(during.every((s) => s === 503 || s === 500)).toBe(true);
    let recovered = false;
    for (let i = 0; i < 40 && !recovered; i++) {
      recovered = (await fetch(`${APP}/api/health`)).status === 200 && (await owner.get('/desk')).status === 200;
      if (!recovered) await sleep(500);
    }
    expect(recovered).toBe(true);
  }, 120_000);
});

describe('object store faults', () => {
  it('the store away during an upload: the send fails, a retry after it returns succeeds, and the frame is registered once', async () => {
    const { objectStore } = await import('../support/stack');
    const studio = await makeStudio('Faults');
    const owner = await memberAgent(studio.owner.email);
    const { makeShoot } = await import('../support/factories');
    const { shoot } = await makeShoot(studio.studioId, { stage: 'draft' });
    const sharp = (await import('sharp')).default;
    const bytes = await sharp({ create: { width: 800, height: 600, channels: 3, background: '#705040' } }).jpeg().toBuffer();
    const signRes = await owner.postJson(`/api/shoots/${shoot.id}/uploads/sign`, { method: 'PUT', key: '', fileName: 'outage.jpg', size: bytes.length });
    const signed = await signRes.json();
    await objectStore.stop();
    try {
      await expect(fetch(signed.url, { method: 'PUT', headers: signed.headers, body: new Uint8Array(bytes) })).rejects.toThrow();
      // Registering now is refused clearly, and nothing is created.
      const early = await owner.postJson(`/api/shoots/${shoot.id}/frames`, { key: signed.key, name: 'outage.jpg', size: bytes.length });
      expect(early.status).toBeGreaterThanOrEqual(422);
      expect(early.status).not.toBe(200);
      expect(await db()('frames').where({ shoot_id: shoot.id }).count('* as n')).toEqual([{ n: 0 }]);
    } finally {
      await objectStore.start();
    }
    // The uploader retries the same signed request; then registers (twice, as a retried request would).
    const put = await fetch(signed.url, { method: 'PUT', headers: signed.headers, body: new Uint8Array(bytes) });
    expect(put.status).toBe(200);
    const first = await owner.postJson(`/api/shoots/${shoot.id}/frames`, { key: signed.key, name: 'outage.jpg', size: bytes.length });
    const second = await owner.postJson(`/api/shoots/${shoot.id}/frames`, { key: signed.key, name: 'outage.jpg', size: bytes.length });
    expect(first.status).toBe(201);
    expect(second.status).toBe(200);
    expect((await first.json()).id).toBe((await second.json()).id);
    expect(await db()('frames').where({ shoot_id: shoot.id }).count('* as n')).toEqual([{ n: 1 }]);
  }, 120_000);
});
