import type PgBoss from 'pg-boss';
import type { QUEUES } from '../lib/server/jobs';

export interface WorkerJob {
  queue: (typeof QUEUES)[keyof typeof QUEUES];
  handler: (jobs: PgBoss.Job<any>[]) => Promise<unknown>;
  /** How many of this job run at once in one worker (defaults to WORKER_CONCURRENCY). */
  concurrency?: number;
  /** Re-enqueues work whose job was lost; runs every 15 s. */
  sweep?: () => Promise<void>;
}

/** Every job kind the worker does besides e-mail, one file each. */
export const workerJobs: WorkerJob[] = [];
