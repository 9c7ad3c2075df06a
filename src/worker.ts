/**
 * Fillcard's background worker: a separate process doing the queue's jobs. Run more of them to go
 * faster; a job whose worker dies expires and is taken over by another.
 */
import { boss, QUEUES, stopBoss } from './lib/server/jobs';
import { closeDb } from './lib/server/db';
import { sweepOutbox } from './lib/server/mail';
import { config } from './lib/server/config';
import { mailSend } from './jobs/mail-send';
import { workerJobs } from './jobs/index';
import { abortStaleMultipartUploads, deleteOrphanUploads } from './lib/server/uploads';

config(); // stop at once on a bad configuration
const concurrency = Math.max(1, Number(process.env.WORKER_CONCURRENCY ?? 2));

const b = await boss({ worker: true });
await b.work(QUEUES.mailSend.name, { batchSize: 1, pollingIntervalSeconds: 1 }, mailSend);
for (const job of workerJobs) {
  // pg-boss 10 runs one handler per `work` call; several calls give several concurrent jobs.
  for (let i = 0; i < (job.concurrency ?? concurrency); i++) {
    await b.work(job.queue.name, { batchSize: 1, pollingIntervalSeconds: 1, includeMetadata: true }, job.handler as never);
  }
}

// Rows written but never handed to the queue (a crash between commit and send) are picked up here.
const sweep = setInterval(() => {
  sweepOutbox().catch((e) => console.error('[fillcard] outbox sweep failed:', e));
  for (const job of workerJobs) job.sweep?.().catch((e) => console.error(`[fillcard] ${job.queue.name} sweep failed:`, e));
}, 15_000);

// Storage housekeeping once an hour (and soon after start): unfinished multipart uploads and
// uploads never registered, both older than a day.
const housekeeping = async () => {
  // Stores without multipart listing (some local stand-ins) rely on a lifecycle rule instead.
  await abortStaleMultipartUploads().catch((e) =>
    console.log(`[fillcard] note: this object store does not list unfinished multipart uploads (${e.name}); give the bucket a lifecycle rule that aborts them after a day.`));
  await deleteOrphanUploads()
    .then((n) => n && console.log(`[fillcard] removed ${n} unregistered upload(s) older than a day`))
    .catch((e) => console.error('[fillcard] could not sweep unregistered uploads:', e));
};
const firstHousekeeping = setTimeout(housekeeping, 60_000);
const hourly = setInterval(housekeeping, 3600_000);

console.log(`[fillcard] worker ready (concurrency ${concurrency})`);

let stopping = false;
async function stop() {
  if (stopping) return;
  stopping = true;
  clearInterval(sweep);
  clearInterval(hourly);
  clearTimeout(firstHousekeeping);
  await stopBoss().catch(() => null);
  await closeDb().catch(() => null);
  process.exit(0);
}
process.on('SIGTERM', stop);
process.on('SIGINT', stop);
