import { defineMiddleware, sequence } from 'astro:middleware';
import { memberFromCookies } from './lib/server/auth';
import { clientFromCookies } from './lib/server/client-access';
import { isProduction, config } from './lib/server/config';

/** Photos never pass through the app (they go straight to storage), so no request body needs more than 1 MB. */
const MAX_BODY_BYTES = 1024 * 1024;
const bodyLimit = defineMiddleware(async (ctx, next) => {
  const declared = Number(ctx.request.headers.get('content-length') ?? 0);
  if (declared > MAX_BODY_BYTES) {
    return new Response(JSON.stringify({ error: 'The request is too large.' }), { status: 413, headers: { 'Content-Type': 'application/json' } });
  }
  return next();
});

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
  let response = await next();
  // Pages that set their own status keep Astro's "OK" reason phrase ("410 OK"); drop it so the
  // status line reads right.
  if (response.status !== 200 && response.statusText === 'OK') {
    response = new Response(response.body, { status: response.status, headers: response.headers });
  }
  const h = response.headers;
  h.set('X-Content-Type-Options', 'nosniff');
  h.set('Referrer-Policy', 'same-origin');
  h.set('X-Frame-Options', 'DENY');
  h.set('Permissions-Policy', 'camera=(), microphone=(), geolocation=()');
  h.set('Content-Security-Policy', contentSecurityPolicy(h.get('Content-Security-Policy')));
  if (isProduction()) h.set('Strict-Transport-Security', 'max-age=31536000; includeSubDomains');
  if (!h.has('Cache-Control') && (ctx.locals.member || ctx.locals.client)) h.set('Cache-Control', 'private, no-store');
  return response;
});

/**
 * Scripts: only our own files and the inline scripts Astro hashed at build time (no 'unsafe-inline').
 * Styles may be inline (style attributes from islands). Images and uploads may reach the object store.
 */
function contentSecurityPolicy(fromAstro: string | null): string {
  const astroScripts = fromAstro?.match(/script-src ([^;]*)/)?.[1]?.trim() ?? "'self'";
  const store = [config().S3_PUBLIC_ENDPOINT ?? config().S3_ENDPOINT].map((u) => new URL(u).origin).join(' ');
  return [
    "default-src 'self'",
    `script-src ${astroScripts}`,
    "style-src 'self' 'unsafe-inline'",
    `img-src 'self' data: blob: ${store}`,
    `connect-src 'self' ${store}`,
    "font-src 'self'",
    "object-src 'none'",
    "base-uri 'self'",
    // A checkout form may redirect to the payment page, which form-action also governs.
    `form-action 'self' ${config().STRIPE_API_BASE ? new URL(config().STRIPE_API_BASE!).origin : 'https://checkout.stripe.com'}`,
    "frame-ancestors 'none'",
  ].join('; ');
}

const isStaticAsset = (p: string) => p.startsWith('/_astro/') || p.startsWith('/fonts/') || p === '/favicon.svg';

export const onRequest = sequence(securityHeaders, bodyLimit, sessions);
