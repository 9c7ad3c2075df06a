import { APP } from './env';

/** A tiny browser-like client: keeps cookies, sends the Origin header, never follows redirects. */
export class Agent {
  cookies = new Map<string, string>();

  async fetch(path: string, init: RequestInit & { json?: unknown; form?: Record<string, string> } = {}) {
    const headers = new Headers(init.headers);
    headers.set('Origin', APP);
    if (this.cookies.size) headers.set('Cookie', [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; '));
    let body = init.body;
    if (init.json !== undefined) {
      headers.set('Content-Type', 'application/json');
      body = JSON.stringify(init.json);
    } else if (init.form) {
      headers.set('Content-Type', 'application/x-www-form-urlencoded');
      body = new URLSearchParams(init.form).toString();
    }
    const res = await fetch(APP + path, { ...init, headers, body, redirect: 'manual' });
    for (const c of res.headers.getSetCookie()) {
      const [pair] = c.split(';');
      const i = pair.indexOf('=');
      const name = pair.slice(0, i).trim();
      const value = pair.slice(i + 1).trim();
      if (value === '' || /max-age=0/i.test(c) || /expires=Thu, 01 Jan 1970/i.test(c)) this.cookies.delete(name);
      else this.cookies.set(name, value);
    }
    return res;
  }

  /** A copy with the same cookies, so a request's cookie changes do not leak into the next. */
  clone(): Agent {
    const a = new Agent();
    a.cookies = new Map(this.cookies);
    return a;
  }

  get(path: string) {
    return this.fetch(path);
  }

  postForm(path: string, form: Record<string, string>) {
    return this.fetch(path, { method: 'POST', form });
  }

  postJson(path: string, json: unknown, method = 'POST') {
    return this.fetch(path, { method, json });
  }
}
