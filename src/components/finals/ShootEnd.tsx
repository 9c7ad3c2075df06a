import { useState } from 'react';
import { FinalsApiError, archiveShoot, deleteShoot, restoreShoot } from './api';

/** The end of a shoot: archive it (the gallery closes) and bring it back, or delete it for good after typing its title. */
export default function ShootEnd({ shootId, title, stage }: { shootId: string; title: string; stage: string }) {
  const [askArchive, setAskArchive] = useState(false);
  const [deleting, setDeleting] = useState(false);
  const [typed, setTyped] = useState('');
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState('');

  async function run(fn: () => Promise<void>) {
    setBusy(true);
    setError('');
    try {
      await fn();
    } catch (err) {
      setError(err instanceof FinalsApiError ? err.message : 'That did not work. Please try again.');
      setBusy(false);
    }
  }

  return (
    <section className="card p-5" aria-labelledby="end-heading" data-testid="shoot-end">
      <h2 id="end-heading" className="text-lead">{stage === 'archived' ? 'Bring back or delete' : 'Archive or delete'}</h2>
      {stage !== 'archived' ? (
        askArchive ? (
          <div className="mt-2 rounded-card bg-paper-deep p-3">
            <p>Archive this shoot? The client’s gallery closes; you keep the shoot and every file.</p>
            <div className="mt-2 flex flex-wrap gap-2">
              <button type="button" className="btn-primary" disabled={busy} onClick={() => run(async () => {
                await archiveShoot(shootId);
                window.location.assign(`${window.location.pathname}?done=archived`);
              })}>Archive</button>
              <button type="button" className="btn-quiet" onClick={() => setAskArchive(false)}>Cancel</button>
            </div>
          </div>
        ) : (
          <button type="button" className="btn-quiet mt-2 w-full" onClick={() => setAskArchive(true)}>Archive the shoot</button>
        )
      ) : (
        <>
          <p className="mt-1 text-ink-soft">Bringing it back returns the shoot to the stage it was archived from and reopens the client’s gallery, if its link and dates still allow.</p>
          <button type="button" className="btn-quiet mt-2 w-full" disabled={busy} onClick={() => run(async () => {
            await restoreShoot(shootId);
            window.location.assign(`${window.location.pathname}?done=restored`);
          })}>Bring the shoot back</button>
        </>
      )}
      {deleting ? (
        <form className="mt-3 rounded-card border border-ember/30 bg-ember-light/50 p-3" onSubmit={(e) => {
          e.preventDefault();
          void run(async () => {
            const r = await deleteShoot(shootId, typed);
            window.location.assign(r.url);
          });
        }}>
          <p className="text-ember">
            This deletes every frame, final, pick, payment record and download of this shoot from Fillcard and from storage. It cannot be undone.
            A line in the studio’s audit log stays.
          </p>
          <label className="label mt-3" htmlFor="confirm-title">Type the shoot’s title: <span className="normal-case tracking-normal text-ink">{title}</span></label>
          <input id="confirm-title" className="field" value={typed} onChange={(e) => setTyped(e.target.value)} autoComplete="off" spellCheck={false} />
          <div className="mt-3 flex flex-wrap gap-2">
            <button type="submit" className="btn-danger" disabled={busy || typed.trim() !== title.trim()}>Delete for good</button>
            <button type="button" className="btn-quiet" onClick={() => { setDeleting(false); setTyped(''); }}>Cancel</button>
          </div>
        </form>
      ) : (
        <button type="button" className="btn-quiet mt-2 w-full text-ember" onClick={() => setDeleting(true)}>Delete the shoot…</button>
      )}
      {error ? <p className="notice-error mt-3" role="alert">{error}</p> : null}
      <p className="mt-3 text-caption text-ink-faint">Photos of people are personal data: delete what you no longer need, within what your local law asks you to keep.</p>
    </section>
  );
}
