/** Team rules: owners manage members; a studio always keeps an owner; invites are limited per hour. */
import { describe, it, expect } from 'vitest';
import { randomUUID } from 'node:crypto';
import { makeStudio, memberAgent } from '../support/factories';
import { db } from '../../src/lib/server/db';

const form = (intent: string, extra: Record<string, string>) => ({ intent, ...extra });

describe('team', () => {
  it('the last owner cannot be removed or made a retoucher; with a second owner they can', async () => {
    const studio = await makeStudio('Team');
    const owner = await memberAgent(studio.owner.email);
    const demote = await owner.postForm('/desk/team', form('role', { userId: studio.owner.id, role: 'retoucher' }));
    expect(demote.status).toBe(409);
    expect(await demote.text()).toContain('at least one owner');
    const remove = await owner.postForm('/desk/team', form('remove', { userId: studio.owner.id }));
    expect(remove.status).toBe(409);
    expect((await db()('memberships').where({ studio_id: studio.studioId, user_id: studio.owner.id }).first()).role).toBe('owner');

    const promote = await owner.postForm('/desk/team', form('role', { userId: studio.retoucher.id, role: 'owner' }));
    expect(promote.status).toBe(200);
    const stepDown = await owner.postForm('/desk/team', form('role', { userId: studio.owner.id, role: 'retoucher' }));
    expect(stepDown.status).toBe(200);
    expect((await db()('memberships').where({ studio_id: studio.studioId, user_id: studio.owner.id }).first()).role).toBe('retoucher');
  });

  it('a removed member loses access at once, even with a session already open', async () => {
    const studio = await makeStudio('Team');
    const owner = await memberAgent(studio.owner.email);
    const retoucher = await memberAgent(studio.retoucher.email);
    expect((await retoucher.get('/desk')).status).toBe(200);
    const res = await owner.postForm('/desk/team', form('remove', { userId: studio.retoucher.id }));
    expect(res.status).toBe(200);
    const after = await retoucher.get('/desk');
    expect(after.status).toBe(302);
    expect(after.headers.get('location')).toContain('/signin');
  });

  it('an owner of another studio cannot change this studio’s members', async () => {
    const a = await makeStudio('Team');
    const b = await makeStudio('Team');
    const ownerB = await memberAgent(b.owner.email);
    const res = await ownerB.postForm('/desk/team', form('remove', { userId: a.retoucher.id }));
    expect(res.status).toBe(404);
    expect(await db()('memberships').where({ studio_id: a.studioId, user_id: a.retoucher.id }).first()).toBeTruthy();
  });

  it('invitations are limited to 20 an hour per studio (429 with Retry-After)', async () => {
    const studio = await makeStudio('Team');
    const owner = await memberAgent(studio.owner.email);
    let last: Response | undefined;
    for (let i = 0; i < 21; i++) {
      last = await owner.postForm('/desk/team', form('invite', { email: `invitee-${i}-${randomUUID().slice(0, 4)}@example.test`, role: 'retoucher' }));
      if (i < 20) expect(last.status).toBe(200);
    }
    expect(last!.status).toBe(429);
    expect(Number(last!.headers.get('retry-after'))).toBeGreaterThan(0);
  });
});
