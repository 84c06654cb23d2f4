/**
 * One long-lived fit thread per worker process (starting one costs about half a second under tsx, so it is kept),
 * replaced only when a fit is cancelled (terminating the thread is the only way to stop a synchronous fit at once).
 */
import { Worker } from 'node:worker_threads';
import type { FitProgress } from '../engine/types';
import type { ModelRunParameters } from '../../shared/schemas/modelRuns';
import type { FitComputation } from './fitCompute';

export class FitCancelled extends Error {
  constructor(reason: string) {
    super(reason);
  }
}

/** The thread went away without an answer (worker shutting down, out of memory): an infrastructure failure, retried. */
export class FitThreadStopped extends Error {}

export interface FitHandle {
  result: Promise<FitComputation>;
  /** Stops the fit now; `result` rejects with FitCancelled(reason). */
  cancel(reason: string): void;
}

let thread: Promise<Worker> | null = null;
let nextId = 1;

function startThread(): Promise<Worker> {
  return new Promise((resolve, reject) => {
    const worker = new Worker(new URL('./fitThread.mjs', import.meta.url));
    worker.unref();
    const onMessage = (m: { type: string }) => {
      if (m.type !== 'ready') return;
      worker.off('message', onMessage);
      worker.off('error', reject);
      resolve(worker);
    };
    worker.on('message', onMessage);
    worker.once('error', reject);
    worker.once('exit', () => {
      if (thread && currentWorker === worker) thread = null;
    });
    currentWorker = worker;
  });
}
let currentWorker: Worker | null = null;

function getThread(): Promise<Worker> {
  if (!thread) {
    thread = startThread();
    thread.catch(() => {
      thread = null;
    });
  }
  return thread;
}

/** Starts the fit thread ahead of the first job (worker start-up). */
export async function warmFitThread(): Promise<void> {
  await getThread();
}

export function runFit(values: Float64Array, observations: number, assets: number, parameters: ModelRunParameters, onProgress: (p: FitProgress) => void): FitHandle {
  const id = nextId++;
  let pendingCancel: string | null = null;
  let cancel: (reason: string) => void = (reason) => {
    pendingCancel = reason;
  };
  const result = new Promise<FitComputation>((resolve, reject) => {
    let settled = false;
    getThread().then((worker) => {
      if (pendingCancel !== null) return reject(new FitCancelled(pendingCancel));
      const cleanup = () => {
        settled = true;
        worker.off('message', onMessage);
        worker.off('error', onError);
        worker.off('exit', onExit);
      };
      const onMessage = (m: { type: string; id: number; stage?: string; iteration?: number; logLikelihood?: number | null; result?: FitComputation; message?: string }) => {
        if (m.id !== id) return;
        if (m.type === 'progress') onProgress({ stage: m.stage!, iteration: m.iteration!, logLikelihood: m.logLikelihood ?? undefined });
        else if (m.type === 'result') {
          cleanup();
          resolve(m.result!);
        } else if (m.type === 'error') {
          cleanup();
          reject(new Error(m.message));
        }
      };
      const onError = (error: Error) => {
        cleanup();
        thread = null;
        reject(error);
      };
      const onExit = (code: number) => {
        if (settled) return;
        cleanup();
        thread = null;
        reject(new FitThreadStopped(`the fit thread stopped (exit code ${code})`));
      };
      cancel = (reason: string) => {
        if (settled) return;
        cleanup();
        thread = null;
        void worker.terminate();
        reject(new FitCancelled(reason));
      };
      worker.on('message', onMessage);
      worker.on('error', onError);
      worker.on('exit', onExit);
      worker.postMessage({ type: 'fit', id, values, observations, assets, parameters }, [values.buffer as ArrayBuffer]);
    }, reject);
  });
  return { result, cancel: (reason) => cancel(reason) };
}

/** Stops the fit thread (worker shutdown, tests). */
export async function stopFitThread(): Promise<void> {
  const t = thread;
  thread = null;
  if (t) await (await t).terminate().catch(() => 0);
}
