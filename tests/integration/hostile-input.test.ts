/**
 * Hostile input through forms and APIs: markup stays text everywhere it is shown (pages and e-mails),
 * SQL-like strings are just text, over-long and wrongly typed fields get clear 4xx answers, huge bodies
 * are refused early with 413, and nothing changes when a request is refused (OWASP Input Validation
 * Cheat Sheet; ASVS 5.0 chapter 1 encoding and sanitisation).
 */
import { describe, it, expect, beforeAll } from 'vitest';
import { randomUUID } from 'node:crypto';
import { Agent } from '../support/http';
import { makeStudio, memberAgent } from '../support/factories';
import { db } from '../../src/lib/server/db';

const XSS = `<script>alert("x")</script><img src=x onerror=alert(1)>`;
const SQLISH = `Robert'); DROP TABLE shoots;--`;

function shootBody(overrides: Record<string, unknown> = {}) {
  const future = new Date(Date.now() + 20 * 86400_000).toISOString().slice(0, 10);
  return {
    client: { kind: 'new', name: `${XSS} ${SQLISH}`, email: `c-${randomUUID().slice(0, 6)}@example.test` },
    title: `${XSS} sitting`,
    shotOn: '2026-11-20',
    allowance: 3,
    extraPriceMinor: 2500,
    currency: 'EUR',
    taxRateBp: 2000,
    taxMode: 'exclusive',
    proofExpiresOn: future,
    passcode: '',
    ...overrides,
  };
}

describe('hostile input', () => {
  let owner: Agent;
  let studioId: string;
  beforeAll(async () => {
    const s = await makeStudio('Hostile');
    studioId = s.studioId;
    owner = await memberAgent(s.owner.email);
  });

  it('markup in a studio name, a client name and a shoot title is shown as text', async () => {
    const res = await owner.postJson('/api/shoots', shootBody());
    expect(res.status).toBe(201);
    const { id } = await res.json();
    for (const path of ['/desk', `/desk/shoots/${id}`]) {
      const page = await owner.get(path);
      const html = await page.text();
      expect(html).not.toContain('<script>alert');
      expect(html).not.toContain('<img src=x onerror');
      expect(html).toContain('&lt;script&gt;');
    }
    // SQL-like text is stored as it was typed and the table is still there.
    const client = await db()('clients').where({ studio_id: studioId }).first('name');
    expect(client.name).toContain(SQLISH);
    expect(await db()('shoots').where({ id }).first('id')).toBeTruthy();
  });

  it('markup in a sign-up is text on the page and in no way active', async () => {
    const agent = new Agent();
    const res = await agent.postForm('/signup', { studioName: XSS, name: XSS, email: `x-${randomUUID().slice(0, 6)}@example.test`, password: 'a long enough password' });
    expect(res.status).toBe(303);
    const desk = await (await agent.get('/desk')).text();
    expect(desk).not.toContain('<script>alert');
    expect(desk).toContain('&lt;script&gt;');
  });

  it('wrong JSON types, missing fields and over-long fields get 422 with the field named, and nothing is saved', async () => {
    const before = await db()('shoots').where({ studio_id: studioId }).count('* as n');
    const cases = [
      shootBody({ allowance: 'three' }),
      shootBody({ extraPriceMinor: -5 }),
      shootBody({ currency: 'XXX' }),
      shootBody({ title: 'x'.repeat(500) }),
      shootBody({ client: { kind: 'new', name: 'A', email: 'not-an-email' } }),
      shootBody({ taxRateBp: 10_001 }),
      { title: 'only a title' },
      [],
      'a string',
    ];
    for (const body of cases) {
      const res = await owner.postJson('/api/shoots', body);
      expect(res.status, JSON.stringify(body).slice(0, 80)).toBe(422);
      const json = await res.json();
      expect(typeof json.error).toBe('string');
    }
    expect(await db()('shoots').where({ studio_id: studioId }).count('* as n')).toEqual(before);
  });

  it('a body that is not JSON gets 400; a huge body gets 413 before it is read', async () => {
    const bad = await owner.fetch('/api/shoots', { method: 'POST', body: '{"title": ', headers: { 'Content-Type': 'application/json' } });
    expect(bad.status).toBe(400);
    const huge = await owner.fetch('/api/shoots', { method: 'POST', body: JSON.stringify({ title: 'x'.repeat(2_000_000) }), headers: { 'Content-Type': 'application/json' } });
    expect(huge.status).toBe(413);
    const hugeForm = await new Agent().fetch('/signin', { method: 'POST', body: 'email=' + 'x'.repeat(2_000_000), headers: { 'Content-Type': 'application/x-www-form-urlencoded' } });
    expect(hugeForm.status).toBe(413);
  });

  it('invalid Unicode (a lone surrogate) does not break anything', async () => {
    const res = await owner.postJson('/api/shoots', shootBody({ title: 'Half \ud800 a pair' }));
    expect([201, 422]).toContain(res.status);
    const page = await owner.get('/desk');
    expect(page.status).toBe(200);
  });
});
