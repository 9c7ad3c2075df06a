import { useEffect, useMemo, useRef, useState } from 'react';
import Uppy, { type Body, type Meta, type UppyFile } from '@uppy/core';
import AwsS3 from '@uppy/aws-s3';
import Dashboard from '@uppy/react/dashboard';
import { useUppyState } from '@uppy/react';
import '@uppy/core/css/style.min.css';
import '@uppy/dashboard/css/style.min.css';
import './uploader.css';
import { formatBytes } from './frame-facts';
import ProgressBar from '../ui/ProgressBar';

export interface UploadLimits {
  maxBytes: number;
  /** How many more frames this shoot takes. */
  roomForFrames: number;
  multipartAboveBytes: number;
  partBytes: number;
  extensions: string[];
}

/**
 * What the uploader says and where it sends files. Frames are the default; the Finals tab uses the
 * same uploader with its own endpoints and words.
 */
export interface UploaderSetup {
  uppyId: string;
  /** Signs each S3 request (POST, JSON). */
  signUrl: string;
  /** Registers each finished file (POST { key, name, size }). */
  registerUrl: string;
  heading: string;
  intro: string;
  /** Heading over refused files, by count. */
  problemsHeading: (count: number) => string;
  /** The drop area's own strings, merged over the frame wording. */
  strings?: Record<string, unknown>;
  note?: string;
  restrictionStrings?: Record<string, unknown>;
}

/** The drop area's counted phrases for what it sends ("frame" / "frames", "final" / "finals"). */
export function countedWords(one: string, many: string, processing: { one: string; many: string }): Record<string, unknown> {
  const counted = (a: string, b: string) => ({ 0: a, 1: b });
  return {
    // Worded so a phone, which cannot drag files, still reads sense: the button comes first.
    dropPasteFiles: `%{browseFiles} or drop them here from a computer`,
    browseFiles: `Choose ${many}`,
    dashboardTitle: `${one[0]!.toUpperCase()}${one.slice(1)} uploader`,
    xFilesSelected: counted(`%{smart_count} ${one} selected`, `%{smart_count} ${many} selected`),
    uploadingXFiles: counted(`Sending %{smart_count} ${one}`, `Sending %{smart_count} ${many}`),
    processingXFiles: counted(processing.one, processing.many),
    filesUploadedOfTotal: counted(`%{complete} of %{smart_count} ${one} sent`, `%{complete} of %{smart_count} ${many} sent`),
    uploadXFiles: counted(`Send %{smart_count} ${one}`, `Send %{smart_count} ${many}`),
    uploadXNewFiles: counted(`Send +%{smart_count} ${one}`, `Send +%{smart_count} ${many}`),
    xMoreFilesAdded: counted(`%{smart_count} more ${one} added`, `%{smart_count} more ${many} added`),
    addMoreFiles: `Add more ${many}`,
    dropHint: `Drop the ${many} here`,
  };
}

export const frameUploaderSetup = (shootId: string): UploaderSetup => ({
  uppyId: `shoot-${shootId}`,
  signUrl: `/api/shoots/${shootId}/uploads/sign`,
  registerUrl: `/api/shoots/${shootId}/frames`,
  heading: 'Add frames',
  intro: "Files go straight to the studio's private storage; nothing is shown to the client until you send the viewing link.",
  problemsHeading: (n) => (n === 1 ? '1 file did not become a frame' : `${n} files did not become frames`),
});

interface Props {
  shootId: string;
  limits: UploadLimits;
  /** Told whenever sending starts or stops, so the page can poll faster meanwhile. */
  onActivity: (busy: boolean) => void;
  /** Told after each file is registered, with the server's answer. */
  onRegistered: (result: unknown, fileName: string) => void;
  /** Endpoints and words; frames when not given. */
  setup?: UploaderSetup;
}

type FileProblem = { fileId: string; name: string; message: string; retryable: boolean };

interface SignedRequest {
  url: string;
  key: string;
  headers?: Record<string, string>;
}

type File = UppyFile<Meta, Body>;

const wait = (ms: number) => new Promise((r) => setTimeout(r, ms));

/**
 * POSTs to one of our upload endpoints, riding out short outages: network errors, 5xx and 429 are
 * tried again, anything else is a refusal whose message the owner should read.
 */
async function postWithRetry<T>(url: string, body: unknown, tries = 4): Promise<{ status: number; data: T }> {
  let lastError = 'Fillcard could not be reached. Check your connection; the upload can be tried again.';
  for (let attempt = 0; attempt < tries; attempt++) {
    if (attempt) await wait(600 * 2 ** attempt);
    let res: Response;
    try {
      res = await fetch(url, { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify(body), credentials: 'same-origin' });
    } catch {
      continue;
    }
    const data = (await res.json().catch(() => ({}))) as T & { error?: string };
    if (res.ok) return { status: res.status, data };
    lastError = data.error ?? `Fillcard answered with error ${res.status}.`;
    if (res.status < 500 && res.status !== 429) throw new Refusal(res.status, lastError);
  }
  throw new Error(lastError);
}

class Refusal extends Error {
  constructor(
    readonly status: number,
    message: string,
  ) {
    super(message);
  }
}

function createUploader(limits: UploadLimits, setup: UploaderSetup) {
  /** The key Uppy asks to start with stands for a file; the server then makes the real key. */
  const fileForToken = new Map<string, string>();
  const keyForFile = new Map<string, string>();
  let tokens = 0;

  const uppy = new Uppy<Meta, Body>({
    id: setup.uppyId,
    autoProceed: true,
    restrictions: {
      allowedFileTypes: limits.extensions.map((e) => `.${e}`),
      maxFileSize: limits.maxBytes,
      minFileSize: 1,
      maxNumberOfFiles: Math.max(1, limits.roomForFrames),
    },
    locale: {
      strings: {
        youCanOnlyUploadFileTypes: 'Fillcard takes photos as %{types}',
        exceedsSize: '%{file} is larger than the %{size} a frame may have',
        inferiorSize: 'This file is empty',
        youCanOnlyUploadX: { 0: 'This shoot has room for %{smart_count} more frame', 1: 'This shoot has room for %{smart_count} more frames' },
        noDuplicates: "'%{fileName}' is already in the list",
        failedToUpload: '%{file} did not upload',
        noInternetConnection: 'No connection: the upload waits and goes on when you are back online',
        connectedToInternet: 'Connected again',
        ...setup.restrictionStrings,
      },
    } as never,
  });

  uppy.use(AwsS3, {
    limit: 4,
    shouldUseMultipart: (file) => (file.size ?? 0) > limits.multipartAboveBytes,
    getChunkSize: () => limits.partBytes,
    generateObjectKey: (file) => {
      const token = `pending-${++tokens}`;
      fileForToken.set(token, file.id);
      return token;
    },
    signRequest: async (req) => {
      const uploadId = 'uploadId' in req ? req.uploadId : undefined;
      const startsNew = (req.method === 'PUT' || req.method === 'POST') && !uploadId;
      let body: Record<string, unknown> = { method: req.method, key: req.key, uploadId, partNumber: 'partNumber' in req ? req.partNumber : undefined };
      const fileId = startsNew ? fileForToken.get(req.key) : undefined;
      if (startsNew) {
        const file = fileId ? uppy.getFile(fileId) : undefined;
        if (!file) throw new Error('This file is no longer in the list.');
        body = { method: req.method, fileName: file.name, size: file.size ?? 0, contentType: file.type || undefined };
      }
      const { data } = await postWithRetry<SignedRequest>(setup.signUrl, body);
      if (fileId) {
        fileForToken.delete(req.key);
        keyForFile.set(fileId, data.key);
      }
      return data;
    },
  });

  return { uppy, keyForFile };
}

const PROGRESS_SELECTOR = (s: { totalProgress: number; files: Record<string, File> }) => {
  const files = Object.values(s.files);
  const started = files.filter((f) => f.progress.uploadStarted);
  return {
    percent: s.totalProgress,
    total: files.length,
    started: started.length,
    sent: files.filter((f) => f.progress.uploadComplete).length,
    added: files.filter((f) => f.progress.complete && !f.error).length,
    bytesSent: started.reduce((n, f) => n + (f.progress.bytesUploaded || 0), 0),
    bytesTotal: started.reduce((n, f) => n + (f.progress.bytesTotal || 0), 0),
    failed: files.filter((f) => f.error).length,
    paused: files.some((f) => f.isPaused),
  };
};

export default function ShootUploader({ shootId, limits, onActivity, onRegistered, setup: given }: Props) {
  const setup = useMemo(() => given ?? frameUploaderSetup(shootId), [given, shootId]);
  const [made, setMade] = useState<ReturnType<typeof createUploader> | null>(null);
  const [problems, setProblems] = useState<FileProblem[]>([]);
  const registered = useRef(onRegistered);
  registered.current = onRegistered;
  const activity = useRef(onActivity);
  activity.current = onActivity;

  useEffect(() => {
    const made = createUploader(limits, setup);
    const { uppy, keyForFile } = made;
    const registrations = new Map<string, Promise<void>>();
    const forget = (fileId: string) => setProblems((list) => list.filter((p) => p.fileId !== fileId));
    const report = (file: File, message: string, retryable: boolean) =>
      setProblems((list) => [...list.filter((p) => p.fileId !== file.id), { fileId: file.id, name: file.name ?? 'file', message, retryable }]);

    async function register(file: File, key: string | undefined) {
      try {
        if (!key) throw new Refusal(0, 'The upload finished without a storage key. Please try this file again.');
        const { data } = await postWithRetry(setup.registerUrl, { key, name: file.name, size: file.size ?? 0 });
        uppy.emit('postprocess-complete', uppy.getFile(file.id));
        forget(file.id);
        registered.current(data, file.name ?? '');
      } catch (err) {
        const message = (err as Error).message;
        const current = uppy.getFile(file.id);
        if (!current) return;
        // Sent but not taken: mark the file unsent, so trying again sends a fresh copy.
        uppy.setFileState(file.id, {
          error: message,
          progress: { ...current.progress, uploadComplete: false, complete: false, postprocess: undefined, percentage: 0, bytesUploaded: 0 },
        } as never);
        report(current, message, !(err instanceof Refusal) || err.status !== 403);
      }
    }

    uppy.on('upload-success', (file, response) => {
      if (!file) return;
      const key = keyForFile.get(file.id) ?? (response.body as { key?: string } | undefined)?.key;
      registrations.set(file.id, register(file, key));
    });
    // The batch counts as finished only when every sent file has become a frame (or said why not).
    uppy.addPostProcessor(async (fileIds) => {
      await Promise.all(fileIds.map((id) => registrations.get(id)).filter(Boolean));
      fileIds.forEach((id) => registrations.delete(id));
    });
    uppy.on('upload-error', (file, error) => {
      if (file) report(file, error?.message ?? 'The upload failed.', true);
    });
    uppy.on('restriction-failed', (file, error) => {
      if (file) setProblems((list) => [...list, { fileId: `refused-${list.length}-${file.name}`, name: file.name ?? 'file', message: error.message, retryable: false }]);
    });
    uppy.on('upload-retry', (file) => file && forget(file.id));
    uppy.on('retry-all', (files) => files.forEach((f) => forget(f.id)));
    uppy.on('file-removed', (file) => forget(file.id));
    uppy.on('upload', () => activity.current(true));
    uppy.on('complete', () => activity.current(false));
    setMade(made);
    return () => {
      activity.current(false);
      uppy.destroy();
    };
    // The limits come from the page once; a new shoot id means a new uploader.
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [shootId]);

  return (
    <section aria-labelledby="uploader-heading" className="card p-4 sm:p-5">
      <div className="flex flex-wrap items-baseline justify-between gap-2">
        <h2 id="uploader-heading" className="text-title">
          {setup.heading}
        </h2>
        <p className="text-caption text-ink-faint">{setup.intro}</p>
      </div>
      <div className="fc-uploader mt-3" style={{ minHeight: 300 }}>
        {made ? <UppyDashboard uppy={made.uppy} limits={limits} setup={setup} /> : <div className="h-[300px] rounded-card border border-dashed border-paper-edge bg-paper" aria-hidden="true" />}
      </div>
      {made ? <UploadSummary uppy={made.uppy} /> : null}
      {problems.length ? (
        <div className="mt-3 rounded-card border border-ember/30 bg-ember-light/60 p-3" role="alert" aria-live="polite">
          <h3 className="font-sans text-body font-semibold text-ember">
            {setup.problemsHeading(problems.length)}
          </h3>
          <ul className="mt-2 space-y-2" data-testid="upload-problems">
            {problems.map((p) => (
              <li key={p.fileId} className="flex flex-wrap items-start justify-between gap-2 text-ink">
                <span className="min-w-0 flex-1 break-words">
                  <span className="font-semibold">{p.name}</span>: {p.message}
                </span>
                <span className="flex gap-2">
                  {p.retryable && made?.uppy.getFile(p.fileId) ? (
                    <button type="button" className="btn-quiet !min-h-[36px] !py-1" onClick={() => made.uppy.retryUpload(p.fileId)}>
                      Try again
                    </button>
                  ) : null}
                  <button
                    type="button"
                    className="btn-quiet !min-h-[36px] !py-1"
                    onClick={() => {
                      if (made?.uppy.getFile(p.fileId)) made.uppy.removeFile(p.fileId);
                      setProblems((list) => list.filter((x) => x.fileId !== p.fileId));
                    }}
                  >
                    Dismiss
                  </button>
                </span>
              </li>
            ))}
          </ul>
        </div>
      ) : null}
    </section>
  );
}

function UppyDashboard({ uppy, limits, setup }: { uppy: Uppy<Meta, Body>; limits: UploadLimits; setup: UploaderSetup }) {
  const locale = useMemo(
    () => ({
      strings: {
        ...countedWords('frame', 'frames', { one: 'Adding %{smart_count} frame to the shoot', many: 'Adding %{smart_count} frames to the shoot' }),
        addMore: 'Add more',
        uploading: 'Sending',
        complete: 'All sent',
        uploadFailed: 'Some files did not upload',
        paused: 'Paused',
        retry: 'Try again',
        done: 'Clear the list',
        uploadComplete: 'Sent',
        uploadPaused: 'Paused',
        resumeUpload: 'Go on',
        pauseUpload: 'Pause',
        retryUpload: 'Try again',
        cancelUpload: 'Stop',
        removeFile: 'Remove from the list',
        error: 'Problem',
        showErrorDetails: 'Why?',
        ...setup.strings,
      },
    }),
    [setup],
  );
  return (
    <Dashboard
      uppy={uppy}
      height={300}
      width="100%"
      theme="light"
      proudlyDisplayPoweredByUppy={false}
      // Hundreds of full-size JPEGs would keep the browser busy decoding previews; the frames board shows real thumbnails.
      disableThumbnailGenerator
      hideProgressDetails={false}
      hidePauseResumeButton={false}
      note={setup.note ?? `JPEG, PNG, TIFF or WebP, up to ${formatBytes(limits.maxBytes)} each. Large files go up in parts and resume after a dropped connection.`}
      locale={locale as never}
    />
  );
}

/** Our own total line: the Dashboard hides its byte counts on narrow screens. */
function UploadSummary({ uppy }: { uppy: Uppy<Meta, Body> }) {
  const p = useUppyState(uppy, PROGRESS_SELECTOR as never) as ReturnType<typeof PROGRESS_SELECTOR>;
  if (!p.started) return null;
  const percent = Math.round(p.percent);
  return (
    <div className="mt-3" data-testid="upload-summary">
      <div className="flex flex-wrap items-baseline justify-between gap-x-4 text-caption text-ink-soft">
        <span>
          <span className="font-semibold text-ink">{p.sent === p.total ? 'All sent' : p.paused ? 'Paused' : 'Sending'}</span> · {p.sent} of {p.total} files sent ·{' '}
          {p.added} added to the shoot{p.failed ? ` · ${p.failed} with a problem` : ''}
        </span>
        <span>
          {formatBytes(p.bytesSent)} of {formatBytes(p.bytesTotal)} · {percent}%
        </span>
      </div>
      <ProgressBar label="Upload progress" value={percent} max={100} className="mt-1 h-2" segments={[{ value: percent, className: 'rounded-full bg-clay' }]} />
    </div>
  );
}
