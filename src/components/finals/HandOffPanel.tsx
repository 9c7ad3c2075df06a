import { useState } from 'react';
import { FinalsApiError, announceFinals, extendDownloads, handOff } from './api';
import type { FinalsDeskData } from './types';

const day = (iso: string) => new Date(iso).toLocaleDateString('en-GB', { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' });
const EXTEND_CHOICES = [7, 14, 30, 60, 90];

/** Handing the finals to the client, and afterwards their download date, with "download all" for the studio. */
export default function HandOffPanel({ data, onChanged, idSuffix = '' }: { data: FinalsDeskData; onChanged: () => void; idSuffix?: string }) {
  const [confirm, setConfirm] = useState<string | null>(null);
  // Handing off e-mails the client at once, so it takes a second, deliberate press.
  const [asking, setAsking] = useState(false);
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState('');
  const [link, setLink] = useState<string | null>(null);
  const [days, setDays] = useState(14);
  const [extended, setExtended] = useState('');
  const [announced, setAnnounced] = useState('');
  const { counts } = data;
  const api = `/api/shoots/${data.shootId}/finals`;

  async function doHandOff(partial: boolean) {
    setBusy(true);
    setError('');
    try {
      const r = await handOff(data.shootId, partial);
      if (r.newLink) {
        setLink(r.newLink);
        setConfirm(null);
        onChanged();
      } else {
        window.location.assign(`${window.location.pathname}?done=handed-off`);
      }
    } catch (err) {
      if (err instanceof FinalsApiError && err.needsConfirmation) setConfirm(err.message);
      else setError(err instanceof FinalsApiError ? err.message : 'That did not work. Please try again.');
    } finally {
      setBusy(false);
    }
  }

  async function doAnnounce() {
    setBusy(true);
    setError('');
    try {
      const r = await announceFinals(data.shootId);
      if (r.newLink) setLink(r.newLink);
      setAnnounced(`${data.clientName} has been e-mailed about ${r.announced === 1 ? 'the new final' : `the ${r.announced} new finals`}.`);
      onChanged();
    } catch (err) {
      setError(err instanceof FinalsApiError ? err.message : 'That did not work. Please try again.');
    } finally {
      setBusy(false);
    }
  }

  async function doExtend() {
    setBusy(true);
    setError('');
    try {
      const r = await extendDownloads(data.shootId, days);
      setExtended(`Downloads are open until ${day(r.downloadUntil)}.`);
      onChanged();
    } catch (err) {
      setError(err instanceof FinalsApiError ? err.message : 'That did not work. Please try again.');
    } finally {
      setBusy(false);
    }
  }

  const zipLinks = counts.ready > 0 ? (
    <div className="mt-4 flex flex-col gap-2 border-t border-paper-edge pt-4">
      <a className="btn-quiet" href={`${api}/zip`} download>Download all finals (ZIP)</a>
      <a className="btn-quiet" href={`${api}/zip?set=crops`} download>Download all crops (ZIP)</a>
    </div>
  ) : null;

  if (data.stage === 'delivered' && data.downloadUntil) {
    const closed = new Date(data.downloadUntil) < new Date();
    return (
      <section className="card p-5" aria-labelledby={`handoff-heading${idSuffix}`} data-testid="handoff">
        <h2 id={`handoff-heading${idSuffix}`} className="text-lead">Handed off</h2>
        {link ? <NewLink link={link} id={`new-link${idSuffix}`} /> : null}
        <p className={closed ? 'mt-1 font-semibold text-ember' : 'mt-1 text-ink-soft'} data-testid="download-until">
          {closed ? `Downloads closed on ${day(data.downloadUntil)}. The client sees a notice with your contact details.` : `${data.clientName} can download until ${day(data.downloadUntil)}.`}
        </p>
        {announced ? <p className="notice-ok mt-3" role="status">{announced}</p> : null}
        {data.can.handOff && data.unannounced > 0 && !closed ? (
          <div className="notice-caution mt-3" data-testid="unannounced">
            <p>
              {data.unannounced === 1 ? 'One final became ready' : `${data.unannounced} finals became ready`} after {data.clientName} was last e-mailed.
              They can already download {data.unannounced === 1 ? 'it' : 'them'}; an e-mail lets them know.
            </p>
            <button type="button" className="btn-accent mt-2" disabled={busy} onClick={doAnnounce}>Tell {data.clientName}</button>
          </div>
        ) : null}
        {data.can.handOff ? (
          <div className="mt-4">
            <label className="label" htmlFor={`extend-days${idSuffix}`}>Keep downloads open longer</label>
            <div className="flex gap-2">
              <select id={`extend-days${idSuffix}`} className="field" value={days} onChange={(e) => setDays(Number(e.target.value))}>
                {EXTEND_CHOICES.map((d) => <option key={d} value={d}>{d} more days</option>)}
              </select>
              <button type="button" className="btn-quiet shrink-0" disabled={busy} onClick={doExtend}>Extend</button>
            </div>
            {extended ? <p className="mt-2 text-caption text-moss" role="status">{extended}</p> : null}
          </div>
        ) : null}
        {error ? <p className="notice-error mt-3" role="alert">{error}</p> : null}
        {zipLinks}
      </section>
    );
  }
  if (data.stage === 'archived') {
    return (
      <section className="card p-5" data-testid="handoff">
        <h2 className="text-lead">Archived</h2>
        <p className="text-ink-soft">The client’s gallery is closed. The studio keeps the shoot and its files until it is deleted; {data.can.manage ? 'bring it back from “Bring back or delete”.' : 'an owner can bring it back.'}</p>
        {zipLinks}
      </section>
    );
  }
  const canHandOff = data.can.handOff && ['picks_in', 'retouching'].includes(data.stage);
  const missing = counts.picks - counts.ready;
  return (
    <section className="card p-5" aria-labelledby={`handoff-heading${idSuffix}`} data-testid="handoff">
      <h2 id={`handoff-heading${idSuffix}`} className="text-lead">{data.can.handOff ? `Hand off to ${data.clientName}` : 'Hand-off'}</h2>
      <p className="text-ink-soft">
        {counts.picks === 0
          ? 'Once the client sends picks and their finals are uploaded, hand them off from here.'
          : missing === 0
            ? `All ${counts.picks} picks have a ready final.`
            : `${counts.ready} of ${counts.picks} picks have a ready final.`}
      </p>
      {canHandOff ? (
        <>
          <p className="mt-2 text-caption text-ink-faint">
            The client is e-mailed and opens the finals with their viewing link. Downloads stay open for the number of days set in studio settings.
          </p>
          {confirm ? (
            <div className="notice-caution mt-3" role="alertdialog" aria-label="Hand off with picks missing">
              <p>{confirm}</p>
              <p className="mt-1 text-caption">The rest appear for the client when they are ready.</p>
              <div className="mt-2 flex flex-wrap gap-2">
                <button type="button" className="btn-accent" disabled={busy} onClick={() => doHandOff(true)}>Hand off anyway</button>
                <button type="button" className="btn-quiet" onClick={() => { setConfirm(null); setAsking(false); }}>Not yet</button>
              </div>
            </div>
          ) : asking ? (
            <div className="mt-3 rounded-card bg-paper-deep p-3" role="group" aria-label="Confirm the hand-off">
              <p>E-mail {data.clientName} that the finals are ready to download?</p>
              <div className="mt-2 flex flex-wrap gap-2">
                <button type="button" className="btn-accent" disabled={busy} onClick={() => doHandOff(false)}>Hand off and e-mail</button>
                <button type="button" className="btn-quiet" onClick={() => setAsking(false)}>Not yet</button>
              </div>
            </div>
          ) : (
            <button type="button" className="btn-accent mt-3 w-full" disabled={busy || counts.ready === 0} onClick={() => setAsking(true)}>
              Hand off finals
            </button>
          )}
        </>
      ) : null}
      {!data.can.handOff && counts.picks > 0 ? <p className="mt-2 text-caption text-ink-faint">The studio’s owner hands the finals to {data.clientName} when they are ready.</p> : null}
      {error ? <p className="notice-error mt-3" role="alert">{error}</p> : null}
      {zipLinks}
    </section>
  );
}

function NewLink({ link, id }: { link: string; id: string }) {
  const [copied, setCopied] = useState(false);
  return (
    <div className="notice-ok mt-2" role="status">
      <p className="font-semibold">The old link had been withdrawn, so a new one went out with the e-mail.</p>
      <p className="mt-1 text-caption">It is shown only now.</p>
      <div className="mt-2 flex gap-2">
        <label htmlFor={id} className="sr-only">The new viewing link</label>
        <input id={id} className="field min-w-0 flex-1 font-mono text-caption" readOnly value={link} onFocus={(e) => e.currentTarget.select()} />
        <button type="button" className="btn-quiet" onClick={async () => {
          try {
            await navigator.clipboard.writeText(link);
            setCopied(true);
          } catch {
            setCopied(false);
          }
        }}>{copied ? 'Copied' : 'Copy'}</button>
      </div>
    </div>
  );
}
