import type { ModelRun } from '@shared/schemas/modelRuns';
import { StatusBadge } from '../../components/StatusBadge';
import { formatNumber } from '../../components/Figure';

const STATUS_TONE = { queued: 'neutral', running: 'info', succeeded: 'ok', failed: 'breach', cancelled: 'warn' } as const;
const LIFECYCLE_TONE = { draft: 'neutral', approved: 'ok', retired: 'warn' } as const;

export function RunStatusBadge({ run }: { run: ModelRun }) {
  return <StatusBadge tone={STATUS_TONE[run.status]}>{run.status}</StatusBadge>;
}

export function LifecycleBadge({ run }: { run: ModelRun }) {
  return <StatusBadge tone={LIFECYCLE_TONE[run.lifecycle]}>{run.lifecycle}</StatusBadge>;
}

/** The live progress bar: stage, iteration and log-likelihood as the worker reports them. */
export function RunProgress({ run }: { run: ModelRun }) {
  const fraction = run.status === 'succeeded' ? 1 : run.progress.fraction;
  const percent = Math.round(fraction * 100);
  const barColour = run.status === 'failed' ? 'bg-breach' : run.status === 'cancelled' ? 'bg-warn' : run.status === 'succeeded' ? 'bg-ok' : 'bg-accent';
  const detail =
    run.status === 'queued'
      ? run.progress.stage ?? 'waiting for a worker'
      : run.status === 'running'
        ? [run.progress.stage, run.progress.iteration ? `iteration ${run.progress.iteration}` : null, run.progress.logLikelihood !== null ? `log-likelihood ${formatNumber(run.progress.logLikelihood, 2)}` : null]
            .filter(Boolean)
            .join(' · ')
        : run.status === 'succeeded'
          ? `done${run.fitSeconds !== null ? ` in ${formatNumber(run.fitSeconds, 2)} s` : ''}`
          : (run.error ?? run.status);
  return (
    <div className="flex min-w-48 flex-col gap-1">
      <div
        role="progressbar"
        aria-label={`Progress of ${run.label}`}
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={percent}
        aria-valuetext={`${percent} % — ${detail}`}
        className="h-2 w-full overflow-hidden rounded-full bg-sunken ring-1 ring-line"
      >
        <div className={`h-full ${barColour} transition-[width] duration-500`} style={{ width: `${percent}%` }} />
      </div>
      <span className="truncate text-xs text-ink-soft" title={detail}>
        <span className="font-mono tabular-nums">{percent} %</span> · {detail}
      </span>
    </div>
  );
}
