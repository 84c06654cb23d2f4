/**
 * The model-fit queue (pg-boss 10, jobs stored in PostgreSQL schema `pgboss`). The web server only sends jobs;
 * worker processes (server/worker/main.ts, any number, on any machine with the database) take them.
 */
import PgBoss from 'pg-boss';

export const MODEL_FIT_QUEUE = 'model-fit';

/** Queue policy: a killed worker's job is retried (up to 2 more attempts) once it expires or the sweep fails it. */
export const MODEL_FIT_QUEUE_OPTIONS = {
  name: MODEL_FIT_QUEUE,
  retryLimit: 2,
  retryDelay: 1,
  expireInSeconds: 30 * 60,
} as const;

export interface ModelFitJob {
  runId: number;
}

const senders = new Map<string, Promise<PgBoss>>();

/** A started pg-boss instance that only sends (no maintenance, no schedules) for this database; shared per process. */
export function queueSender(databaseUrl: string): Promise<PgBoss> {
  let sender = senders.get(databaseUrl);
  if (!sender) {
    sender = (async () => {
      const boss = new PgBoss({ connectionString: databaseUrl, schema: 'pgboss', max: 2, supervise: false, schedule: false });
      boss.on('error', (error) => console.error('[queue]', error));
      await boss.start();
      await ensureModelFitQueue(boss);
      return boss;
    })();
    sender.catch(() => senders.delete(databaseUrl));
    senders.set(databaseUrl, sender);
  }
  return sender;
}

export async function ensureModelFitQueue(boss: PgBoss): Promise<void> {
  const existing = await boss.getQueue(MODEL_FIT_QUEUE);
  if (!existing) {
    try {
      await boss.createQueue(MODEL_FIT_QUEUE, MODEL_FIT_QUEUE_OPTIONS);
    } catch (error) {
      // Two processes creating it at once: the loser sees a unique violation.
      if (!(await boss.getQueue(MODEL_FIT_QUEUE))) throw error;
    }
  }
}

/** Stops this process's senders (tests, shutdown). */
export async function stopQueueSenders(): Promise<void> {
  const all = [...senders.values()];
  senders.clear();
  for (const s of all) await (await s.catch(() => null))?.stop({ graceful: false, wait: true }).catch(() => undefined);
}
