import { useState } from 'react';
import { ApiError, startCheckout, submitPicksRequest } from './gallery-api';

interface Props {
  shootId: string;
  studioName: string;
  picked: number;
  extras: number;
  /** The amount to pay for extras, already formatted in the shoot's currency. */
  totalText: string;
  submitted: boolean;
  awaitingPayment: boolean;
}

type State =
  | { kind: 'idle' }
  | { kind: 'working'; what: string }
  | { kind: 'sent' }
  | { kind: 'no-payment' }
  | { kind: 'error'; message: string };

/** Sends the picks (and, with extras, goes on to payment); the answer is spoken and shown. */
export default function SubmitPicks({ shootId, studioName, picked, extras, totalText, submitted, awaitingPayment }: Props) {
  const [state, setState] = useState<State>({ kind: 'idle' });

  const pay = async () => {
    setState({ kind: 'working', what: 'Opening the payment page…' });
    try {
      const { url } = await startCheckout(shootId);
      window.location.assign(url);
    } catch (err) {
      if (err instanceof ApiError && err.status === 404) setState({ kind: 'no-payment' });
      else setState({ kind: 'error', message: err instanceof Error ? err.message : 'The payment page did not open. Please try again.' });
    }
  };

  const send = async () => {
    setState({ kind: 'working', what: 'Sending your picks…' });
    try {
      const result = await submitPicksRequest(shootId);
      if (result.needsPayment) await pay();
      else setState({ kind: 'sent' });
    } catch (err) {
      setState({ kind: 'error', message: err instanceof Error ? err.message : 'Your picks were not sent. Please try again.' });
    }
  };

  const working = state.kind === 'working';
  return (
    <div>
      <div aria-live="polite" className="mb-3 empty:hidden">
        {state.kind === 'working' ? <p className="text-ink-soft">{state.what}</p> : null}
        {state.kind === 'sent' ? (
          <p className="notice-ok" role="status">
            Thank you! Your picks are with {studioName}. They will be in touch when the retouching is done. <a href={`/gallery/${shootId}`}>Back to the proofs</a>
          </p>
        ) : null}
        {state.kind === 'no-payment' ? (
          <p className="notice-caution" role="status">
            Payment is not available yet. Your picks are saved and set aside; {studioName} will tell you how to pay for the extra retouches.
          </p>
        ) : null}
      </div>
      {state.kind === 'error' ? <p className="notice-error mb-3" role="alert">{state.message}</p> : null}
      {state.kind === 'sent' ? null : submitted ? (
        awaitingPayment && state.kind !== 'no-payment' ? (
          <button type="button" onClick={pay} disabled={working} className="btn-brand w-full text-lead sm:w-auto">
            Pay {totalText} for {extras} extra {extras === 1 ? 'retouch' : 'retouches'}
          </button>
        ) : null
      ) : (
        <>
          <button type="button" onClick={send} disabled={working || picked === 0} className="btn-brand w-full text-lead sm:w-auto">
            {extras > 0 ? `Send my picks and pay ${totalText}` : `Send my ${picked} ${picked === 1 ? 'pick' : 'picks'} to ${studioName}`}
          </button>
          <p className="mt-2 text-caption text-ink-faint">
            {picked === 0 ? 'Pick at least one frame first.' : 'Once sent, your picks are locked. If you change your mind, the studio can reopen them for you.'}
          </p>
        </>
      )}
    </div>
  );
}
