/** The frames API as the shoot page's islands call it. Browser-only; every error carries the server's words. */
import type { ShootFramesDto } from '../../lib/dto';

export class ApiError extends Error {
  constructor(
    readonly status: number,
    message: string,
  ) {
    super(message);
    this.name = 'ApiError';
  }
}

const OFFLINE = 'Fillcard could not be reached. Check your connection and try again.';

export async function api<T>(path: string, init: { method?: string; json?: unknown } = {}): Promise<T> {
  let res: Response;
  try {
    res = await fetch(path, {
      method: init.method ?? 'GET',
      headers: init.json === undefined ? undefined : { 'Content-Type': 'application/json' },
      body: init.json === undefined ? undefined : JSON.stringify(init.json),
      credentials: 'same-origin',
    });
  } catch {
    throw new ApiError(0, OFFLINE);
  }
  const data = (await res.json().catch(() => null)) as (T & { error?: string }) | null;
  if (!res.ok) {
    const message =
      data?.error ?? (res.status === 401 ? 'Your session has ended. Please sign in again.' : `The request failed (error ${res.status}). Please try again.`);
    throw new ApiError(res.status, message);
  }
  return data as T;
}

export const framesKey = (shootId: string) => ['shoot-frames', shootId] as const;

export const fetchFrames = (shootId: string) => api<ShootFramesDto>(`/api/shoots/${shootId}/frames`);

export const patchFrame = (frameId: string, edit: { hidden?: boolean; focus?: { x: number; y: number } }) =>
  api<{ ok: true; rebuildingCrops: boolean }>(`/api/frames/${frameId}`, { method: 'PATCH', json: edit });

export const deleteFrame = (frameId: string) => api<{ ok: true }>(`/api/frames/${frameId}`, { method: 'DELETE' });

export const retryFrame = (frameId: string) => api<{ ok: true }>(`/api/frames/${frameId}/retry`, { method: 'POST' });
