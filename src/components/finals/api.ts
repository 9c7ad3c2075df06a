/** The finals API as the Finals tab calls it. Browser-only; every refusal carries the server's words. */
import type { FinalsDeskData } from './types';
import { apiCall } from '../ui/api-call';

export { ApiError as FinalsApiError } from '../ui/api-call';
export const finalsKey = (shootId: string) => ['shoot-finals', shootId] as const;
export const fetchFinals = (shootId: string) => apiCall<FinalsDeskData>(`/api/shoots/${shootId}/finals`);
export const matchFinal = (shootId: string, finalId: string, frameId: string, replace = false) =>
  apiCall<{ ok: true }>(`/api/shoots/${shootId}/finals/${finalId}/match`, { method: 'POST', json: { frameId, replace } });
export const removeFinal = (shootId: string, finalId: string) => apiCall<{ ok: true }>(`/api/shoots/${shootId}/finals/${finalId}`, { method: 'DELETE' });
export const handOff = (shootId: string, partial: boolean) =>
  apiCall<{ downloadUntil: string; finals: number; missing: number; newLink: string | null }>(`/api/shoots/${shootId}/hand-off`, { method: 'POST', json: { partial } });
export const extendDownloads = (shootId: string, days: number) =>
  apiCall<{ downloadUntil: string }>(`/api/shoots/${shootId}/finals/extend`, { method: 'POST', json: { days } });
export const archiveShoot = (shootId: string) => apiCall<{ ok: true }>(`/api/shoots/${shootId}/archive`, { method: 'POST', json: {} });
export const announceFinals = (shootId: string) => apiCall<{ announced: number; newLink: string | null }>(`/api/shoots/${shootId}/finals/announce`, { method: 'POST', json: {} });
export const restoreShoot = (shootId: string) => apiCall<{ stage: string }>(`/api/shoots/${shootId}/restore`, { method: 'POST', json: {} });
export const deleteShoot = (shootId: string, title: string) => apiCall<{ ok: true; url: string }>(`/api/shoots/${shootId}`, { method: 'DELETE', json: { title } });
