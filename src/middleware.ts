import { defineMiddleware, sequence } from 'astro:middleware';
import { memberFromCookies } from './lib/server/auth';
import { clientFromCookies } from './lib/server/client-access';
import { isProduction } from './lib/server/config';

/** Puts the signed-in member and/or the gallery client on `locals` for every request. */
const sessions = defineMiddleware(async (ctx, next) => {
  ctx.locals.member = null;
  ctx.locals.client = null;
  if (!isStaticAsset(ctx.url.pathname)) {
    ctx.locals.member = await memberFromCookies(ctx.cookies);
    ctx.locals.client = await clientFromCookies(ctx.cookies);
  }
  return next();
});

/** Headers that keep pages from being framed, sniffed or leaking links. */
const securityHeaders = defineMiddleware(async (ctx, next) => {
  const response = await next();
  const h = response.headers;
  h.set('X-Content-Type-Options', 'nosniff');
  h.set('Referrer-Policy', 'same-origin');
  h.set('X-Frame-Options', 'DENY');
  h.set('Permissions-Policy', 'camera=(), microphone=(), geolocation=()');
  if (!h.has('Content-Security-Policy')) {
    h.set('Content-Security-Policy', "frame-ancestors 'none'; object-src 'none'; base-uri 'self'");
  }
  if (isProduction()) h.set('Strict-Transport-Security', 'max-age=31536000; includeSubDomains');
  if (!h.has('Cache-Control') && (ctx.locals.member || ctx.locals.client)) h.set('Cache-Control', 'private, no-store');
  return response;
});

const isStaticAsset = (p: string) => p.startsWith('/_astro/') || p.startsWith('/fonts/') || p === '/favicon.svg';

export const onRequest = sequence(securityHeaders, sessions);
