import { ZodError } from 'zod';

/** An error a user can cause; its message is safe to show. */
export class HttpError extends Error {
  constructor(
    public status: number,
    message: string,
    public headers: Record<string, string> = {},
  ) {
    super(message);
  }
}

export const badRequest = (m: string) => new HttpError(400, m);
export const unauthorized = (m = 'Please sign in first.') => new HttpError(401, m);
export const forbidden = (m = 'Your role does not allow this.') => new HttpError(403, m);
export const notFound = (m = 'Not found.') => new HttpError(404, m);
export const conflict = (m: string) => new HttpError(409, m);
export const tooMany = (retryAfterS: number, m = 'Too many attempts. Please wait and try again.') =>
  new HttpError(429, m, { 'Retry-After': String(retryAfterS) });

export function json(data: unknown, status = 200, headers: Record<string, string> = {}) {
  return new Response(JSON.stringify(data), {
    status,
    headers: { 'Content-Type': 'application/json; charset=utf-8', 'Cache-Control': 'no-store', ...headers },
  });
}

/** Turns a thrown error into a response: our own errors keep their message, anything else is a calm 500. */
export function errorResponse(err: unknown, context: string): Response {
  if (err instanceof HttpError) return json({ error: err.message }, err.status, err.headers);
  if (err instanceof ZodError) {
    const first = err.issues[0];
    const where = first?.path.length ? `${first.path.join('.')}: ` : '';
    return json({ error: `${where}${first?.message ?? 'Invalid input.'}`, issues: err.issues }, 422);
  }
  console.error(`[fillcard] ${context}:`, err);
  return json({ error: 'Something went wrong on our side. Nothing was changed; please try again.' }, 500);
}

/** Wraps an API handler so every failure becomes a clear JSON answer. */
export function route<C extends { request: Request }>(handler: (ctx: C) => Promise<Response>) {
  return async (ctx: C) => {
    try {
      return await handler(ctx);
    } catch (err) {
      return errorResponse(err, `${ctx.request.method} ${new URL(ctx.request.url).pathname}`);
    }
  };
}

const MAX_JSON_BYTES = 64 * 1024;

/** Reads a JSON body, refusing huge bodies early (413) and non-JSON (400). */
export async function readJson(request: Request, maxBytes = MAX_JSON_BYTES): Promise<unknown> {
  const declared = Number(request.headers.get('content-length') ?? '0');
  if (declared > maxBytes) throw new HttpError(413, 'The request is too large.');
  const text = await request.text();
  if (Buffer.byteLength(text) > maxBytes) throw new HttpError(413, 'The request is too large.');
  try {
    return JSON.parse(text);
  } catch {
    throw badRequest('The request body is not valid JSON.');
  }
}

/** Reads a form body with the same early size check. */
export async function readForm(request: Request, maxBytes = MAX_JSON_BYTES): Promise<FormData> {
  const declared = Number(request.headers.get('content-length') ?? '0');
  if (declared > maxBytes) throw new HttpError(413, 'The request is too large.');
  return request.formData();
}

export function formString(form: FormData, name: string): string {
  const v = form.get(name);
  return typeof v === 'string' ? v : '';
}

/**
 * For pages that handle their own form posts: the message to show and the status to answer with.
 * Our own errors keep their message; anything else is logged and shown as a calm apology.
 */
export function pageError(err: unknown, response: ResponseInit & { headers: Headers }, context: string): string {
  if (err instanceof HttpError) {
    response.status = err.status;
    for (const [k, v] of Object.entries(err.headers)) response.headers.set(k, v);
    return err.message;
  }
  if (err instanceof ZodError) {
    response.status = 422;
    return err.issues[0]?.message ?? 'Please check the form.';
  }
  console.error(`[fillcard] ${context}:`, err);
  response.status = 500;
  return 'Something went wrong on our side. Nothing was changed; please try again.';
}
