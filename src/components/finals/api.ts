/** The finals API as the Finals tab calls it. Browser-only; every refusal carries the server's words. */
import type { FinalsDeskData } from './types';

export class FinalsApiError extends Error {
  constructor(
    readonly status: number,
    message: string,
    /** Set when the server asks for a yes before going ahead (replace a final, hand off with picks missing). */
    readonly needsConfirmation = false,
  ) {
    super(message);
    this.name = 'FinalsApiError';
  }
}

const OFFLINE = 'Fillcard could not be reached. Check your connection and try again.';

export async function call<T>(path: string, init: { method?: string; json?: unknown } = {}): Promise<T> {
  let res: Response;
  try {
    res = await fetch(path, {
      method: init.method ?? 'GET',
      headers: init.json === undefined ? { Accept: 'application/json' } : { 'Content-Type': 'application/json', Accept: 'application/json' },
      body: init.json === undefined ? undefined : JSON.stringify(init.json),
      credentials: 'same-origin',
    });
  } catch {
    throw new FinalsApiError(0, OFFLINE);
  }
  const data = (await res.json().catch(() => null)) as (T & { error?: string; needsConfirmation?: boolean }) | null;
  if (!res.ok) {
    const message = data?.error ?? (res.status === 401 ? 'Your session has ended. Please sign in again.' : `The request failed (error ${res.status}). Please try again.`);
    throw new FinalsApiError(res.status, message, !!data?.needsConfirmation);
  }
  return data as T;
}

export const finalsKey = (shootId: string) => ['shoot-finals', shootId] as const;
export const fetchFinals = (shootId: string) => call<FinalsDeskData>(`/api/shoots/${shootId}/finals`);
export const matchFinal = (shootId: string, finalId: string, frameId: string, replace = false) =>
  call<{ ok: true }>(`/api/shoots/${shootId}/finals/${finalId}/match`, { method: 'POST', json: { frameId, replace } });
export const removeFinal = (shootId: string, finalId: string) => call<{ ok: true }>(`/api/shoots/${shootId}/finals/${finalId}`, { method: 'DELETE' });
export const handOff = (shootId: string, partial: boolean) =>
  call<{ downloadUntil: string; finals: number; missing: number; newLink: string | null }>(`/api/shoots/${shootId}/hand-off`, { method: 'POST', json: { partial } });
export const extendDownloads = (shootId: string, days: number) =>
  call<{ downloadUntil: string }>(`/api/shoots/${shootId}/finals/extend`, { method: 'POST', json: { days } });
export const archiveShoot = (shootId: string) => call<{ ok: true }>(`/api/shoots/${shootId}/archive`, { method: 'POST', json: {} });
export const announceFinals = (shootId: string) => call<{ announced: number; newLink: string | null }>(`/api/shoots/${shootId}/finals/announce`, { method: 'POST', json: {} });
export const restoreShoot = (shootId: string) => call<{ stage: string }>(`/api/shoots/${shootId}/restore`, { method: 'POST', json: {} });
export const deleteShoot = (shootId: string, title: string) => call<{ ok: true; url: string }>(`/api/shoots/${shootId}`, { method: 'DELETE', json: { title } });
