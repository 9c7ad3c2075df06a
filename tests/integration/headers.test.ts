/** Security headers on pages and APIs (OWASP Secure Headers; CSP per the W3C CSP Level 3 script-src rules). */
import { describe, it, expect } from 'vitest';
import { APP } from '../support/env';

function directives(csp: string) {
  return Object.fromEntries(csp.split(';').map((d) => d.trim()).filter(Boolean).map((d) => {
    const [name, ...values] = d.split(/\s+/);
    return [name, values];
  }));
}

describe('security headers', () => {
  for (const path of ['/', '/signin', '/api/health', '/no-such-page']) {
    it(`${path} carries the policy`, async () => {
      const res = await fetch(APP + path);
      const csp = res.headers.get('content-security-policy') ?? '';
      const d = directives(csp);
      expect(d['script-src']).toContain("'self'");
      expect(d['script-src']).not.toContain("'unsafe-inline'");
      expect(d['script-src']).not.toContain("'unsafe-eval'");
      expect(d['script-src'].every((s: string) => s === "'self'" || s.startsWith("'sha256-"))).toBe(true);
      expect(d['frame-ancestors']).toEqual(["'none'"]);
      expect(d['object-src']).toEqual(["'none'"]);
      expect(res.headers.get('x-content-type-options')).toBe('nosniff');
      expect(res.headers.get('referrer-policy')).toBe('same-origin');
      expect(res.headers.get('x-frame-options')).toBe('DENY');
    });
  }

  it('a page that sets its own status has a status line that says so (404 Not Found, not 404 OK)', async () => {
    const res = await fetch(`${APP}/g/not-a-real-link-token-at-all`);
    expect(res.status).toBe(404);
    expect(res.statusText).toBe('Not Found');
    await res.arrayBuffer();
  });

  it('every inline script on a page is one the policy hashes', async () => {
    const { createHash } = await import('node:crypto');
    const res = await fetch(APP + '/');
    const html = await res.text();
    const allowed = directives(res.headers.get('content-security-policy')!)['script-src'];
    const inline = [...html.matchAll(/<script(?![^>]*\bsrc=)[^>]*>([\s\S]*?)<\/script>/g)].map((m) => m[1]);
    for (const body of inline) {
      const hash = `'sha256-${createHash('sha256').update(body).digest('base64')}'`;
      expect(allowed).toContain(hash);
    }
  });
});
