/**
 * "Payment being confirmed": asks the server every 2 s where the payment stands and reloads the
 * page once the provider's webhook has settled it, so the page the client then sees is rendered
 * from the server's record. It never decides anything itself.
 */
import { useEffect, useState } from 'react';
import { QueryClient, QueryClientProvider, useQuery } from '@tanstack/react-query';

interface Props {
  shootId: string;
  sessionId: string;
}

interface Status {
  order: { id: string; state: string } | null;
}

async function fetchStatus(shootId: string, sessionId: string): Promise<Status> {
  const res = await fetch(`/api/gallery/${shootId}/checkout?session=${encodeURIComponent(sessionId)}`, {
    headers: { Accept: 'application/json' },
    credentials: 'same-origin',
  });
  if (!res.ok) throw new Error(`HTTP ${res.status}`);
  return (await res.json()) as Status;
}

export default function PaymentWait(props: Props) {
  const [client] = useState(() => new QueryClient({ defaultOptions: { queries: { retry: false, refetchOnWindowFocus: true } } }));
  return (
    <QueryClientProvider client={client}>
      <Waiter {...props} />
    </QueryClientProvider>
  );
}

function Waiter({ shootId, sessionId }: Props) {
  const { data, isError } = useQuery({
    queryKey: ['payment-status', shootId, sessionId],
    queryFn: () => fetchStatus(shootId, sessionId),
    refetchInterval: 2000,
  });
  const settled = !!data?.order && data.order.state !== 'pending';
  useEffect(() => {
    if (settled) window.location.reload();
  }, [settled]);

  return (
    <p className="mt-4 flex items-center gap-3 text-ink-soft" role="status" aria-live="polite">
      <span className="inline-block h-4 w-4 flex-none animate-spin rounded-full border-2 border-clay border-t-transparent motion-reduce:animate-none" aria-hidden="true" />
      {settled
        ? 'Confirmed. One moment…'
        : isError
          ? 'We could not check just now; trying again…'
          : 'Checking every few seconds…'}
    </p>
  );
}
