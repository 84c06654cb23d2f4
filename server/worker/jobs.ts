import type PgBoss from 'pg-boss';
import { registerModelFitJobs } from './modelRunJob';
import { stopFitThread } from './fitPool';

/** Every queue the worker serves: each feature adds its queue and handler here. */
export async function registerJobHandlers(boss: PgBoss): Promise<void> {
  await registerModelFitJobs(boss);
  // On shutdown, stop a running fit at once: its run goes back to the queue and pg-boss retries it on another worker
  // (registered before main.ts's own handler, so this runs first).
  for (const signal of ['SIGTERM', 'SIGINT'] as const) process.once(signal, () => void stopFitThread());
}
