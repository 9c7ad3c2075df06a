import type PgBoss from 'pg-boss';
import { QUEUES } from '../lib/server/jobs';
import { frameProcessHandler, sweepFrames, frameCropsHandler } from './frame-process';
import { finalProcessHandler, sweepFinals } from './final-process';

export interface WorkerJob {
  queue: (typeof QUEUES)[keyof typeof QUEUES];
  handler: (jobs: PgBoss.JobWithMetadata<any>[]) => Promise<unknown>;
  /** How many of this job run at once in one worker (defaults to WORKER_CONCURRENCY). */
  concurrency?: number;
  /** Re-enqueues work whose job was lost; runs every 15 s. */
  sweep?: () => Promise<void>;
}

/** Every job kind the worker does besides e-mail, one file each. */
export const workerJobs: WorkerJob[] = [
  { queue: QUEUES.frameProcess, handler: frameProcessHandler, sweep: sweepFrames },
  { queue: QUEUES.frameCrops, handler: frameCropsHandler, concurrency: 1 },
  { queue: QUEUES.finalProcess, handler: finalProcessHandler, sweep: sweepFinals, concurrency: 1 },
];
