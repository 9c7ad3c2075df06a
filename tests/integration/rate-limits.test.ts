/** Guessing is slowed: sign-in and passcode attempts answer 429 with Retry-After once over the limit. */
import { describe, it, expect } from 'vitest';
import { Agent } from '../support/http';
import { makeStudio, makeShoot, PASSWORD } from '../support/factories';

describe('rate limits', () => {
  it('sign-in: a ninth wrong password for one account within 15 minutes is refused with Retry-After', async () => {
    const studio = await makeStudio('Limits');
    const agent = new Agent();
    const statuses: number[] = [];
    for (let i = 0; i < 9; i++) {
      const res = await agent.postForm('/signin', { email: studio.owner.email, password: 'not the password' });
      statuses.push(res.status);
      if (res.status === 429) {
        expect(Number(res.headers.get('retry-after'))).toBeGreaterThan(0);
        expect(await res.text()).toContain('Too many attempts');
      } else await res.arrayBuffer();
    }
    expect(statuses.slice(0, 8).every((s) => s === 400)).toBe(true);
    expect(statuses[8]).toBe(429);
    // Even the right password waits until the window passes: guessing cannot be finished by luck.
    const right = await agent.postForm('/signin', { email: studio.owner.email, password: PASSWORD });
    expect(right.status).toBe(429);
  });

  it('passcode: attempts per session are limited and the gallery stays closed', async () => {
    const studio = await makeStudio('Limits');
    const { shoot, token } = await makeShoot(studio.studioId, { passcode: 'right-one' });
    const agent = new Agent();
    await agent.get(`/g/${token}`);
    const statuses: number[] = [];
    for (let i = 0; i < 9; i++) {
      const res = await agent.postForm(`/gallery/${shoot.id}/passcode`, { passcode: `guess-${i}` });
      statuses.push(res.status);
      await res.arrayBuffer();
    }
    expect(statuses.slice(0, 8).every((s) => s === 400)).toBe(true);
    expect(statuses[8]).toBe(429);
    const gallery = await agent.get(`/gallery/${shoot.id}`);
    expect(gallery.status).toBe(303);
    expect(gallery.headers.get('location')).toContain('/passcode');
  });
});
