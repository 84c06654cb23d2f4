/**
 * Estimation-engine benchmark: invented planted panels (8 true factors, Student-t(5) noise, seeded), L = 10.
 * Prints, per panel size and estimator, the median wall time, iterations, log-likelihood reached and memory; and,
 * when Debian's python3-sklearn is present, scikit-learn's FactorAnalysis (lapack and randomized) on the same data.
 * Targets (2-core machine): FA 1000 × 750 ≤ 1 s to the optimum, FA 2000 × 1000 ≤ 3 s, PPCA 2000 × 1000 ≤ 0.5 s.
 * Run: npx tsx -e "import('./bench/engine.bench.ts').then(m=>m.default())"
 */
import { execFileSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fitModel, type FitMethod, type FitResult } from '../server/engine/fit';
import { nativeBlasInfo } from '../server/engine/linalg/native';
import { plantedPanel } from '../server/engine/planted';

const SIZES: [number, number][] = [
  [100, 250],
  [500, 500],
  [1000, 750],
  [2000, 1000],
];
const FACTORS = 10;
const METHODS: FitMethod[] = ['sample', 'ledoit-wolf', 'ppca', 'fa'];
const PYTHON = '/usr/bin/python3';

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)];
}
const mb = (bytes: number) => (bytes / 2 ** 20).toFixed(0);

function hasSklearn(): boolean {
  if (!existsSync(PYTHON)) return false;
  try {
    execFileSync(PYTHON, ['-c', 'import sklearn'], { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
}

function pad(cells: (string | number)[], widths: number[]): string {
  return cells.map((c, i) => String(c).padStart(widths[i])).join('  ');
}

export default async function run(): Promise<void> {
  const sklearn = hasSklearn() && process.env.ENGINE_BENCH_SKLEARN !== '0';
  const reps = Number(process.env.ENGINE_BENCH_REPS ?? 3);
  const header = ['N×T', 'estimator', 'median s', 'cpu s', 'runs', 'iter', 'steps', 'loglik', 'loglik/T', 'heap MB', 'maxRSS MB'];
  const widths = [10, 18, 9, 7, 4, 5, 8, 16, 11, 8, 9];
  console.log('Estimation engine benchmark (planted panels: 8 factors, Student-t(5) noise; L = 10; median wall time; cpu s = this process, all threads)');
  console.log(`threads: ${process.env.LOADLINE_ENGINE_THREADS ?? 'default (cores, max 4)'}; load average at start: ${loadavg().map((x) => x.toFixed(1)).join(' ')}`);
  const blas = nativeBlasInfo();
  console.log(`products: ${blas.active ? `native BLAS (${blas.detail})` : `JS kernels (${blas.detail})`}`);
  console.log(pad(header, widths));
  const faRows: { size: string; seconds: number; ll: number }[] = [];
  const tmp = mkdtempSync(join(tmpdir(), 'engine-bench-'));
  try {
    for (const [n, t] of SIZES) {
      const { panel } = plantedPanel({ assets: n, observations: t, factors: 8, seed: 2024 + n, noise: 'student-t' });
      const size = `${n}×${t}`;
      for (const method of METHODS) {
        const times: number[] = [];
        const cpu: number[] = [];
        let result: FitResult | undefined;
        const runs = n >= 2000 && (method === 'sample' || method === 'ledoit-wolf') ? 1 : reps;
        for (let r = 0; r < runs; r++) {
          const start = performance.now();
          const cpu0 = process.cpuUsage();
          result = fitModel(panel, { method, factors: FACTORS, denseLogLikelihood: false });
          times.push((performance.now() - start) / 1000);
          const used = process.cpuUsage(cpu0);
          cpu.push((used.user + used.system) / 1e6);
        }
        const d = result!.diagnostics;
        // dense estimators: likelihood computed once, outside the timing (an N × N Cholesky)
        let ll = d.logLikelihood;
        if (method === 'sample' || method === 'ledoit-wolf') ll = fitModel(panel, { method }).diagnostics.logLikelihood;
        const mem = process.memoryUsage();
        const maxRss = process.resourceUsage().maxRSS * 1024;
        console.log(
          pad(
            [size, method, median(times).toFixed(3), median(cpu).toFixed(3), runs, d.iterations, d.evaluations, ll === null ? 'singular' : ll.toFixed(3), ll === null ? '—' : (ll / t).toFixed(4), mb(mem.heapUsed + mem.arrayBuffers), mb(maxRss)],
            widths,
          ),
        );
        if (method === 'fa') faRows.push({ size, seconds: median(times), ll: ll ?? NaN });
      }
      if (sklearn) {
        const file = join(tmp, `panel-${n}x${t}.bin`);
        writeFileSync(file, Buffer.from(panel.values.buffer, panel.values.byteOffset, panel.values.byteLength));
        try {
          const out = JSON.parse(execFileSync(PYTHON, [join(process.cwd(), 'bench', 'sklearn_fa.py'), file, String(t), String(n), String(FACTORS)], { encoding: 'utf8', timeout: 600_000 })) as Record<
            'lapack' | 'randomized',
            { seconds: number; loglike: number; iterations: number }
          >;
          const ours = faRows[faRows.length - 1];
          for (const mode of ['lapack', 'randomized'] as const) {
            const o = out[mode];
            console.log(
              pad([size, `sklearn ${mode}`, o.seconds.toFixed(3), '', 1, o.iterations, '', o.loglike.toFixed(3), (o.loglike / t).toFixed(4), '', ''], widths) +
                `   ours/sklearn time ${(ours.seconds / o.seconds).toFixed(2)}×, ours − sklearn loglik ${(ours.ll - o.loglike).toFixed(3)} (${((ours.ll - o.loglike) / t).toFixed(4)} per date)`,
            );
          }
        } catch (error) {
          console.log(`${size}  scikit-learn comparison failed: ${(error as Error).message.split('\n')[0]}`);
        }
      }
    }
  } finally {
    rmSync(tmp, { recursive: true, force: true });
  }
  if (!sklearn) console.log('(scikit-learn comparison skipped: /usr/bin/python3 with sklearn not found)');
  console.log(`load average at end: ${loadavg().map((x) => x.toFixed(1)).join(' ')} (the machine is shared: compare with scikit-learn's time in the same run)`);
  console.log('Targets: FA 1000×750 ≤ 1 s, FA 2000×1000 ≤ 3 s, PPCA 2000×1000 ≤ 0.5 s (to the optimum: FA stops when a SQUAREM cycle gains < 1e-12 relative and no Ψᵢ moves by 1e-7; steps = profile steps, each a warm-started top-L eigensolve).');
}
