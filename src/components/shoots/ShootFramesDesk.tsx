import { useCallback, useMemo, useRef, useState } from 'react';
import { QueryClient, QueryClientProvider, useQuery, useQueryClient } from '@tanstack/react-query';
import type { ShootFramesDto } from '../../lib/dto';
import { fetchFrames, framesKey } from './api';
import ShootUploader, { type UploadLimits } from './ShootUploader';
import ProcessingProgress from './ProcessingProgress';
import FramesBoard from './FramesBoard';
import FramePanel from './FramePanel';

interface Props {
  shootId: string;
  initial: ShootFramesDto;
  /** The member may upload, and the shoot is still taking frames. */
  canUpload: boolean;
  /** Why there is no uploader, when there is none. */
  uploadNote: string | null;
  canEdit: boolean;
  limits: Omit<UploadLimits, 'roomForFrames'> & { maxFilesPerShoot: number };
}

/** Poll fast while the worker is busy or files are going up, slowly otherwise (another tab may add frames). */
const FAST_MS = 1500;
const SLOW_MS = 20_000;

/** The shoot's frames tab: uploader, processing progress, the board and the frame panel. */
export default function ShootFramesDesk(props: Props) {
  const [client] = useState(
    () => new QueryClient({ defaultOptions: { queries: { retry: 2, refetchOnWindowFocus: true, staleTime: 1000 } } }),
  );
  return (
    <QueryClientProvider client={client}>
      <FramesDesk {...props} />
    </QueryClientProvider>
  );
}

function FramesDesk({ shootId, initial, canUpload, uploadNote, canEdit, limits }: Props) {
  const queryClient = useQueryClient();
  const [uploading, setUploading] = useState(false);
  const [openId, setOpenId] = useState<string | null>(null);
  const query = useQuery({
    queryKey: framesKey(shootId),
    queryFn: () => fetchFrames(shootId),
    initialData: initial,
    initialDataUpdatedAt: Date.now(),
    refetchInterval: (q) => {
      const d = q.state.data;
      const busy = uploading || (d ? d.counts.waiting + d.counts.processing > 0 || d.frames.some((f) => f.cropsPending) : false);
      return busy ? FAST_MS : SLOW_MS;
    },
    refetchIntervalInBackground: false,
  });
  const data = query.data;

  // Many files finish within a second of each other: one refresh covers them.
  const refreshTimer = useRef<number | null>(null);
  const refreshSoon = useCallback(() => {
    if (refreshTimer.current !== null) return;
    refreshTimer.current = window.setTimeout(() => {
      refreshTimer.current = null;
      void queryClient.invalidateQueries({ queryKey: framesKey(shootId) });
    }, 400);
  }, [queryClient, shootId]);
  const refreshNow = useCallback(() => void queryClient.invalidateQueries({ queryKey: framesKey(shootId) }), [queryClient, shootId]);

  const failed = useMemo(() => data.frames.filter((f) => f.state === 'failed'), [data.frames]);
  const openIndex = openId ? data.frames.findIndex((f) => f.id === openId) : -1;
  // The limits are read when the uploader is made; later frames count against the server's own check.
  const [uploadLimits] = useState<UploadLimits>(() => ({ ...limits, roomForFrames: limits.maxFilesPerShoot - initial.counts.total }));

  return (
    <div className="space-y-6">
      {canUpload ? (
        <ShootUploader shootId={shootId} limits={uploadLimits} onActivity={setUploading} onRegistered={refreshSoon} />
      ) : uploadNote ? (
        <p className="notice-caution">{uploadNote}</p>
      ) : null}
      {query.isError ? (
        <p className="notice-error" role="alert">
          The frames could not be refreshed: {(query.error as Error).message} Fillcard keeps trying.
        </p>
      ) : null}
      <ProcessingProgress counts={data.counts} failed={failed} canRetry={canUpload && canEdit} canRemove={canEdit && data.stage !== 'archived'} onChanged={refreshNow} />
      <FramesBoard frames={data.frames} onOpen={setOpenId} canUpload={canUpload} />
      {openIndex >= 0 ? (
        <FramePanel
          frames={data.frames}
          index={openIndex}
          canEdit={canEdit}
          onClose={() => setOpenId(null)}
          onNavigate={(i) => setOpenId(data.frames[i]?.id ?? null)}
          onChanged={refreshNow}
        />
      ) : null}
    </div>
  );
}
