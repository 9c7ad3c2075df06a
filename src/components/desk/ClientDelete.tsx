import { useState } from 'react';

type Props = { clientId: string; name: string; shoots: number; activeShoots: number };

/**
 * Removes a client after a second click. The server decides: refused while a shoot is not
 * archived, archived when archived shoots remain, deleted when there are none.
 */
export default function ClientDelete({ clientId, name, shoots, activeShoots }: Props) {
  const [isConfirming, setConfirming] = useState(false);
  const [isBusy, setBusy] = useState(false);
  const [error, setError] = useState('');
  const outcome = shoots === 0 ? 'deleted' : 'archived';

  async function remove() {
    setBusy(true);
    setError('');
    try {
      const res = await fetch(`/api/clients/${encodeURIComponent(clientId)}`, { method: 'DELETE' });
      const body = (await res.json().catch(() => ({}))) as { error?: string; outcome?: string };
      if (!res.ok) {
        setError(body.error ?? `That did not work (HTTP ${res.status}).`);
        setConfirming(false);
        return;
      }
      window.location.assign(`/desk/clients?removed=${body.outcome === 'deleted' ? 'deleted' : 'archived'}`);
    } catch {
      setError('Could not reach Fillcard. Check the connection and try again.');
    } finally {
      setBusy(false);
    }
  }

  return (
    <div className="space-y-3">
      <p className="text-ink-soft">
        {activeShoots > 0
          ? `${name} has ${activeShoots === 1 ? 'a shoot' : `${activeShoots} shoots`} not yet archived. Archive ${activeShoots === 1 ? 'it' : 'them'} first; then the client can be removed.`
          : shoots > 0
            ? `All of ${name}'s shoots are archived. Removing the client archives this record and clears the phone and notes; deleting the archived shoots removes their photos and records.`
            : `${name} has no shoots. Removing the client deletes this record for good.`}
      </p>
      {error ? <p role="alert" className="notice-error">{error}</p> : null}
      {isConfirming ? (
        <div className="flex flex-wrap items-center gap-2" role="group" aria-label="Confirm removal">
          <button type="button" className="btn-danger" disabled={isBusy} onClick={() => void remove()}>
            {isBusy ? 'Removing…' : outcome === 'deleted' ? `Yes, delete ${name}` : `Yes, archive ${name}`}
          </button>
          <button type="button" className="btn-quiet" disabled={isBusy} onClick={() => setConfirming(false)}>Keep</button>
        </div>
      ) : (
        <button type="button" className="btn-quiet text-ember" onClick={() => setConfirming(true)}>
          Remove client…
        </button>
      )}
    </div>
  );
}
