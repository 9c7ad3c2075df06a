import type { DownloadLogEntry } from './types';

const when = (iso: string) => new Date(iso).toLocaleString('en-GB', { day: 'numeric', month: 'short', year: 'numeric', hour: '2-digit', minute: '2-digit', timeZone: 'UTC' }) + ' UTC';

/** Who downloaded what and when, newest first: for the owner's records and the client's questions. */
export default function DownloadsLog({ entries }: { entries: DownloadLogEntry[] }) {
  return (
    <section aria-labelledby="downloads-heading" className="card p-4 sm:p-5" data-testid="downloads-log">
      <h2 id="downloads-heading" className="text-title">Downloads</h2>
      {entries.length === 0 ? (
        <p className="mt-1 text-ink-soft">Nothing downloaded yet. Each download of a final, a crop, a ZIP or an original is listed here.</p>
      ) : (
        <ol className="mt-3 divide-y divide-paper-edge">
          {entries.map((e) => (
            <li key={e.id} className="grid gap-x-4 gap-y-0.5 py-2 sm:grid-cols-[11rem_minmax(0,1fr)]" data-testid="download-entry">
              <span className="text-caption text-ink-faint">{when(e.at)}</span>
              <span className="min-w-0">
                <span className="font-semibold">{e.who}</span>
                <span className="text-ink-faint">{e.whoKind === 'client' ? ' (client)' : ' (studio)'}</span> · {e.what}
                <span className="block truncate text-caption text-ink-faint" title={e.userAgent ?? undefined}>
                  {e.ip ?? 'address unknown'}{e.userAgent ? ` · ${e.userAgent}` : ''}
                </span>
              </span>
            </li>
          ))}
        </ol>
      )}
    </section>
  );
}
