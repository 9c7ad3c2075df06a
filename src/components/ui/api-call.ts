/** How the studio's islands call Fillcard's API. Browser-only; every refusal carries the server's own words. */

export class ApiError extends Error {
  constructor(
    readonly status: number,
    message: string,
    /** Set when the server asks for a yes before going ahead (replace a final, hand off with picks missing). */
    readonly needsConfirmation = false,
  ) {
    super(message);
    this.name = 'ApiError';
  }
}

const OFFLINE = 'Fillcard could not be reached. Check your connection and try again.';

export async function apiCall<T>(path: string, init: { method?: string; json?: unknown } = {}): Promise<T> {
  let res: Response;
  try {
    res = await fetch(path, {
      method: init.method ?? 'GET',
      headers: init.json === undefined ? { Accept: 'application/json' } : { 'Content-Type': 'application/json', Accept: 'application/json' },
      body: init.json === undefined ? undefined : JSON.stringify(init.json),
      credentials: 'same-origin',
    });
  } catch {
    throw new ApiError(0, OFFLINE);
  }
  const data = (await res.json().catch(() => null)) as (T & { error?: string; needsConfirmation?: boolean }) | null;
  if (!res.ok) {
    const message = data?.error ?? (res.status === 401 ? 'Your session has ended. Please sign in again.' : `The request failed (error ${res.status}). Please try again.`);
    throw new ApiError(res.status, message, !!data?.needsConfirmation);
  }
  return data as T;
}
