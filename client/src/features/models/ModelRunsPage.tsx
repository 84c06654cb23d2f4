import { useState } from 'react';
import { Link, useNavigate } from 'react-router-dom';
import { ESTIMATOR_LABELS, type ModelRun } from '@shared/schemas/modelRuns';
import { PageHeader } from '../../components/PageHeader';
import { Card } from '../../components/Card';
import { Button } from '../../components/Button';
import { Alert, ErrorAlert } from '../../components/Alert';
import { formatDateTime } from '../../lib/format';
import { useCurrentUser } from '../../app/currentUser';
import { useCancelRun, useModelRuns } from './api';
import { RunForm } from './RunForm';
import { LifecycleBadge, RunProgress, RunStatusBadge } from './RunProgress';

/** Model runs: start a fit, watch it, open or compare the results. */
export default function ModelRunsPage() {
  const user = useCurrentUser();
  const canRun = user.role === 'analyst' || user.role === 'admin';
  const runs = useModelRuns();
  const cancel = useCancelRun();
  const navigate = useNavigate();
  const [formOpen, setFormOpen] = useState(false);
  const [queued, setQueued] = useState<ModelRun | null>(null);
  const [compare, setCompare] = useState<number[]>([]);

  const toggleCompare = (id: number) => setCompare((c) => (c.includes(id) ? c.filter((x) => x !== id) : [...c.slice(-1), id]));

  return (
    <div className="flex flex-col gap-4">
      <PageHeader
        title="Models"
        description="Factor-model and covariance fits of the stored returns. A fit runs in the background; a second analyst approves it before portfolio views use it by default."
        actions={
          <>
            <Button disabled={compare.length !== 2} onClick={() => navigate(`/models/compare?first=${compare[0]}&second=${compare[1]}`)}>
              Compare selected ({compare.length}/2)
            </Button>
            {canRun ? (
              <Button variant="primary" onClick={() => setFormOpen((o) => !o)}>
                {formOpen ? 'Close the form' : 'New fit'}
              </Button>
            ) : null}
          </>
        }
      />
      {formOpen && canRun ? (
        <Card title="New fit">
          <RunForm
            onQueued={(run) => {
              setQueued(run);
              setFormOpen(false);
            }}
          />
        </Card>
      ) : null}
      {queued ? (
        <Alert tone="ok" title={`${queued.label} is queued`}>
          Its progress shows below. <Link className="underline" to={`/models/${queued.id}`}>Open the run</Link>
        </Alert>
      ) : null}
      {runs.isError ? <ErrorAlert error={runs.error} /> : null}
      {cancel.isError ? <ErrorAlert error={cancel.error} title="Not cancelled" /> : null}
      <Card title="Runs" padded={false}>
        <div className="overflow-x-auto">
          <table className="w-full text-sm" aria-label="Model runs">
            <thead className="border-b border-line bg-sunken text-left text-xs text-ink-soft">
              <tr>
                <th className="px-3 py-2 font-medium">Compare</th>
                <th className="px-3 py-2 font-medium">Version</th>
                <th className="px-3 py-2 font-medium">Estimator</th>
                <th className="px-3 py-2 font-medium">N × T, L</th>
                <th className="px-3 py-2 font-medium">Status</th>
                <th className="px-3 py-2 font-medium">Progress</th>
                <th className="px-3 py-2 font-medium">Lifecycle</th>
                <th className="px-3 py-2 font-medium">Run by</th>
                <th className="px-3 py-2 font-medium">Created</th>
                <th className="px-3 py-2" />
              </tr>
            </thead>
            <tbody>
              {runs.data?.length === 0 ? (
                <tr>
                  <td colSpan={10} className="px-3 py-6 text-center text-ink-faint">
                    No fits yet.
                  </td>
                </tr>
              ) : null}
              {runs.data?.map((run) => (
                <tr key={run.id} className="border-b border-line last:border-0" data-run-id={run.id}>
                  <td className="px-3 py-2">
                    <input type="checkbox" aria-label={`Compare ${run.label}`} disabled={run.status !== 'succeeded'} checked={compare.includes(run.id)} onChange={() => toggleCompare(run.id)} />
                  </td>
                  <td className="px-3 py-2">
                    <Link className="font-medium text-accent hover:underline" to={`/models/${run.id}`}>
                      {run.label}
                    </Link>
                  </td>
                  <td className="px-3 py-2 text-ink-soft">{ESTIMATOR_LABELS[run.estimator]}</td>
                  <td className="px-3 py-2 font-mono text-xs tabular-nums">{run.summary ? `${run.summary.assets} × ${run.summary.observations}, L = ${run.summary.factors}` : '—'}</td>
                  <td className="px-3 py-2">
                    <RunStatusBadge run={run} />
                  </td>
                  <td className="px-3 py-2">
                    <RunProgress run={run} />
                  </td>
                  <td className="px-3 py-2">
                    <LifecycleBadge run={run} />
                  </td>
                  <td className="px-3 py-2 text-ink-soft">{run.createdBy?.name ?? '—'}</td>
                  <td className="px-3 py-2 font-mono text-xs tabular-nums">{formatDateTime(run.createdAt)}</td>
                  <td className="px-3 py-2 text-right">
                    {canRun && (run.status === 'queued' || run.status === 'running') ? (
                      <Button size="sm" variant="danger" disabled={cancel.isPending} onClick={() => cancel.mutate(run.id)}>
                        Cancel
                      </Button>
                    ) : null}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </Card>
    </div>
  );
}
