import { useEffect, useId, useMemo, useRef, useState, type KeyboardEvent, type PointerEvent, type ReactNode } from 'react';
import {
  MAX_ROOM_M,
  MAX_SOURCES,
  MAX_TEXT,
  MAX_NOTES,
  POWER_DENOMINATORS,
  SOURCE_KINDS,
  SOURCE_KIND_NAMES,
  cameraEv100,
  distanceForStops,
  formatFocalLength,
  formatIso,
  formatPower,
  formatRatio,
  formatStops,
  keyToFillFromNotes,
  lightNotesSchema,
  nearestPowerSetting,
  powerForStops,
  sourceStopsRelativeToKey,
  type CameraSettings,
  type LightNotes,
  type LightSource,
  type SourceKind,
  type SourceReading,
} from '../../lib/light';
import { formatAperture, formatShutter } from '../../lib/exposure';

type Props = {
  shootId: string;
  initial: LightNotes | null;
  cameraFromExif: CameraSettings | null;
  canEdit: boolean;
};

type SaveState = { kind: 'idle' } | { kind: 'dirty' } | { kind: 'saving' } | { kind: 'saved' } | { kind: 'error'; message: string };

/** SVG units per metre: the plan is drawn to scale in these. */
const UNITS_PER_M = 100;
const KEY_STEP_M = 0.1;
const KEY_STEP_LARGE_M = 0.5;
const DRAG_SNAP_M = 0.05;

export const SIMPLIFICATION =
  'These figures treat each light as a point source with the same modifier efficiency, count a board, reflector or window as a source at its own spot, and add power only between two flashes.';

export const SAFETY_CAUTION =
  'Weigh down every stand that holds a light or a board with sandbags, and run mains-powered lights as your local electrical codes require.';

const KIND_COLOUR: Record<SourceKind, string> = {
  flash: 'fill-clay stroke-clay-dark',
  bounce_board: 'fill-amber-light stroke-amber',
  reflector: 'fill-none stroke-moss',
  window: 'fill-paper stroke-ink-soft',
};

function startingNotes(initial: LightNotes | null, cameraFromExif: CameraSettings | null): LightNotes {
  if (initial) return { ...initial, camera: initial.camera ?? cameraFromExif ?? undefined };
  return {
    room: { widthM: 3, depthM: 4 },
    subject: { x: 1.5, y: 1.5 },
    sources: [],
    camera: cameraFromExif ?? undefined,
  };
}

const clamp = (v: number, lo: number, hi: number) => Math.min(hi, Math.max(lo, v));
const roundTo = (v: number, step: number) => Math.round(v / step) * step;
/** Keeps positions free of float noise such as 1.2000000000000002. */
const tidy = (v: number) => Math.round(v * 1000) / 1000;
const metresText = (m: number) => `${m.toFixed(2)} m`;

function newSourceId(sources: readonly LightSource[]): string {
  const taken = new Set(sources.map((s) => s.id));
  let n = sources.length + 1;
  while (taken.has(`s${n}`)) n++;
  return `s${n}`;
}

function parseShutter(text: string): number | undefined {
  const t = text.trim().replace(/\s*s$/i, '');
  if (t === '') return undefined;
  const fraction = /^(\d+(?:\.\d+)?)\s*\/\s*(\d+(?:\.\d+)?)$/.exec(t);
  const value = fraction ? Number(fraction[1]) / Number(fraction[2]) : Number(t);
  return Number.isFinite(value) && value > 0 ? value : undefined;
}

function shutterText(s: number | undefined): string {
  return s === undefined || !(s > 0) ? '' : formatShutter(s).replace(/ s$/, '');
}

export default function LightNotesEditor({ shootId, initial, cameraFromExif, canEdit }: Props) {
  const [notes, setNotes] = useState<LightNotes>(() => startingNotes(initial, cameraFromExif));
  const [selectedId, setSelectedId] = useState<string | null>(null);
  const [focusedId, setFocusedId] = useState<string | null>(null);
  const [announcement, setAnnouncement] = useState('');
  const [save, setSave] = useState<SaveState>({ kind: 'idle' });
  const svgRef = useRef<SVGSVGElement>(null);
  const dragRef = useRef<{ target: string; pointerId: number } | null>(null);
  const ids = useId();
  const cameraIsFromExif = !initial?.camera && cameraFromExif !== null;

  const readings = useMemo(() => sourceStopsRelativeToKey(notes), [notes]);
  const keyToFill = useMemo(() => keyToFillFromNotes(notes), [notes]);
  const byId = useMemo(() => new Map(readings.map((r) => [r.id, r])), [readings]);

  function update(change: (n: LightNotes) => LightNotes) {
    setNotes((n) => change(n));
    setSave((s) => (s.kind === 'saving' ? s : { kind: 'dirty' }));
  }

  function updateSource(id: string, change: Partial<LightSource>) {
    update((n) => ({ ...n, sources: n.sources.map((s) => (s.id === id ? withKindRules({ ...s, ...change }) : s)) }));
  }

  function moveTo(target: string, x: number, y: number) {
    update((n) => {
      const px = tidy(clamp(x, 0, n.room.widthM));
      const py = tidy(clamp(y, 0, n.room.depthM));
      if (target === 'subject') return { ...n, subject: { x: px, y: py } };
      return { ...n, sources: n.sources.map((s) => (s.id === target ? { ...s, x: px, y: py } : s)) };
    });
  }

  function setRoom(widthM: number, depthM: number) {
    update((n) => ({
      ...n,
      room: { widthM, depthM },
      subject: { x: Math.min(n.subject.x, widthM), y: Math.min(n.subject.y, depthM) },
      sources: n.sources.map((s) => ({ ...s, x: Math.min(s.x, widthM), y: Math.min(s.y, depthM) })),
    }));
  }

  function addSource(kind: SourceKind) {
    if (notes.sources.length >= MAX_SOURCES) return;
    // Fan new sources around the subject, a metre out, so they do not land on each other.
    const angle = ((135 + notes.sources.length * 55) * Math.PI) / 180;
    const source: LightSource = withKindRules({
      id: newSourceId(notes.sources),
      kind,
      label: `${SOURCE_KIND_NAMES[kind]} ${notes.sources.filter((s) => s.kind === kind).length + 1}`,
      x: tidy(clamp(notes.subject.x + Math.cos(angle), 0, notes.room.widthM)),
      y: tidy(clamp(notes.subject.y + Math.sin(angle), 0, notes.room.depthM)),
      aimsAt: 'subject',
    });
    update((n) => ({ ...n, sources: [...n.sources, source], keyId: n.keyId ?? source.id }));
    setSelectedId(source.id);
  }

  function removeSource(id: string) {
    update((n) => ({
      ...n,
      sources: n.sources.filter((s) => s.id !== id),
      keyId: n.keyId === id ? undefined : n.keyId,
      fillId: n.fillId === id ? undefined : n.fillId,
    }));
    if (selectedId === id) setSelectedId(null);
  }

  function setCamera(change: Partial<CameraSettings>) {
    update((n) => {
      const camera: CameraSettings = { ...n.camera, ...change };
      for (const k of Object.keys(camera) as (keyof CameraSettings)[]) if (camera[k] === undefined) delete camera[k];
      return { ...n, camera: Object.keys(camera).length > 0 ? camera : undefined };
    });
  }

  // --- plan interaction -------------------------------------------------------------------

  function planPoint(e: PointerEvent<SVGGElement>): { x: number; y: number } | null {
    const svg = svgRef.current;
    const ctm = svg?.getScreenCTM();
    if (!svg || !ctm) return null;
    const p = new DOMPoint(e.clientX, e.clientY).matrixTransform(ctm.inverse());
    return { x: roundTo(p.x / UNITS_PER_M, DRAG_SNAP_M), y: roundTo(p.y / UNITS_PER_M, DRAG_SNAP_M) };
  }

  const dragHandlers = (target: string) =>
    canEdit
      ? {
          onPointerDown: (e: PointerEvent<SVGGElement>) => {
            if (e.button !== 0) return;
            e.currentTarget.setPointerCapture(e.pointerId);
            e.currentTarget.focus();
            dragRef.current = { target, pointerId: e.pointerId };
            if (target !== 'subject') setSelectedId(target);
          },
          onPointerMove: (e: PointerEvent<SVGGElement>) => {
            if (dragRef.current?.pointerId !== e.pointerId) return;
            const p = planPoint(e);
            if (p) moveTo(target, p.x, p.y);
          },
          onPointerUp: (e: PointerEvent<SVGGElement>) => {
            if (dragRef.current?.pointerId === e.pointerId) dragRef.current = null;
          },
          onPointerCancel: () => {
            dragRef.current = null;
          },
        }
      : {};

  function onGlyphKey(target: string, name: string) {
    return (e: KeyboardEvent<SVGGElement>) => {
      if (e.key === 'Enter' || e.key === ' ') {
        e.preventDefault();
        if (target !== 'subject') setSelectedId(target);
        return;
      }
      if (!canEdit) return;
      const step = e.shiftKey ? KEY_STEP_LARGE_M : KEY_STEP_M;
      const delta: Record<string, [number, number]> = {
        ArrowLeft: [-step, 0],
        ArrowRight: [step, 0],
        ArrowUp: [0, -step],
        ArrowDown: [0, step],
      };
      const d = delta[e.key];
      if (!d) return;
      e.preventDefault();
      const at = target === 'subject' ? notes.subject : notes.sources.find((s) => s.id === target);
      if (!at) return;
      const x = tidy(clamp(at.x + d[0], 0, notes.room.widthM));
      const y = tidy(clamp(at.y + d[1], 0, notes.room.depthM));
      moveTo(target, x, y);
      setAnnouncement(`${name} at ${x.toFixed(1)} m across, ${y.toFixed(1)} m deep`);
    };
  }

  // --- save ---------------------------------------------------------------------------------

  async function onSave() {
    const parsed = lightNotesSchema.safeParse(notes);
    if (!parsed.success) {
      const issue = parsed.error.issues[0];
      setSave({ kind: 'error', message: issue ? issue.message : 'Some fields need a look.' });
      return;
    }
    setSave({ kind: 'saving' });
    try {
      const res = await fetch(`/api/shoots/${encodeURIComponent(shootId)}/light-notes`, {
        method: 'PUT',
        headers: { 'content-type': 'application/json' },
        body: JSON.stringify(parsed.data),
      });
      if (res.ok) {
        setSave({ kind: 'saved' });
        return;
      }
      let message = `Saving failed (HTTP ${res.status}).`;
      try {
        const body: unknown = await res.json();
        if (body && typeof body === 'object') {
          const b = body as { error?: unknown; message?: unknown };
          if (typeof b.error === 'string') message = b.error;
          else if (typeof b.message === 'string') message = b.message;
        }
      } catch {
        // A body that is not JSON keeps the status message.
      }
      setSave({ kind: 'error', message });
    } catch {
      setSave({ kind: 'error', message: 'Could not reach Fillcard. Check the connection and try again.' });
    }
  }

  // --- drawing ------------------------------------------------------------------------------

  const { widthM, depthM } = notes.room;
  const w = widthM * UNITS_PER_M;
  const h = depthM * UNITS_PER_M;
  // Glyphs and text keep one size relative to the drawing, whatever the room's size.
  const k = Math.max(widthM, depthM, 2) / 4;
  const pad = 34 * k;
  const gridEvery = Math.max(widthM, depthM) > 20 ? 5 : 1;
  const ev = cameraEv100(notes.camera);
  const keySource = notes.sources.find((s) => s.id === notes.keyId);
  const titleId = `${ids}-plan-title`;
  const descId = `${ids}-plan-desc`;

  const planDescription = [
    `Top-down plan of a room ${widthM} m wide and ${depthM} m deep, drawn to scale with a grid line every ${gridEvery === 1 ? 'metre' : `${gridEvery} metres`}.`,
    `Subject at ${notes.subject.x.toFixed(1)} m across, ${notes.subject.y.toFixed(1)} m deep.`,
    notes.sources.length === 0 ? 'No sources yet.' : `${notes.sources.length} source${notes.sources.length === 1 ? '' : 's'}.`,
    canEdit ? 'Focus a source and use the arrow keys to move it 0.1 m, with Shift 0.5 m; or drag it.' : '',
  ]
    .filter(Boolean)
    .join(' ');

  return (
    <div className="grid gap-6 font-sans text-body text-ink lg:grid-cols-[minmax(0,1fr)_26rem] lg:items-start">
      {/* Plan and readings */}
      <div className="flex min-w-0 flex-col gap-4 lg:sticky lg:top-4">
        <figure className="card p-3">
          <svg
            ref={svgRef}
            viewBox={`${-pad} ${-pad} ${w + 2 * pad} ${h + 2 * pad}`}
            className="block h-auto max-h-[70vh] w-full touch-none select-none"
            aria-labelledby={`${titleId} ${descId}`}
            role="group"
          >
            <title id={titleId}>Lighting plan</title>
            <desc id={descId}>{planDescription}</desc>

            <rect x={0} y={0} width={w} height={h} className="fill-paper stroke-ink-soft" strokeWidth={2 * k} />
            <g aria-hidden="true">
              {Array.from({ length: Math.floor(widthM / gridEvery) + 1 }, (_, i) => i * gridEvery).map((m) => (
                <g key={`x${m}`}>
                  <line x1={m * UNITS_PER_M} y1={0} x2={m * UNITS_PER_M} y2={h} className="stroke-paper-edge" strokeWidth={k} />
                  <text x={m * UNITS_PER_M} y={-8 * k} textAnchor="middle" className="fill-ink-soft" fontSize={11 * k}>
                    {m}
                  </text>
                </g>
              ))}
              {Array.from({ length: Math.floor(depthM / gridEvery) + 1 }, (_, i) => i * gridEvery).map((m) => (
                <g key={`y${m}`}>
                  <line x1={0} y1={m * UNITS_PER_M} x2={w} y2={m * UNITS_PER_M} className="stroke-paper-edge" strokeWidth={k} />
                  <text x={-8 * k} y={m * UNITS_PER_M + 4 * k} textAnchor="end" className="fill-ink-soft" fontSize={11 * k}>
                    {m}
                  </text>
                </g>
              ))}
              <rect x={0} y={0} width={w} height={h} fill="none" className="stroke-ink-soft" strokeWidth={2 * k} />
              <text x={w} y={h + 22 * k} textAnchor="end" className="fill-ink-soft" fontSize={11 * k}>
                metres
              </text>
              {/* Light paths: from each source to the subject. */}
              {notes.sources.map((s) => (
                <line
                  key={`path-${s.id}`}
                  x1={s.x * UNITS_PER_M}
                  y1={s.y * UNITS_PER_M}
                  x2={notes.subject.x * UNITS_PER_M}
                  y2={notes.subject.y * UNITS_PER_M}
                  className={s.id === notes.keyId ? 'stroke-clay' : 'stroke-ink-soft'}
                  strokeWidth={1.5 * k}
                  strokeDasharray={`${6 * k} ${5 * k}`}
                  opacity={0.6}
                />
              ))}
            </g>

            <g
              transform={`translate(${notes.subject.x * UNITS_PER_M} ${notes.subject.y * UNITS_PER_M})`}
              tabIndex={0}
              role="button"
              aria-label={`Subject, ${notes.subject.x.toFixed(1)} m across, ${notes.subject.y.toFixed(1)} m deep${canEdit ? '. Arrow keys move it.' : ''}`}
              className={`outline-none ${canEdit ? 'cursor-grab' : ''}`}
              onKeyDown={onGlyphKey('subject', 'Subject')}
              onFocus={() => setFocusedId('subject')}
              onBlur={() => setFocusedId(null)}
              {...dragHandlers('subject')}
            >
              <SubjectGlyph k={k} isFocused={focusedId === 'subject'} />
            </g>

            {notes.sources.map((s) => {
              const r = byId.get(s.id);
              const role = s.id === notes.keyId ? 'key' : s.id === (keyToFill?.fillId ?? null) ? 'fill' : null;
              const angle = (Math.atan2(notes.subject.y - s.y, notes.subject.x - s.x) * 180) / Math.PI;
              const name = s.label || SOURCE_KIND_NAMES[s.kind];
              const label = [
                role ? `${role === 'key' ? 'Key' : 'Fill'}: ${SOURCE_KIND_NAMES[s.kind].toLowerCase()}` : SOURCE_KIND_NAMES[s.kind],
                `"${name}"`,
                s.kind === 'flash' && s.power ? `at ${formatPower(s.power)} power` : null,
                r ? `${metresText(r.distanceM)} from the subject` : null,
                r?.stopsRelativeToKey != null && role !== 'key' ? `${formatStops(r.stopsRelativeToKey)} against the key` : null,
              ]
                .filter(Boolean)
                .join(', ');
              return (
                <g
                  key={s.id}
                  transform={`translate(${s.x * UNITS_PER_M} ${s.y * UNITS_PER_M})`}
                  tabIndex={0}
                  role="button"
                  aria-label={`${label}${canEdit ? '. Arrow keys move it.' : ''}`}
                  aria-pressed={selectedId === s.id}
                  className={`outline-none ${canEdit ? 'cursor-grab' : 'cursor-pointer'}`}
                  onKeyDown={onGlyphKey(s.id, name)}
                  onFocus={() => setFocusedId(s.id)}
                  onBlur={() => setFocusedId(null)}
                  onClick={() => setSelectedId(s.id)}
                  {...dragHandlers(s.id)}
                >
                  <SourceGlyph
                    kind={s.kind}
                    angle={angle}
                    k={k}
                    isFocused={focusedId === s.id}
                    isSelected={selectedId === s.id}
                  />
                  {role && (
                    <g transform={`translate(${14 * k} ${-14 * k})`} aria-hidden="true">
                      <circle r={8 * k} className={role === 'key' ? 'fill-clay' : 'fill-moss'} />
                      <text y={3.8 * k} textAnchor="middle" fontSize={10.5 * k} fontWeight={700} className="fill-paper">
                        {role === 'key' ? 'K' : 'F'}
                      </text>
                    </g>
                  )}
                  <text y={30 * k} textAnchor="middle" fontSize={12 * k} className="fill-ink stroke-paper" aria-hidden="true" paintOrder="stroke" strokeWidth={3 * k}>
                    {name}
                  </text>
                </g>
              );
            })}
          </svg>
          <figcaption className="mt-2 flex flex-wrap gap-x-4 gap-y-1 text-caption text-ink-soft">
            <Legend />
          </figcaption>
          <p className="sr-only" aria-live="polite">
            {announcement}
          </p>
        </figure>

        <section aria-labelledby={`${ids}-readings`} className="card p-4">
          <h2 id={`${ids}-readings`} className="font-display text-lead">
            What follows from the plan
          </h2>
          <p className="mt-1 text-caption text-ink-soft">{SIMPLIFICATION}</p>

          <p className="mt-3 text-lead" aria-live="polite" data-testid="key-to-fill">
            {keyToFill ? (
              <>
                <span className="font-semibold">Key to fill: </span>
                {keyToFill.stops >= 0 ? `${Math.abs(keyToFill.stops).toFixed(2)} stops` : `${formatStops(keyToFill.stops)}`}
                {' · '}
                {formatRatio(keyToFill.ratio)}
                {keyToFill.stops < 0 ? ' (the fill is brighter than the key)' : ''}
                {!keyToFill.isFillChosen ? (
                  <span className="block text-caption text-ink-soft">
                    Fill taken as the brightest other source; choose one in the form to change it.
                  </span>
                ) : null}
              </>
            ) : (
              <span className="text-body text-ink-soft">
                Key to fill appears once there is a key and at least one other source away from the subject.
              </span>
            )}
          </p>

          {notes.sources.length > 0 && (
            <div className="mt-3 overflow-x-auto">
              <table className="w-full text-left text-body">
                <caption className="sr-only">Each source at the subject</caption>
                <thead className="text-caption text-ink-soft">
                  <tr>
                    <th scope="col" className="py-1 pr-3 font-semibold">Source</th>
                    <th scope="col" className="py-1 pr-3 font-semibold">To the subject</th>
                    <th scope="col" className="py-1 font-semibold">Against the key</th>
                  </tr>
                </thead>
                <tbody>
                  {notes.sources.map((s) => {
                    const r = byId.get(s.id);
                    return (
                      <tr key={s.id} className={`border-t border-paper-edge ${selectedId === s.id ? 'bg-clay-light/40' : ''}`}>
                        <th scope="row" className="py-1 pr-3 font-normal">
                          {s.label || SOURCE_KIND_NAMES[s.kind]}
                          <span className="text-ink-soft">
                            {' '}
                            · {SOURCE_KIND_NAMES[s.kind].toLowerCase()}
                            {s.kind === 'flash' && s.power ? ` ${formatPower(s.power)}` : ''}
                          </span>
                        </th>
                        <td className="py-1 pr-3 tabular-nums">{r ? metresText(r.distanceM) : '—'}</td>
                        <td className="py-1 tabular-nums">
                          {s.id === notes.keyId ? 'key' : r?.stopsRelativeToKey != null ? formatStops(r.stopsRelativeToKey) : '—'}
                        </td>
                      </tr>
                    );
                  })}
                </tbody>
              </table>
            </div>
          )}

          <StopsHelper notes={notes} readingsById={byId} selectedId={selectedId} idPrefix={ids} />

          {keySource === undefined && notes.sources.length > 0 && (
            <p className="mt-3 text-caption text-ink-soft">Choose a key to compare the sources with it.</p>
          )}
        </section>

        <aside role="note" className="notice-caution text-body">
          <p>
            <span className="font-semibold">Safety: </span>
            {SAFETY_CAUTION}
          </p>
        </aside>
      </div>

      {/* Form */}
      <form
        className="flex min-w-0 flex-col gap-4"
        // Plan positions come from dragging and are not on the inputs' 0.1 m steps; the schema checks bounds on save.
        noValidate
        onSubmit={(e) => {
          e.preventDefault();
          void onSave();
        }}
        aria-label="Light notes"
      >
        <fieldset disabled={!canEdit} className="flex min-w-0 flex-col gap-4">
          <Card title="Room and subject">
            <div className="grid grid-cols-2 gap-3">
              <NumberField label="Room width" unit="m" value={widthM} min={0.5} max={MAX_ROOM_M} step={0.1} onChange={(v) => setRoom(v, depthM)} />
              <NumberField label="Room depth" unit="m" value={depthM} min={0.5} max={MAX_ROOM_M} step={0.1} onChange={(v) => setRoom(widthM, v)} />
              <NumberField label="Subject across" unit="m" value={notes.subject.x} min={0} max={widthM} step={0.1} onChange={(v) => moveTo('subject', v, notes.subject.y)} />
              <NumberField label="Subject deep" unit="m" value={notes.subject.y} min={0} max={depthM} step={0.1} onChange={(v) => moveTo('subject', notes.subject.x, v)} />
            </div>
          </Card>

          <Card title="Key and fill">
            {/* One column on a narrow phone: the choices are light names and need the width. */}
            <div className="grid grid-cols-1 gap-3 min-[420px]:grid-cols-2">
              <SelectField
                label="Key"
                value={notes.keyId ?? ''}
                onChange={(v) => update((n) => ({ ...n, keyId: v || undefined, fillId: n.fillId === v ? undefined : n.fillId }))}
              >
                <option value="">No key</option>
                {notes.sources.map((s) => (
                  <option key={s.id} value={s.id}>
                    {s.label || SOURCE_KIND_NAMES[s.kind]}
                  </option>
                ))}
              </SelectField>
              <SelectField label="Fill" value={notes.fillId ?? ''} onChange={(v) => update((n) => ({ ...n, fillId: v || undefined }))}>
                <option value="">Brightest other source</option>
                {notes.sources
                  .filter((s) => s.id !== notes.keyId)
                  .map((s) => (
                    <option key={s.id} value={s.id}>
                      {s.label || SOURCE_KIND_NAMES[s.kind]}
                    </option>
                  ))}
              </SelectField>
            </div>
          </Card>

          <Card title={`Sources (${notes.sources.length} of ${MAX_SOURCES})`}>
            {notes.sources.length === 0 && <p className="text-ink-soft">Add the lights, boards, reflectors and windows you used.</p>}
            <ul className="flex flex-col gap-3">
              {notes.sources.map((s) => (
                <li key={s.id}>
                  <SourceForm
                    source={s}
                    isKey={s.id === notes.keyId}
                    isSelected={selectedId === s.id}
                    onSelect={() => setSelectedId(s.id)}
                    onChange={(change) => updateSource(s.id, change)}
                    onRemove={() => removeSource(s.id)}
                    onMove={(x, y) => moveTo(s.id, x, y)}
                    room={notes.room}
                    canEdit={canEdit}
                  />
                </li>
              ))}
            </ul>
            {canEdit && (
              <div className="mt-3 flex flex-wrap gap-2" role="group" aria-label="Add a source">
                {SOURCE_KINDS.map((kind) => (
                  <button
                    key={kind}
                    type="button"
                    onClick={() => addSource(kind)}
                    disabled={notes.sources.length >= MAX_SOURCES}
                    className={secondaryButton}
                  >
                    Add {SOURCE_KIND_NAMES[kind].toLowerCase()}
                  </button>
                ))}
              </div>
            )}
          </Card>

          <Card title="Camera">
            {cameraIsFromExif && (
              <p className="mb-2 text-caption text-ink-soft">Filled in from the most common settings in the shoot&rsquo;s EXIF.</p>
            )}
            <div className="grid grid-cols-2 gap-3">
              <TextField
                label="Shutter (s)"
                hint="e.g. 1/200"
                initialText={shutterText(notes.camera?.shutterS)}
                parse={parseShutter}
                value={notes.camera?.shutterS}
                onChange={(v) => setCamera({ shutterS: v })}
              />
              <NumberField label="Aperture f/" value={notes.camera?.fNumber} min={0.5} max={256} step={0.1} onChange={(v) => setCamera({ fNumber: v })} onClear={() => setCamera({ fNumber: undefined })} />
              <NumberField label="ISO" value={notes.camera?.iso} min={1} max={10_000_000} step={1} onChange={(v) => setCamera({ iso: v })} onClear={() => setCamera({ iso: undefined })} />
              <NumberField label="Focal length" unit="mm" value={notes.camera?.focalLengthMm} min={1} max={5000} step={1} onChange={(v) => setCamera({ focalLengthMm: v })} onClear={() => setCamera({ focalLengthMm: undefined })} />
            </div>
            <p className="mt-3 text-body" aria-live="polite">
              {ev !== null ? (
                <>
                  <span className="font-semibold">EV {ev.toFixed(1)}</span>{' '}
                  <span className="text-ink-soft">{evDetail(notes.camera!)}</span>
                </>
              ) : (
                <span className="text-ink-soft">EV shows once shutter and aperture are filled in.</span>
              )}
            </p>
          </Card>

          <Card title="Notes">
            <label className="flex flex-col gap-1">
              <span className={labelClass}>What else to repeat next time</span>
              <textarea
                value={notes.notes ?? ''}
                maxLength={MAX_NOTES}
                rows={3}
                onChange={(e) => {
                  const text = e.target.value;
                  update((n) => ({ ...n, notes: text === '' ? undefined : text }));
                }}
                className={inputClass}
              />
            </label>
          </Card>
        </fieldset>

        {canEdit ? (
          <div className="flex flex-wrap items-center gap-3">
            <button type="submit" disabled={save.kind === 'saving'} className={primaryButton}>
              {save.kind === 'saving' ? 'Saving…' : 'Save light notes'}
            </button>
            <p role="status" className={`text-body ${save.kind === 'error' ? 'text-ember' : save.kind === 'saved' ? 'text-moss' : 'text-ink-soft'}`}>
              {save.kind === 'saving' && 'Saving…'}
              {save.kind === 'saved' && 'Saved.'}
              {save.kind === 'dirty' && 'Unsaved changes.'}
              {save.kind === 'error' && save.message}
            </p>
          </div>
        ) : (
          <p className="text-caption text-ink-soft">Read only: you can view these light notes but not change them.</p>
        )}
      </form>
    </div>
  );
}

function evDetail(camera: CameraSettings): string {
  const parts = [`at ISO 100 for ${formatAperture(camera.fNumber!)}, ${formatShutter(camera.shutterS!)}`];
  if (camera.iso) parts.push(` (shot at ${formatIso(camera.iso)})`);
  if (camera.focalLengthMm) parts.push(`, ${formatFocalLength(camera.focalLengthMm)}`);
  return parts.join('');
}

/** Power only for flashes: a kind change away from flash drops it, to flash sets a middling 1/4. */
function withKindRules(s: LightSource): LightSource {
  if (s.kind === 'flash') return s.power === undefined ? { ...s, power: 4 } : s;
  if (s.power === undefined) return s;
  const { power: _dropped, ...rest } = s;
  return rest;
}

// --- glyphs ---------------------------------------------------------------------------------

function SubjectGlyph({ k, isFocused }: { k: number; isFocused: boolean }) {
  // Seen from above: shoulders as a long oval, the head as a circle.
  return (
    <g aria-hidden="true">
      {isFocused && <circle r={24 * k} fill="none" className="stroke-ink" strokeWidth={2 * k} strokeDasharray={`${4 * k} ${3 * k}`} />}
      <circle r={18 * k} className="fill-transparent" />
      <ellipse rx={15 * k} ry={6.5 * k} className="fill-ink-soft" />
      <circle r={6.5 * k} className="fill-ink stroke-paper" strokeWidth={1.5 * k} />
      <text y={30 * k} textAnchor="middle" fontSize={12 * k} fontWeight={600} className="fill-ink stroke-paper" paintOrder="stroke" strokeWidth={3 * k}>
        Subject
      </text>
    </g>
  );
}

function SourceGlyph({ kind, angle, k, isFocused, isSelected }: { kind: SourceKind; angle: number; k: number; isFocused: boolean; isSelected: boolean }) {
  const colour = KIND_COLOUR[kind];
  return (
    <g aria-hidden="true">
      {isSelected && <circle r={21 * k} className="fill-clay-light" opacity={0.7} />}
      {isFocused && <circle r={24 * k} fill="none" className="stroke-ink" strokeWidth={2 * k} strokeDasharray={`${4 * k} ${3 * k}`} />}
      {/* A larger invisible target keeps the glyph easy to grab with a finger. */}
      <circle r={20 * k} className="fill-transparent" />
      <g transform={`rotate(${angle})`}>
        {kind === 'flash' && (
          <>
            <path d={`M ${4 * k} ${-6 * k} L ${17 * k} ${-12 * k} L ${17 * k} ${12 * k} L ${4 * k} ${6 * k} Z`} className="fill-clay-light stroke-clay" strokeWidth={1.2 * k} />
            <rect x={-10 * k} y={-7 * k} width={14 * k} height={14 * k} rx={3 * k} className={colour} strokeWidth={1.5 * k} />
            <circle r={2.6 * k} cx={-3 * k} className="fill-paper" />
          </>
        )}
        {kind === 'bounce_board' && (
          <>
            <rect x={-3 * k} y={-16 * k} width={6 * k} height={32 * k} className={colour} strokeWidth={1.5 * k} />
            <line x1={-3 * k} y1={0} x2={-9 * k} y2={0} className="stroke-amber" strokeWidth={2 * k} />
          </>
        )}
        {kind === 'reflector' && (
          <>
            <path d={`M ${5 * k} ${-15 * k} Q ${-9 * k} 0 ${5 * k} ${15 * k}`} className={colour} strokeWidth={4 * k} strokeLinecap="round" />
            <path d={`M ${8 * k} ${-7 * k} L ${13 * k} ${-9 * k} M ${9 * k} 0 L ${15 * k} 0 M ${8 * k} ${7 * k} L ${13 * k} ${9 * k}`} className="stroke-moss" strokeWidth={1.5 * k} />
          </>
        )}
        {kind === 'window' && (
          <>
            <rect x={-4 * k} y={-18 * k} width={8 * k} height={36 * k} className={colour} strokeWidth={1.5 * k} />
            <line x1={0} y1={-18 * k} x2={0} y2={18 * k} className="stroke-ink-soft" strokeWidth={1 * k} />
            <line x1={-4 * k} y1={0} x2={4 * k} y2={0} className="stroke-ink-soft" strokeWidth={1 * k} />
          </>
        )}
      </g>
    </g>
  );
}

function Legend() {
  const item = (kind: SourceKind) => (
    <span key={kind} className="inline-flex items-center gap-1">
      <svg viewBox="-22 -22 44 44" className="h-5 w-5" aria-hidden="true">
        <SourceGlyph kind={kind} angle={0} k={1} isFocused={false} isSelected={false} />
      </svg>
      {SOURCE_KIND_NAMES[kind]}
    </span>
  );
  return (
    <>
      {SOURCE_KINDS.map(item)}
      <span className="inline-flex items-center gap-1">
        <span className="inline-flex h-4 w-4 items-center justify-center rounded-full bg-clay text-caption font-bold leading-none text-paper" aria-hidden="true">
          K
        </span>
        key
      </span>
      <span className="inline-flex items-center gap-1">
        <span className="inline-flex h-4 w-4 items-center justify-center rounded-full bg-moss text-caption font-bold leading-none text-paper" aria-hidden="true">
          F
        </span>
        fill
      </span>
    </>
  );
}

// --- "move this light by N stops" -----------------------------------------------------------

function StopsHelper({
  notes,
  readingsById,
  selectedId,
  idPrefix,
}: {
  notes: LightNotes;
  readingsById: Map<string, SourceReading>;
  selectedId: string | null;
  idPrefix: string;
}) {
  const [chosenId, setChosenId] = useState<string>('');
  const [stopsText, setStopsText] = useState('1');
  const fallbackId = selectedId ?? notes.keyId ?? notes.sources[0]?.id ?? '';
  const sourceId = notes.sources.some((s) => s.id === chosenId) ? chosenId : fallbackId;
  const source = notes.sources.find((s) => s.id === sourceId);
  if (notes.sources.length === 0) return null;

  const stops = Number(stopsText);
  const distance = source ? readingsById.get(source.id)?.distanceM : undefined;
  let answer: ReactNode = null;
  if (source && Number.isFinite(stops) && stops !== 0) {
    const direction = stops > 0 ? 'brighter' : 'darker';
    const lines: string[] = [];
    if (source.kind === 'flash' && source.power) {
      const wanted = powerForStops(source.power, stops);
      const { power, isReachable } = nearestPowerSetting(wanted);
      lines.push(
        isReachable
          ? `Power: ${formatPower(source.power)} → ${formatPower(power)}${Math.abs(Math.log2(wanted) - Math.log2(power)) > 0.05 ? ` (nearest setting to 1/${wanted.toFixed(1)})` : ''}.`
          : `Power: out of reach; ${formatPower(source.power)} can move ${stops > 0 ? Math.log2(source.power).toFixed(0) : (7 - Math.log2(source.power)).toFixed(0)} stops ${direction} at most.`,
      );
    }
    if (distance !== undefined && distance > 0) {
      lines.push(`Distance: ${metresText(distance)} → ${metresText(distanceForStops(distance, stops))} from the subject.`);
    }
    answer = (
      <ul className="mt-2 list-disc pl-5">
        {lines.map((l) => (
          <li key={l}>{l}</li>
        ))}
      </ul>
    );
  }

  return (
    <div className="mt-4 border-t border-paper-edge pt-3">
      <h3 className="font-semibold">To move a light by some stops</h3>
      <div className="mt-2 flex flex-wrap items-end gap-3">
        <label className="flex flex-col gap-1">
          <span className={labelClass}>Light</span>
          <select id={`${idPrefix}-helper-source`} value={sourceId} onChange={(e) => setChosenId(e.target.value)} className={inputClass}>
            {notes.sources.map((s) => (
              <option key={s.id} value={s.id}>
                {s.label || SOURCE_KIND_NAMES[s.kind]}
              </option>
            ))}
          </select>
        </label>
        <label className="flex flex-col gap-1">
          <span className={labelClass}>Stops (+ brighter, − darker)</span>
          <input type="number" step={0.5} min={-10} max={10} value={stopsText} onChange={(e) => setStopsText(e.target.value)} className={`${inputClass} w-28`} />
        </label>
      </div>
      <div aria-live="polite">{answer}</div>
    </div>
  );
}

// --- form parts -----------------------------------------------------------------------------

// The shared component classes from the global stylesheet, so the editor looks like the rest of the desk.
const inputClass = 'field min-w-0 disabled:bg-paper-deep disabled:text-ink-soft';
const labelClass = 'label';
const primaryButton = 'btn-accent';
const secondaryButton = 'btn-quiet';

function Card({ title, children }: { title: string; children: ReactNode }) {
  return (
    <section className="card p-4">
      <h2 className="mb-3 font-display text-lead">{title}</h2>
      {children}
    </section>
  );
}

function SelectField({ label, value, onChange, children }: { label: string; value: string; onChange: (v: string) => void; children: ReactNode }) {
  return (
    <label className="flex min-w-0 flex-col gap-1">
      <span className={labelClass}>{label}</span>
      <select value={value} onChange={(e) => onChange(e.target.value)} className={inputClass}>
        {children}
      </select>
    </label>
  );
}

/**
 * A number input that lets the user pass through half-typed states ("1.", "") without the
 * value jumping, and takes outside changes (dragging on the plan) as they come.
 */
function NumberField({
  label,
  unit,
  value,
  min,
  max,
  step,
  onChange,
  onClear,
}: {
  label: string;
  unit?: string;
  value: number | undefined;
  min: number;
  max: number;
  step: number;
  onChange: (v: number) => void;
  /** Given for optional fields: an emptied field clears the value. */
  onClear?: () => void;
}) {
  const [text, setText] = useState(value === undefined ? '' : String(value));
  useEffect(() => {
    setText((t) => (t.trim() !== '' && Number(t) === value ? t : value === undefined ? '' : String(value)));
  }, [value]);
  const n = Number(text);
  const isInvalid = text.trim() === '' ? !onClear : !Number.isFinite(n) || n < min || n > max;
  return (
    <label className="flex min-w-0 flex-col gap-1">
      <span className={labelClass}>
        {label}
        {unit ? ` (${unit})` : ''}
      </span>
      <input
        type="number"
        inputMode="decimal"
        value={text}
        min={min}
        max={max}
        step={step}
        aria-invalid={isInvalid || undefined}
        onChange={(e) => {
          const t = e.target.value;
          setText(t);
          if (t.trim() === '') {
            onClear?.();
            return;
          }
          const v = Number(t);
          if (Number.isFinite(v) && v >= min && v <= max) onChange(v);
        }}
        onBlur={() => setText(value === undefined ? '' : String(value))}
        className={`${inputClass} ${isInvalid ? 'border-ember' : ''}`}
      />
    </label>
  );
}

function TextField({
  label,
  hint,
  initialText,
  parse,
  value,
  onChange,
}: {
  label: string;
  hint: string;
  initialText: string;
  parse: (t: string) => number | undefined;
  value: number | undefined;
  onChange: (v: number | undefined) => void;
}) {
  const [text, setText] = useState(initialText);
  useEffect(() => {
    setText((t) => (parse(t) === value ? t : initialText));
    // initialText follows value and parse is a fixed function, so value alone drives this.
  }, [value]);
  const isInvalid = text.trim() !== '' && parse(text) === undefined;
  return (
    <label className="flex min-w-0 flex-col gap-1">
      <span className={labelClass}>{label}</span>
      <input
        type="text"
        inputMode="decimal"
        value={text}
        placeholder={hint}
        aria-invalid={isInvalid || undefined}
        onChange={(e) => {
          setText(e.target.value);
          const v = parse(e.target.value);
          if (v !== undefined || e.target.value.trim() === '') onChange(v);
        }}
        className={`${inputClass} ${isInvalid ? 'border-ember' : ''}`}
      />
    </label>
  );
}

function SourceForm({
  source,
  isKey,
  isSelected,
  onSelect,
  onChange,
  onRemove,
  onMove,
  room,
  canEdit,
}: {
  source: LightSource;
  onMove: (x: number, y: number) => void;
  room: LightNotes['room'];
  isKey: boolean;
  isSelected: boolean;
  onSelect: () => void;
  onChange: (change: Partial<LightSource>) => void;
  onRemove: () => void;
  canEdit: boolean;
}) {
  const name = source.label || SOURCE_KIND_NAMES[source.kind];
  return (
    <fieldset
      className={`rounded-card border p-3 ${isSelected ? 'border-clay bg-clay-light/30' : 'border-paper-edge'}`}
      onFocus={onSelect}
    >
      <legend className="px-1 font-semibold">
        {name}
        {isKey ? <span className="ml-2 rounded bg-clay px-1.5 text-caption font-semibold text-paper">key</span> : null}
      </legend>
      <div className="grid grid-cols-2 gap-3">
        <label className="col-span-2 flex flex-col gap-1">
          <span className={labelClass}>Label</span>
          <input type="text" value={source.label} maxLength={MAX_TEXT} onChange={(e) => onChange({ label: e.target.value })} className={inputClass} />
        </label>
        <SelectField label="Kind" value={source.kind} onChange={(v) => onChange({ kind: v as SourceKind })}>
          {SOURCE_KINDS.map((kind) => (
            <option key={kind} value={kind}>
              {SOURCE_KIND_NAMES[kind]}
            </option>
          ))}
        </SelectField>
        {source.kind === 'flash' ? (
          <SelectField label="Power" value={String(source.power ?? 1)} onChange={(v) => onChange({ power: Number(v) })}>
            {POWER_DENOMINATORS.map((p) => (
              <option key={p} value={p}>
                {p === 1 ? 'Full (1/1)' : `1/${p}`}
              </option>
            ))}
          </SelectField>
        ) : (
          <p className="self-end pb-1.5 text-caption text-ink-soft">No power: its level comes from distance.</p>
        )}
        <label className="flex flex-col gap-1">
          <span className={labelClass}>Modifier</span>
          <input
            type="text"
            value={source.modifier ?? ''}
            maxLength={MAX_TEXT}
            placeholder="e.g. umbrella"
            onChange={(e) => onChange({ modifier: e.target.value === '' ? undefined : e.target.value })}
            className={inputClass}
          />
        </label>
        <label className="flex flex-col gap-1">
          <span className={labelClass}>Aims at</span>
          <input type="text" value={source.aimsAt} maxLength={MAX_TEXT} onChange={(e) => onChange({ aimsAt: e.target.value })} className={inputClass} />
        </label>
        <NumberField label="Across" unit="m" value={source.x} min={0} max={room.widthM} step={0.1} onChange={(v) => onMove(v, source.y)} />
        <NumberField label="Deep" unit="m" value={source.y} min={0} max={room.depthM} step={0.1} onChange={(v) => onMove(source.x, v)} />
      </div>
      {canEdit && (
        <button type="button" onClick={onRemove} className={`${secondaryButton} mt-3`} aria-label={`Remove ${name}`}>
          Remove
        </button>
      )}
    </fieldset>
  );
}
