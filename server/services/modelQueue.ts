/**
 * The model-fit queue (pg-boss 10, jobs stored in PostgreSQL schema `pgboss`). The web server only sends jobs;
 * worker processes (server/worker/main.ts, any number, on any machine with the database) take them.
 */
import PgBoss from 'pg-boss';

let queueName = process.env.LOADLINE_MODEL_FIT_QUEUE || 'model-fit';

/** The queue's name: 'model-fit', or LOADLINE_MODEL_FIT_QUEUE (test files use one of their own so their workers never take each other's jobs). */
export function modelFitQueue(): string {
  return queueName;
}

/** Switches this process to another queue name (tests; call before anything is sent). */
export function useModelFitQueue(name: string): void {
  queueName = name;
}

/**
 * PostgreSQL channel on which the web server announces a new job (payload: the queue name), so idle workers fetch at
 * once instead of at their next poll (pg-boss 10 polls every 0.5 s at best; notifyWorker wakes a worker early).
 */
export const MODEL_FIT_CHANNEL = 'loadline_model_fit';

/** Queue policy: a killed worker's job is retried (up to 2 more attempts) once it expires or the sweep fails it. */
export const MODEL_FIT_QUEUE_OPTIONS = {
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

const created = new Set<string>();

export async function ensureModelFitQueue(boss: PgBoss): Promise<void> {
  const name = modelFitQueue();
  if (created.has(name)) return;
  if (!(await boss.getQueue(name))) {
    try {
      await boss.createQueue(name, { name, ...MODEL_FIT_QUEUE_OPTIONS });
    } catch (error) {
      // Two processes creating it at once: the loser sees a unique violation.
      if (!(await boss.getQueue(name))) throw error;
    }
  }
  created.add(name);
}

/** Stops this process's senders (tests, shutdown). */
export async function stopQueueSenders(): Promise<void> {
  const all = [...senders.values()];
  senders.clear();
  for (const s of all) await (await s.catch(() => null))?.stop({ graceful: false, wait: true }).catch(() => undefined);
}
