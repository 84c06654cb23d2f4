import type PgBoss from 'pg-boss';
import { registerModelFitJobs } from './modelRunJob';

/** Every queue the worker serves: each feature adds its queue and handler here. */
export async function registerJobHandlers(boss: PgBoss): Promise<void> {
  await registerModelFitJobs(boss);
}
