import { useEffect, useId, useMemo, useRef, useState, type ReactNode } from 'react';
import { QueryClient, QueryClientProvider, keepPreviousData, useQuery } from '@tanstack/react-query';
import { createColumnHelper, flexRender, getCoreRowModel, useReactTable, type SortingState } from '@tanstack/react-table';
import {
  DESK_DEFAULTS,
  DESK_PAGE_SIZES,
  deskQueryFromSearch,
  deskQueryLenient,
  deskQueryToSearch,
  type DeskShootRow,
  type DeskShootsPage,
  type DeskShootsQuery,
  type DeskSort,
  type DeskStageFilter,
} from '../../lib/schemas/studio';
import { STAGES, STAGE_LABEL } from '../../lib/schemas/shoot';
import { formatMoney } from '../../lib/currency';
import { STAGE_TONE, daysUntil, formatDay, formatInstantDay, plural } from './format';

type Props = {
  /** The first page, rendered on the server from the same URL. */
  initial: DeskShootsPage;
  canCreate: boolean;
};

const SORT_LABEL: Record<DeskSort, string> = {
  client: 'Client',
  date: 'Date',
  title: 'Title',
  stage: 'Stage',
  frames: 'Frames',
  picks: 'Picks',
  extras: 'Extras paid',
  expiry: 'Proof expiry',
};

/** Numbers and dates read best newest or largest first; names alphabetically. */
const FIRST_DIR: Record<DeskSort, 'asc' | 'desc'> = {
  client: 'asc', title: 'asc', stage: 'asc', expiry: 'asc', date: 'desc', frames: 'desc', picks: 'desc', extras: 'desc',
};

const STAGE_FILTER_LABEL: Record<DeskStageFilter, string> = {
  active: 'All but archived',
  all: 'All stages',
  ...STAGE_LABEL,
};

async function fetchShoots(search: string): Promise<DeskShootsPage> {
  const res = await fetch(`/api/desk/shoots${search}`, { headers: { accept: 'application/json' } });
  const body = (await res.json().catch(() => null)) as (DeskShootsPage & { error?: string }) | null;
  if (!res.ok || !body) throw new Error(body?.error ?? `The shoots did not load (HTTP ${res.status}).`);
  return body;
}

export default function ShootsTable(props: Props) {
  const [client] = useState(() => {
    const qc = new QueryClient({ defaultOptions: { queries: { staleTime: 30_000, retry: 1, refetchOnWindowFocus: false } } });
    qc.setQueryData(['desk-shoots', deskQueryToSearch(props.initial.query)], props.initial);
    return qc;
  });
  return (
    <QueryClientProvider client={client}>
      <Table {...props} />
    </QueryClientProvider>
  );
}

function Table({ initial, canCreate }: Props) {
  const ids = useId();
  const [query, setQuery] = useState<DeskShootsQuery>(initial.query);
  const [searchText, setSearchText] = useState(initial.query.q);
  const search = deskQueryToSearch(query);
  const { data, isFetching, isError, error, refetch } = useQuery({
    queryKey: ['desk-shoots', search],
    queryFn: () => fetchShoots(search),
    placeholderData: keepPreviousData,
  });
  const page = data ?? initial;
  const queryRef = useRef(query);
  queryRef.current = query;
  const showMoney = page.showMoney;

  /** Every change of state is a new history entry, so back and forward walk through them. */
  function go(change: Partial<DeskShootsQuery>) {
    const next = { ...queryRef.current, ...change };
    if (!('page' in change)) next.page = 1;
    queryRef.current = next;
    setQuery(next);
    window.history.pushState(null, '', `${window.location.pathname}${deskQueryToSearch(next)}${window.location.hash}`);
  }

  useEffect(() => {
    const onPop = () => {
      const q = deskQueryLenient(deskQueryFromSearch(window.location.search));
      setQuery(q);
      setSearchText(q.q);
    };
    window.addEventListener('popstate', onPop);
    return () => window.removeEventListener('popstate', onPop);
  }, []);

  // Search as the owner types, once they pause.
  useEffect(() => {
    const t = window.setTimeout(() => {
      if (searchText.trim() !== queryRef.current.q) go({ q: searchText.trim() });
    }, 350);
    return () => window.clearTimeout(t);
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [searchText]);

  // The server keeps the page inside the results; the address follows without a new entry.
  useEffect(() => {
    if (data && data.page !== query.page && !isFetching) {
      const fixed = { ...query, page: data.page };
      setQuery(fixed);
      window.history.replaceState(null, '', `${window.location.pathname}${deskQueryToSearch(fixed)}`);
    }
  }, [data, isFetching, query]);

  const columns = useMemo(() => {
    const h = createColumnHelper<DeskShootRow>();
    const cols = [
      h.accessor('clientName', { id: 'client', header: SORT_LABEL.client, cell: (c) => <span className="whitespace-nowrap font-semibold text-ink">{c.getValue()}</span> }),
      h.accessor('shotOn', { id: 'date', header: SORT_LABEL.date, cell: (c) => <span className="whitespace-nowrap">{formatDay(c.getValue())}</span> }),
      h.accessor('title', {
        id: 'title',
        header: SORT_LABEL.title,
        cell: (c) => (
          <a href={`/desk/shoots/${c.row.original.id}`} className="font-semibold text-clay-dark hover:underline" data-row-link>
            {c.getValue()}
          </a>
        ),
      }),
      h.accessor('stage', { id: 'stage', header: SORT_LABEL.stage, cell: (c) => <StageChip stage={c.getValue()} /> }),
      h.accessor('frames', { id: 'frames', header: SORT_LABEL.frames, meta: { numeric: true }, cell: (c) => c.getValue() }),
      h.accessor('picks', {
        id: 'picks',
        header: 'Picks / allowance',
        meta: { numeric: true },
        cell: (c) => <PicksText picks={c.getValue()} allowance={c.row.original.allowance} />,
      }),
      ...(showMoney
        ? [h.accessor('extrasPaidMinor', { id: 'extras', header: SORT_LABEL.extras, meta: { numeric: true }, cell: (c) => <MoneyText row={c.row.original} /> })]
        : []),
      h.accessor('proofExpiresAt', { id: 'expiry', header: SORT_LABEL.expiry, cell: (c) => <ExpiryText row={c.row.original} /> }),
    ];
    return cols;
  }, [showMoney]);

  const sorting: SortingState = [{ id: query.sort, desc: query.dir === 'desc' }];
  const table = useReactTable({
    data: page.rows,
    columns,
    state: { sorting },
    manualSorting: true,
    manualPagination: true,
    pageCount: page.pageCount,
    enableSortingRemoval: false,
    getCoreRowModel: getCoreRowModel(),
    getRowId: (r) => r.id,
  });

  function sortBy(sort: DeskSort) {
    const dir = query.sort === sort ? (query.dir === 'asc' ? 'desc' : 'asc') : FIRST_DIR[sort];
    go({ sort, dir });
  }

  const isFiltered = query.q !== '' || query.stage !== DESK_DEFAULTS.stage;
  const first = page.total === 0 ? 0 : (page.page - 1) * page.pageSize + 1;
  const last = Math.min(page.total, page.page * page.pageSize);
  const sortOptions = (Object.keys(SORT_LABEL) as DeskSort[]).filter((s) => s !== 'extras' || showMoney);

  if (!page.studioHasShoots && !isFiltered) {
    return (
      <section className="card flex flex-col items-center gap-3 px-6 py-14 text-center">
        <svg width="56" height="56" viewBox="0 0 32 32" aria-hidden="true">
          <rect x="5" y="9" width="15" height="18" rx="2" fill="none" stroke="#6b777d" strokeWidth="1.5" strokeDasharray="3 2" />
          <rect x="11" y="5" width="15" height="18" rx="2" fill="#e9c9b9" />
        </svg>
        <h2 className="text-title">No shoots yet</h2>
        <p className="max-w-md text-ink-soft">
          A shoot holds one sitting: the client, the package terms and the frames. Create one, drop in the frames, then send your client the viewing link.
        </p>
        {canCreate ? (
          <a href="/desk/shoots/new" className="btn-accent mt-2">Create your first shoot</a>
        ) : (
          <p className="text-ink-soft">Your studio owner creates shoots; they will appear here.</p>
        )}
      </section>
    );
  }

  return (
    <div className="flex flex-col gap-4">
      <form
        role="search"
        className="flex flex-wrap items-end gap-3"
        onSubmit={(e) => {
          e.preventDefault();
          if (searchText.trim() !== query.q) go({ q: searchText.trim() });
        }}
      >
        <div className="min-w-0 flex-1 basis-full sm:basis-56">
          <label className="label" htmlFor={`${ids}-q`}>Search</label>
          <div className="relative">
            <svg className="pointer-events-none absolute left-3 top-1/2 -translate-y-1/2 text-ink-faint" width="16" height="16" viewBox="0 0 16 16" aria-hidden="true">
              <circle cx="7" cy="7" r="4.5" fill="none" stroke="currentColor" strokeWidth="1.6" />
              <path d="M10.5 10.5 14 14" stroke="currentColor" strokeWidth="1.6" strokeLinecap="round" />
            </svg>
            <input
              id={`${ids}-q`}
              type="search"
              className="field !pl-9"
              placeholder="Client name or shoot title"
              value={searchText}
              maxLength={120}
              onChange={(e) => setSearchText(e.target.value)}
            />
          </div>
        </div>
        <div className="min-w-0 flex-1 basis-36 sm:flex-none sm:basis-44">
          <label className="label" htmlFor={`${ids}-stage`}>Stage</label>
          <select id={`${ids}-stage`} className="field" value={query.stage} onChange={(e) => go({ stage: e.target.value as DeskStageFilter })}>
            {(['active', 'all', ...STAGES] as DeskStageFilter[]).map((s) => (
              <option key={s} value={s}>{STAGE_FILTER_LABEL[s]}</option>
            ))}
          </select>
        </div>
        {/* Column headers sort on wide screens; on a phone the cards need their own control. */}
        <div className="flex min-w-0 flex-1 basis-36 items-end gap-1.5 sm:hidden">
          <div className="min-w-0 flex-1">
            <label className="label" htmlFor={`${ids}-sort`}>Sort by</label>
            <select id={`${ids}-sort`} className="field" value={query.sort} onChange={(e) => go({ sort: e.target.value as DeskSort, dir: FIRST_DIR[e.target.value as DeskSort] })}>
              {sortOptions.map((s) => <option key={s} value={s}>{SORT_LABEL[s]}</option>)}
            </select>
          </div>
          <button
            type="button"
            className="btn-quiet !px-3"
            onClick={() => go({ dir: query.dir === 'asc' ? 'desc' : 'asc' })}
            aria-label={`Order: ${query.dir === 'asc' ? 'ascending' : 'descending'}. Switch`}
            title={query.dir === 'asc' ? 'Ascending' : 'Descending'}
          >
            <SortArrow dir={query.dir} large />
          </button>
        </div>
        {isFiltered ? (
          <button type="button" className="btn-quiet" onClick={() => { setSearchText(''); go({ q: '', stage: DESK_DEFAULTS.stage }); }}>
            Clear
          </button>
        ) : null}
      </form>

      <div className="flex flex-wrap items-center justify-between gap-2 text-caption text-ink-soft" aria-live="polite">
        <p>
          {page.total === 0
            ? 'No shoots match'
            : page.total <= page.pageSize
              ? plural(page.total, 'shoot')
              : `Shoots ${first}–${last} of ${page.total}`}
          {query.q ? <> {page.total === 0 ? '' : 'matching '}“{query.q}”</> : null}
          {query.stage !== 'active' ? <> · {STAGE_FILTER_LABEL[query.stage]}</> : null}
        </p>
        <p className={isFetching ? 'opacity-100' : 'opacity-0'} aria-hidden={!isFetching}>Updating…</p>
      </div>

      {isError ? (
        <div className="notice-error flex flex-wrap items-center justify-between gap-3" role="alert">
          <span>{(error as Error).message}</span>
          <button type="button" className="btn-quiet" onClick={() => void refetch()}>Try again</button>
        </div>
      ) : null}

      {page.total === 0 ? (
        <section className="card flex flex-col items-center gap-2 px-6 py-10 text-center" data-testid="no-matches">
          <h2 className="text-lead">No shoots match</h2>
          <p className="max-w-md text-ink-soft">
            {query.stage === 'active' && !query.q
              ? 'Every shoot of the studio is archived. Choose “All stages” to see them.'
              : 'Nothing fits this search and stage. Try fewer letters, or another stage.'}
          </p>
          <button type="button" className="btn-quiet mt-2" onClick={() => { setSearchText(''); go({ q: '', stage: 'all' }); }}>
            Show every shoot
          </button>
        </section>
      ) : (
        <>
          {/* Wide screens: a table sorted from its headers. */}
          <div className={`card hidden overflow-x-auto sm:block ${isFetching ? 'opacity-70' : ''} transition-opacity`}>
            <table className="w-full min-w-[760px] border-collapse text-left">
              <caption className="sr-only">
                Shoots of the studio, sorted by {SORT_LABEL[query.sort].toLowerCase()} {query.dir === 'asc' ? 'ascending' : 'descending'}
              </caption>
              <thead>
                {table.getHeaderGroups().map((hg) => (
                  <tr key={hg.id} className="border-b border-paper-edge bg-paper-deep">
                    {hg.headers.map((header, i) => {
                      const id = header.column.id as DeskSort;
                      const isSorted = query.sort === id;
                      const numeric = (header.column.columnDef.meta as { numeric?: boolean } | undefined)?.numeric;
                      return (
                        <th
                          key={header.id}
                          scope="col"
                          aria-sort={isSorted ? (query.dir === 'asc' ? 'ascending' : 'descending') : undefined}
                          className={`whitespace-nowrap px-3 py-2 text-caption font-semibold uppercase tracking-wide text-ink-soft ${numeric ? 'text-right' : ''} ${i === 0 ? 'sticky left-0 z-10 bg-paper-deep' : ''}`}
                        >
                          <button
                            type="button"
                            onClick={() => sortBy(id)}
                            className={`inline-flex min-h-[36px] items-center gap-1 rounded px-1 uppercase tracking-wide hover:text-ink ${isSorted ? 'text-ink' : ''}`}
                          >
                            {flexRender(header.column.columnDef.header, header.getContext())}
                            <SortArrow dir={isSorted ? query.dir : null} />
                          </button>
                        </th>
                      );
                    })}
                  </tr>
                ))}
              </thead>
              <tbody>
                {table.getRowModel().rows.map((row) => (
                  <tr
                    key={row.id}
                    className="group cursor-pointer border-b border-paper-edge last:border-b-0 hover:bg-paper/70"
                    onClick={(e) => {
                      if ((e.target as HTMLElement).closest('a,button')) return;
                      window.location.assign(`/desk/shoots/${row.original.id}`);
                    }}
                  >
                    {row.getVisibleCells().map((cell, i) => {
                      const numeric = (cell.column.columnDef.meta as { numeric?: boolean } | undefined)?.numeric;
                      return (
                        <td
                          key={cell.id}
                          className={`px-4 py-3 align-middle ${numeric ? 'text-right tabular-nums' : ''} ${i === 0 ? 'sticky left-0 bg-white group-hover:bg-paper' : ''}`}
                        >
                          {flexRender(cell.column.columnDef.cell, cell.getContext())}
                        </td>
                      );
                    })}
                  </tr>
                ))}
              </tbody>
            </table>
          </div>

          {/* Phones: one card per shoot, the whole card a link. */}
          <ul className={`flex flex-col gap-3 sm:hidden ${isFetching ? 'opacity-70' : ''}`} aria-label="Shoots">
            {page.rows.map((r) => (
              <li key={r.id}>
                <a href={`/desk/shoots/${r.id}`} className="card block p-4 text-ink no-underline active:bg-paper">
                  <span className="flex items-start justify-between gap-3">
                    <span className="min-w-0">
                      <span className="block truncate font-semibold" data-testid="card-client">{r.clientName}</span>
                      <span className="block truncate text-clay-dark">{r.title}</span>
                    </span>
                    <StageChip stage={r.stage} />
                  </span>
                  <span className="mt-3 grid grid-cols-3 gap-x-3 gap-y-2 border-t border-paper-edge pt-3 text-caption text-ink-soft">
                    <Fact label="Date">{formatDay(r.shotOn)}</Fact>
                    <Fact label="Frames">{r.frames}</Fact>
                    <Fact label="Picks">
                      <PicksText picks={r.picks} allowance={r.allowance} />
                    </Fact>
                    {showMoney ? <Fact label="Extras paid"><MoneyText row={r} /></Fact> : null}
                    <span className={showMoney ? 'col-span-2' : 'col-span-3'}>
                      <Fact label="Proof expiry"><ExpiryText row={r} /></Fact>
                    </span>
                  </span>
                </a>
              </li>
            ))}
          </ul>

          {page.total > DESK_PAGE_SIZES[0] ? (
            <nav aria-label="Pages" className="flex flex-wrap items-center justify-between gap-3">
              <div className="flex items-center gap-2 text-caption text-ink-soft">
                <label htmlFor={`${ids}-size`}>Rows per page</label>
                <select id={`${ids}-size`} className="field !w-auto !py-1.5" value={query.pageSize} onChange={(e) => go({ pageSize: Number(e.target.value) })}>
                  {DESK_PAGE_SIZES.map((n) => <option key={n} value={n}>{n}</option>)}
                </select>
              </div>
              <div className={`flex items-center gap-2 ${page.pageCount > 1 ? '' : 'hidden'}`}>
                <button type="button" className="btn-quiet" disabled={page.page <= 1} onClick={() => go({ page: page.page - 1 })}>
                  <span aria-hidden="true">←</span> Previous
                </button>
                <span className="px-1 text-caption text-ink-soft tabular-nums">Page {page.page} of {page.pageCount}</span>
                <button type="button" className="btn-quiet" disabled={page.page >= page.pageCount} onClick={() => go({ page: page.page + 1 })}>
                  Next <span aria-hidden="true">→</span>
                </button>
              </div>
            </nav>
          ) : null}
        </>
      )}
    </div>
  );
}

function Fact({ label, children }: { label: string; children: ReactNode }) {
  return (
    <span className="flex min-w-0 flex-col">
      <span className="uppercase tracking-wide text-ink-faint">{label}</span>
      <span className="text-body text-ink">{children}</span>
    </span>
  );
}

function StageChip({ stage }: { stage: DeskShootRow['stage'] }) {
  return (
    <span className={`stage-chip whitespace-nowrap ${STAGE_TONE[stage]}`} data-stage={stage}>
      {STAGE_LABEL[stage]}
    </span>
  );
}

function PicksText({ picks, allowance }: { picks: number; allowance: number }) {
  const extra = picks - allowance;
  return (
    <span className="whitespace-nowrap tabular-nums">
      {picks} / {allowance}
      {extra > 0 ? <span className="ml-1.5 rounded bg-amber-light px-1 text-caption font-semibold text-amber">+{extra}</span> : null}
    </span>
  );
}

function MoneyText({ row }: { row: DeskShootRow }) {
  if (row.extrasPaidMinor === undefined || !row.currency) return null;
  const text = formatMoney(row.extrasPaidMinor, row.currency);
  return <span className={`whitespace-nowrap tabular-nums ${row.extrasPaidMinor === 0 ? 'text-ink-faint' : 'font-semibold'}`}>{text}</span>;
}

function ExpiryText({ row }: { row: DeskShootRow }) {
  const days = daysUntil(row.proofExpiresAt);
  const isOpenForPicks = row.stage === 'draft' || row.stage === 'proofing';
  let hint: ReactNode = null;
  if (isOpenForPicks && days < 0) hint = <span className="ml-1.5 text-caption font-semibold text-ember">closed</span>;
  else if (isOpenForPicks && days <= 7) hint = <span className="ml-1.5 text-caption font-semibold text-amber">{days <= 0 ? 'today' : `in ${plural(days, 'day')}`}</span>;
  return (
    <span className="whitespace-nowrap">
      {formatInstantDay(row.proofExpiresAt)}
      {hint}
    </span>
  );
}

function SortArrow({ dir, large }: { dir: 'asc' | 'desc' | null; large?: boolean }) {
  return (
    <svg width={large ? 15 : 10} height={large ? 18 : 12} viewBox="0 0 10 12" aria-hidden="true" className={dir ? 'text-clay' : 'text-ink-faint/60'}>
      <path d="M5 1 8.5 5h-7z" fill="currentColor" opacity={dir === 'desc' ? 0.25 : 1} />
      <path d="M5 11 1.5 7h7z" fill="currentColor" opacity={dir === 'asc' ? 0.25 : 1} />
    </svg>
  );
}
