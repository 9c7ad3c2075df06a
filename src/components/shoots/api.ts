/** The frames API as the shoot page's islands call it. Browser-only; every error carries the server's words. */
import type { ShootFramesDto } from '../../lib/dto';
import { apiCall } from '../ui/api-call';

export { ApiError } from '../ui/api-call';
export const framesKey = (shootId: string) => ['shoot-frames', shootId] as const;

export const fetchFrames = (shootId: string) => apiCall<ShootFramesDto>(`/api/shoots/${shootId}/frames`);

export const patchFrame = (frameId: string, edit: { hidden?: boolean; focus?: { x: number; y: number } }) =>
  apiCall<{ ok: true; rebuildingCrops: boolean }>(`/api/frames/${frameId}`, { method: 'PATCH', json: edit });

export const deleteFrame = (frameId: string) => apiCall<{ ok: true }>(`/api/frames/${frameId}`, { method: 'DELETE' });

export const retryFrame = (frameId: string) => apiCall<{ ok: true }>(`/api/frames/${frameId}/retry`, { method: 'POST' });
