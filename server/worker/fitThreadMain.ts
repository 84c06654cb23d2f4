/**
 * The fit thread: runs computeModelRun off the worker's event loop, so heartbeats, progress writes and
 * cancellation keep flowing while a long fit computes. Protocol (postMessage):
 *   in:  { type: 'fit', id, values (Float64Array, transferred), observations, assets, parameters }
 *   out: { type: 'progress', id, stage, iteration, logLikelihood } (at most every 100 ms)
 *        { type: 'result', id, result } | { type: 'error', id, message }
 */
import { parentPort } from 'node:worker_threads';
import { computeModelRun } from './fitCompute';
import type { ModelRunParameters } from '../../shared/schemas/modelRuns';

interface FitRequest {
  type: 'fit';
  id: number;
  values: Float64Array;
  observations: number;
  assets: number;
  parameters: ModelRunParameters;
}

const port = parentPort!;
port.on('message', (message: FitRequest) => {
  if (message.type !== 'fit') return;
  const { id } = message;
  let lastSent = 0;
  try {
    const result = computeModelRun({ values: message.values, observations: message.observations, assets: message.assets }, message.parameters, (p) => {
      const now = performance.now();
      if (now - lastSent < 100) return;
      lastSent = now;
      port.postMessage({ type: 'progress', id, stage: p.stage, iteration: p.iteration, logLikelihood: p.logLikelihood ?? null });
    });
    const transfer: ArrayBuffer[] = [];
    const m = result.model;
    for (const a of m.kind === 'factor' ? [m.mean, m.loadings, m.specificVariance] : [m.mean, m.covariance]) transfer.push(a.buffer as ArrayBuffer);
    if (result.factorScores) transfer.push(result.factorScores.buffer as ArrayBuffer);
    port.postMessage({ type: 'result', id, result }, [...new Set(transfer)]);
  } catch (error) {
    port.postMessage({ type: 'error', id, message: error instanceof Error ? error.message : String(error) });
  }
});
port.postMessage({ type: 'ready' });
