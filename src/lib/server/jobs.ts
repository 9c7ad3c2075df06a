/**
 * The background queue (pg-boss on PostgreSQL). The app only sends jobs; the worker process
 * (src/worker.ts) does them. Each queue's retry policy is written here beside its name.
 */
import PgBoss from 'pg-boss';
import { config } from './config';

export const QUEUES = {
  /** Build one frame's variants. Expires after 3 min so a dead worker's job is taken over. */
  frameProcess: { name: 'frame-process', retryLimit: 5, retryDelay: 5, retryBackoff: true, expireInSeconds: 180 },
  /** Rebuild a frame's crops after the owner moved its focus point. */
  frameCrops: { name: 'frame-crops', retryLimit: 5, retryDelay: 5, retryBackoff: true, expireInSeconds: 120 },
  /** Process one uploaded final. */
  finalProcess: { name: 'final-process', retryLimit: 5, retryDelay: 5, retryBackoff: true, expireInSeconds: 300 },
  /** Send one outbox e-mail; SMTP outages are ridden out by retrying for about a day. */
  mailSend: { name: 'mail-send', retryLimit: 20, retryDelay: 10, retryBackoff: true, expireInSeconds: 60 },
} as const;

export type QueueName = (typeof QUEUES)[keyof typeof QUEUES]['name'];

let bossPromise: Promise<PgBoss> | undefined;

/** The shared queue client. The worker runs maintenance; app servers only send. */
export function boss(opts: { worker?: boolean } = {}): Promise<PgBoss> {
  bossPromise ??= (async () => {
    const b = new PgBoss({
      connectionString: config().DATABASE_URL,
      max: opts.worker ? 6 : 3,
      supervise: !!opts.worker,
      schedule: false,
      maintenanceIntervalSeconds: 30,
      monitorStateIntervalSeconds: 60,
    });
    b.on('error', (err) => console.error('[fillcard] queue error:', err));
    await b.start();
    for (const q of Object.values(QUEUES)) {
      const { name, ...policy } = q;
      if (!(await b.getQueue(name))) await b.createQueue(name, { name, ...policy });
    }
    return b;
  })();
  return bossPromise;
}

/**
 * Sends a job. On these standard queues a repeated send is not dropped by pg-boss; every handler is
 * idempotent instead (frames and finals are claimed, e-mails are sent once per outbox row), so a
 * repeat costs a no-op. The key labels the job for inspection.
 */
export async function enqueue(queue: (typeof QUEUES)[keyof typeof QUEUES], data: object, singletonKey?: string) {
  const b = await boss();
  return b.send(queue.name, data, { singletonKey });
}

export async function stopBoss() {
  if (!bossPromise) return;
  const b = await bossPromise;
  bossPromise = undefined;
  await b.stop({ graceful: true, wait: true, timeout: 10_000 });
}
