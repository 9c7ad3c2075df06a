/** A frame's camera settings as a photographer reads them. Pure: the same text on the server and in the browser. */
import type { FrameDto } from '../../lib/dto';
import { formatAperture, formatExposureBias, formatShutter } from '../../lib/exposure';

export interface Fact {
  label: string;
  value: string;
}

const DATE_TIME = new Intl.DateTimeFormat('en-GB', {
  day: 'numeric',
  month: 'short',
  year: 'numeric',
  hour: '2-digit',
  minute: '2-digit',
  second: '2-digit',
  hour12: false,
  timeZone: 'UTC',
});

function offsetMinutes(offset: string): number | null {
  const m = /^([+-])(\d{2}):(\d{2})$/.exec(offset);
  return m ? (m[1] === '-' ? -1 : 1) * (Number(m[2]) * 60 + Number(m[3])) : null;
}

/**
 * When the shutter fired, as the camera's clock read it, with the camera's UTC offset when it
 * recorded one: "1 May 2024, 14:30:05 (UTC+02:00)". Without an offset the stored instant is the
 * clock reading itself.
 */
export function formatTakenAt(takenAt: string | null, offset: string | null): string | null {
  if (!takenAt) return null;
  const instant = new Date(takenAt).getTime();
  const minutes = offset ? offsetMinutes(offset) : null;
  if (minutes === null) return `${DATE_TIME.format(instant)} (camera clock, no time zone recorded)`;
  return `${DATE_TIME.format(instant + minutes * 60_000)} (UTC${offset})`;
}

export function formatFocalLength(mm: number | null, mm35: number | null): string | null {
  if (mm === null) return mm35 === null ? null : `${trim(mm35)} mm in 35 mm terms`;
  const own = `${trim(mm)} mm`;
  if (mm35 === null || Math.abs(mm35 - mm) < 0.5) return mm35 === null ? own : `${own} (full frame)`;
  return `${own} (${trim(mm35)} mm in 35 mm terms)`;
}

const trim = (n: number) => String(Number(n.toFixed(1)));

export function cameraName(make: string | null, model: string | null): string | null {
  if (!make) return model;
  if (!model) return make;
  // Many cameras repeat the maker's name in the model tag.
  return model.toLowerCase().startsWith(make.toLowerCase()) ? model : `${make} ${model}`;
}

export function flashText(fired: boolean | null): string | null {
  if (fired === null) return null;
  return fired ? 'Fired' : 'Did not fire';
}

/** "1/250 s · f/5.6 · ISO 100", or null when the frame carries no settings. */
export function settingsLine(f: Pick<FrameDto, 'exposureTimeS' | 'fNumber' | 'iso'>): string | null {
  const parts = [
    f.exposureTimeS ? formatShutter(f.exposureTimeS) : null,
    f.fNumber ? formatAperture(f.fNumber) : null,
    f.iso ? `ISO ${f.iso}` : null,
  ].filter(Boolean);
  return parts.length ? parts.join(' · ') : null;
}

/** Every EXIF fact the frame panel lists, in the order a photographer checks them. */
export function frameFacts(f: FrameDto): Fact[] {
  const facts: (Fact | null)[] = [
    f.exposureTimeS ? { label: 'Shutter', value: formatShutter(f.exposureTimeS) } : null,
    f.fNumber ? { label: 'Aperture', value: formatAperture(f.fNumber) } : null,
    f.iso ? { label: 'ISO', value: String(f.iso) } : null,
    f.ev100 !== null ? { label: 'EV at ISO 100', value: f.ev100.toFixed(1) } : null,
    f.exposureBiasEv !== null && f.exposureBiasEv !== 0 ? { label: 'Compensation', value: formatExposureBias(f.exposureBiasEv) } : null,
    withValue('Focal length', formatFocalLength(f.focalLengthMm, f.focalLength35mm)),
    withValue('Lens', f.lens),
    withValue('Camera', cameraName(f.cameraMake, f.cameraModel)),
    withValue('Flash', flashText(f.flashFired)),
    withValue('Taken', formatTakenAt(f.takenAt, f.takenAtOffset)),
    f.width && f.height ? { label: 'Size', value: `${f.width} × ${f.height} px · ${formatBytes(f.bytes)}` } : { label: 'File', value: formatBytes(f.bytes) },
  ];
  return facts.filter((x): x is Fact => x !== null);
}

function withValue(label: string, value: string | null): Fact | null {
  return value ? { label, value } : null;
}

export function formatBytes(bytes: number): string {
  if (bytes < 1024) return `${bytes} B`;
  if (bytes < 1024 * 1024) return `${Math.round(bytes / 1024)} KB`;
  const mb = bytes / (1024 * 1024);
  return `${mb >= 10 ? Math.round(mb) : mb.toFixed(1)} MB`;
}
