import { createHash, randomBytes, timingSafeEqual } from 'node:crypto';

/** A random token of 160 bits, URL-safe. Links and invites carry it; the database keeps only its hash. */
export function newToken(): string {
  return randomBytes(20).toString('base64url');
}

export function hashToken(token: string): string {
  return createHash('sha256').update(token).digest('hex');
}

export function sameHash(a: string, b: string): boolean {
  const x = Buffer.from(a);
  const y = Buffer.from(b);
  return x.length === y.length && timingSafeEqual(x, y);
}
