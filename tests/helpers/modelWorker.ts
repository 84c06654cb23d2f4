import type PgBoss from 'pg-boss';
import { createBoss } from '../../server/worker/boss';
import { registerModelFitJobs } from '../../server/worker/modelRunJob';
import { stopFitThread } from '../../server/worker/fitPool';
import { stopQueueSenders } from '../../server/services/modelQueue';
import { signIn } from './app';
import type { createApp } from '../../server/app';

/**
 * The real model-fit job handler on a real pg-boss in the test's own process (as the worker process registers it),
 * with a fast heartbeat and sweep so dead-worker recovery shows within seconds.
 */
export function inProcessModelWorker(databaseUrl: string) {
  let boss: PgBoss | undefined;
  let stopSweep: () => void = () => {};
  return {
    async start(): Promise<PgBoss> {
      boss = createBoss(databaseUrl);
      await boss.start();
      stopSweep = await registerModelFitJobs(boss, { staleSeconds: 3, sweepMs: 500, heartbeatMs: 250, log: () => {} });
      return boss;
    },
    /** Stops the handler, the queue and the fit thread (call in afterAll, whether or not start ran). */
    async stop(): Promise<void> {
      stopSweep();
      await boss?.stop({ graceful: false, wait: true }).catch(() => undefined);
      await stopQueueSenders();
      await stopFitThread();
    },
  };
}

/** Bearer tokens of the demo users model-run tests act as: both analysts (creator and approver), an admin, a PM. */
export async function modelRunTokens(app: ReturnType<typeof createApp>): Promise<Record<'analyst' | 'analyst2' | 'admin' | 'pm', string>> {
  return {
    analyst: await signIn(app, 'analyst'),
    analyst2: await signIn(app, { email: 'analyst2@quillfield.example', password: 'demo-analyst-pass' }),
    admin: await signIn(app, 'admin'),
    pm: await signIn(app, 'pm'),
  };
}
