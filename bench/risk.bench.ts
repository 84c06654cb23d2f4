// Portfolio risk on a factor model: 100 portfolios on N = 2000 assets, L = 10 (target ≤ 50 ms on this 2-core
// machine). Also times the Woodbury minimum-variance weights, Monte Carlo VaR and principal angles at that size.
// Invented planted model (demo data, not market data). Median wall time of several runs after a warm-up.
import { loadavg } from 'node:os';
import { performance } from 'node:perf_hooks';
import { plantedPanel } from '../server/engine/planted';
import { createRandom } from '../server/engine/random';
import { portfolioRiskBatch, monteCarloRisk } from '../server/engine/risk';
import { minimumVarianceWeights } from '../server/engine/evaluation';
import { loadingSubspaceAngles, varimax } from '../server/engine/rotation';
import { factorScores } from '../server/engine/scores';
import type { FactorModel } from '../server/engine/types';

function median(values: number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** Median wall time and median CPU time (user + system of this process, less affected by other load). */
function time<T>(fn: () => T, runs: number): { ms: number; min: number; max: number; cpuMs: number; result: T } {
  let result = fn(); // warm-up (JIT)
  const times: number[] = [];
  const cpu: number[] = [];
  for (let r = 0; r < runs; r++) {
    const cpuStart = process.cpuUsage();
    const start = performance.now();
    result = fn();
    times.push(performance.now() - start);
    const used = process.cpuUsage(cpuStart);
    cpu.push((used.user + used.system) / 1000);
  }
  return { ms: median(times), min: Math.min(...times), max: Math.max(...times), cpuMs: median(cpu), result };
}

export default async function run(): Promise<void> {
  // The machine is shared: the load average tells how much the medians below are inflated by other work.
  console.log(`load average (1 min) at start: ${loadavg()[0].toFixed(1)} on 2 cores`);
  const n = 2000;
  const l = 10;
  const planted = plantedPanel({ assets: n, observations: 1, factors: l, seed: 2026 });
  const model: FactorModel = {
    kind: 'factor', method: 'fa', assets: n, factors: l,
    mean: planted.mean, loadings: planted.loadings, specificVariance: planted.specificVariance,
  };
  const rng = createRandom(7);
  const portfolios = Array.from({ length: 100 }, () => {
    const w = new Float64Array(n);
    for (let i = 0; i < n; i++) w[i] = rng.uniform() < 0.3 ? rng.uniform() : 0; // sparse long-only books
    const total = w.reduce((s, v) => s + v, 0);
    for (let i = 0; i < n; i++) w[i] /= total;
    return w;
  });
  const benchmark = new Float64Array(n).fill(1 / n);

  const batch = time(() => portfolioRiskBatch(model, portfolios, { benchmark, horizon: 10 }), 25);
  console.log(
    `risk of 100 portfolios (N=${n}, L=${l}; variance, contributions, tracking error, VaR/ES, exposures): ` +
      `median ${batch.ms.toFixed(1)} ms wall (min ${batch.min.toFixed(1)}, max ${batch.max.toFixed(1)}; target ≤ 50 ms), ` +
      `median ${batch.cpuMs.toFixed(1)} ms CPU ` +
      `— first portfolio annualised volatility ${(batch.result[0].annualisedVolatility * 100).toFixed(2)} %`,
  );

  const minVar = time(() => minimumVarianceWeights(model), 15);
  console.log(`minimum-variance weights by Woodbury (N=${n}, L=${l}): median ${minVar.ms.toFixed(2)} ms`);

  const mc = time(() => monteCarloRisk(model, portfolios.slice(0, 10), { seed: 1, draws: 10_000 }), 3);
  console.log(`Monte Carlo VaR/ES, 10 000 portfolio-level draws of the N=${n} generative model, 10 portfolios: median ${mc.ms.toFixed(0)} ms`);

  const other: FactorModel = { ...model, loadings: plantedPanel({ assets: n, observations: 1, factors: l, seed: 2027 }).loadings };
  const angles = time(() => loadingSubspaceAngles(model, other), 7);
  console.log(`principal angles between two N=${n}, L=${l} loading subspaces: median ${angles.ms.toFixed(1)} ms`);

  const rotated = time(() => varimax(model.loadings, n, l), 3);
  console.log(`varimax (normalised) of N=${n}, L=${l} loadings: median ${rotated.ms.toFixed(0)} ms, ${rotated.result.iterations} sweeps`);

  const panel = plantedPanel({ assets: n, observations: 1000, factors: l, seed: 2028, missingShare: 0.02 }).panel;
  const scores = time(() => factorScores(model, panel), 3);
  console.log(`factor scores for T=1000 dates × N=${n} (2 % missing entries), L=${l}: median ${scores.ms.toFixed(0)} ms`);

  const memory = process.memoryUsage();
  console.log(`peak-ish memory after the risk bench: rss ${(memory.rss / 2 ** 20).toFixed(0)} MiB, heap ${(memory.heapUsed / 2 ** 20).toFixed(0)} MiB`);
}
