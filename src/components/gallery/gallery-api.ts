/**
 * The gallery's data in the browser: one query for the shoot's frames and picks, and one mutation
 * for every pick change. Pick changes run one after another (one mutation scope), so the server
 * always ends in the state the client last chose, even when taps come faster than answers.
 */
import { useMutation, useQuery, useQueryClient, type QueryClient } from '@tanstack/react-query';
import { useCallback, useState } from 'react';
import type { GalleryData, GalleryPick, SubmitResult } from '../../lib/schemas/picks';

export class ApiError extends Error {
  constructor(public status: number, message: string) {
    super(message);
  }
}

async function call<T>(url: string, init: RequestInit = {}): Promise<T> {
  let res: Response;
  try {
    res = await fetch(url, {
      ...init,
      headers: { Accept: 'application/json', ...(init.body ? { 'Content-Type': 'application/json' } : {}), ...init.headers },
      credentials: 'same-origin',
    });
  } catch {
    throw new ApiError(0, 'We could not reach the studio’s gallery. Check your connection and try again.');
  }
  const body = await res.json().catch(() => null);
  if (!res.ok) throw new ApiError(res.status, (body && typeof body.error === 'string' && body.error) || 'Something went wrong. Please try again.');
  return body as T;
}

export const galleryKey = (shootId: string) => ['gallery', shootId] as const;

export function useGallery(shootId: string, initial: GalleryData) {
  return useQuery({
    queryKey: galleryKey(shootId),
    queryFn: () => call<GalleryData>(`/api/gallery/${shootId}/frames`),
    initialData: initial,
    staleTime: 60_000,
    // The image URLs are signed for one to two hours; refresh them well before they lapse.
    refetchInterval: 20 * 60_000,
    refetchOnWindowFocus: true,
  });
}

export interface PickChange {
  frameId: string;
  /** true: pick (or keep picked); false: take out of the picks. */
  picked: boolean;
  /** Sent only when the note changed; otherwise the server keeps whatever note the pick has. */
  note?: string;
  /** For messages: the frame's name. */
  name: string;
}

const PICK_KEY = ['pick'] as const;

function setPick(qc: QueryClient, shootId: string, frameId: string, pick: GalleryPick | null) {
  qc.setQueryData<GalleryData>(galleryKey(shootId), (old) => {
    if (!old) return old;
    const others = old.picks.filter((p) => p.frameId !== frameId);
    if (!pick) return { ...old, picks: others };
    // Keep the frames' order so lists built from picks stay stable.
    const order = new Map(old.frames.map((f, i) => [f.id, i]));
    return { ...old, picks: [...others, pick].sort((a, b) => (order.get(a.frameId) ?? 0) - (order.get(b.frameId) ?? 0)) };
  });
}

function laterChangesFor(qc: QueryClient, frameId: string) {
  return qc.getMutationCache().findAll({ mutationKey: PICK_KEY, status: 'pending' })
    .filter((m) => (m.state.variables as PickChange | undefined)?.frameId === frameId).length - 1;
}

/** Pick, un-pick and note changes, shown at once and rolled back with a message if the server refuses. */
export function usePickChange(shootId: string) {
  const qc = useQueryClient();
  const [error, setError] = useState<string | null>(null);
  const mutation = useMutation({
    mutationKey: PICK_KEY,
    scope: { id: `picks:${shootId}` },
    mutationFn: (change: PickChange) =>
      change.picked
        ? call<GalleryPick>(`/api/gallery/${shootId}/picks/${change.frameId}`, {
            method: 'PUT',
            body: JSON.stringify(change.note === undefined ? {} : { note: change.note }),
          })
        : call<{ ok: true }>(`/api/gallery/${shootId}/picks/${change.frameId}`, { method: 'DELETE' }).then(() => null),
    onMutate: async (change) => {
      await qc.cancelQueries({ queryKey: galleryKey(shootId) });
      const before = qc.getQueryData<GalleryData>(galleryKey(shootId))?.picks.find((p) => p.frameId === change.frameId) ?? null;
      setPick(qc, shootId, change.frameId, change.picked
        ? { frameId: change.frameId, note: change.note ?? before?.note ?? '', updatedAt: new Date().toISOString() }
        : null);
      setError(null);
      return { before };
    },
    onSuccess: (saved, change) => {
      // A later tap on the same frame is already shown; the server's answer to this one is old news.
      if (laterChangesFor(qc, change.frameId) > 0) return;
      setPick(qc, shootId, change.frameId, saved);
    },
    onError: (err, change, ctx) => {
      if (laterChangesFor(qc, change.frameId) <= 0 && ctx) setPick(qc, shootId, change.frameId, ctx.before);
      const what = change.picked ? (change.note !== undefined ? `the note on ${change.name}` : `your pick of ${change.name}`) : `taking ${change.name} out of your picks`;
      setError(err instanceof ApiError && err.status !== 0 && err.status < 500 ? err.message : `We could not save ${what}. ${err instanceof ApiError && err.status === 0 ? err.message : 'Please try again.'}`);
      // Show what the studio really has, whatever went wrong.
      void qc.invalidateQueries({ queryKey: galleryKey(shootId) });
    },
  });
  const change = useCallback((c: PickChange) => mutation.mutate(c), [mutation.mutate]);
  return { change, error, clearError: () => setError(null), pending: mutation.isPending };
}

export function submitPicksRequest(shootId: string) {
  return call<SubmitResult>(`/api/gallery/${shootId}/submit`, { method: 'POST' });
}

export function startCheckout(shootId: string) {
  return call<{ url: string }>(`/api/gallery/${shootId}/checkout`, { method: 'POST', body: '{}' });
}
