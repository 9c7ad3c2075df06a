/**
 * Refunds a paid order, after the owner confirms on the spot: money leaves the studio, and a
 * refund cannot be taken back. The page reloads afterwards so the panel shows the server's record.
 */
import { useId, useRef, useState } from 'react';

interface Props {
  orderId: string;
  /** The amount as the panel shows it, e.g. "€59.50". */
  amount: string;
}

type Step = { kind: 'idle' } | { kind: 'confirm' } | { kind: 'sending' } | { kind: 'error'; message: string };

export default function RefundButton({ orderId, amount }: Props) {
  const [step, setStep] = useState<Step>({ kind: 'idle' });
  const id = useId();
  const keepRef = useRef<HTMLButtonElement>(null);

  async function refund() {
    setStep({ kind: 'sending' });
    try {
      const res = await fetch(`/api/orders/${orderId}/refund`, {
        method: 'POST',
        headers: { 'Content-Type': 'application/json', Accept: 'application/json' },
        credentials: 'same-origin',
        body: '{}',
      });
      const body = (await res.json().catch(() => null)) as { error?: string } | null;
      if (!res.ok) throw new Error(body?.error ?? `The refund did not go through (HTTP ${res.status}).`);
      window.location.reload();
    } catch (err) {
      const message = err instanceof TypeError ? 'We could not reach Fillcard. Check your connection; nothing was refunded.' : (err as Error).message;
      setStep({ kind: 'error', message });
    }
  }

  if (step.kind === 'idle') {
    return (
      <button type="button" className="btn-quiet !min-h-[40px] !py-1.5 text-ember" onClick={() => {
        setStep({ kind: 'confirm' });
        queueMicrotask(() => keepRef.current?.focus());
      }}>
        Refund…
      </button>
    );
  }
  return (
    <div role="group" aria-labelledby={`${id}-q`} className="mt-2 rounded-card border border-ember/30 bg-ember-light p-3">
      <p id={`${id}-q`} className="text-ember">
        Refund <strong>{amount}</strong> to the client’s card? This cannot be undone.
      </p>
      {step.kind === 'error' ? <p role="alert" className="mt-2 text-ember">{step.message}</p> : null}
      <div className="mt-3 flex flex-wrap gap-2">
        <button type="button" className="btn-danger !min-h-[40px] !py-1.5" disabled={step.kind === 'sending'} onClick={refund}>
          {step.kind === 'sending' ? 'Refunding…' : `Yes, refund ${amount}`}
        </button>
        <button type="button" ref={keepRef} className="btn-quiet !min-h-[40px] !py-1.5" disabled={step.kind === 'sending'} onClick={() => setStep({ kind: 'idle' })}>
          Keep the payment
        </button>
      </div>
    </div>
  );
}
