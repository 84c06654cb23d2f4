import { useMemo, useState } from 'react';
import { Link } from 'react-router-dom';
import type { ColDef } from 'ag-grid-community';
import type { AssetListDetail, AssetListSummary } from '@shared/schemas/assetLists';
import type { ModelRun } from '@shared/schemas/modelRuns';
import { Card } from '../../components/Card';
import { Button } from '../../components/Button';
import { Alert, ErrorAlert } from '../../components/Alert';
import { DataGrid } from '../../components/DataGrid';
import { formatDateTime } from '../../lib/format';
import { useModelRunsOverList } from '../models/api';
import { RunStatusBadge } from '../models/RunProgress';
import { useAssetList, useDeleteAssetList } from './api';

type MemberRow = AssetListDetail['assets'][number] & { position: number };

/** At most this many fits are listed (the newest): GET /api/model-runs' largest `limit`. */
const MAX_RUNS = 500;

/** The selected list: its details, its assets in the order entered, the fits that used it, and (owner or admin) delete. */
export function AssetListPanel({ summary, onClose, onDeleted }: { summary: AssetListSummary; onClose: () => void; onDeleted: (name: string) => void }) {
  const detail = useAssetList(summary.id);
  const runs = useModelRunsOverList(summary.id);
  const remove = useDeleteAssetList();
  const [confirming, setConfirming] = useState(false);
  const usedBy: ModelRun[] = runs.data ?? [];
  const rows = useMemo<MemberRow[] | undefined>(() => detail.data?.assets.map((asset, k) => ({ ...asset, position: k + 1 })), [detail.data]);
  // A queued fit resolves the list when a worker takes it, so deleting the list now makes that fit fail.
  const queuedRuns = usedBy.filter((run) => run.status === 'queued');

  const columns = useMemo<ColDef<MemberRow>[]>(
    () => [
      { field: 'position', headerName: '#', type: 'figure', maxWidth: 80, sort: 'asc' },
      { field: 'symbol', headerName: 'Symbol', cellClass: 'll-figure', minWidth: 110, maxWidth: 160 },
      { field: 'name', headerName: 'Name', flex: 2, minWidth: 180 },
      { field: 'sector', headerName: 'Sector', valueFormatter: (p) => p.value ?? '—', minWidth: 140 },
    ],
    [],
  );

  return (
    <Card
      title={summary.name}
      actions={
        <Button size="sm" variant="quiet" onClick={onClose} aria-label="Close the list">
          Close
        </Button>
      }
    >
      <div className="grid gap-5 lg:grid-cols-[18rem_1fr]">
        <div className="flex flex-col gap-4">
          <dl className="grid grid-cols-[auto_1fr] gap-x-3 gap-y-1.5 text-sm">
            <dt className="text-ink-soft">Owner</dt>
            <dd>{summary.owner.name}</dd>
            <dt className="text-ink-soft">Assets</dt>
            <dd className="font-mono tabular-nums">{summary.size}</dd>
            <dt className="text-ink-soft">Created</dt>
            <dd className="font-mono text-xs leading-5 tabular-nums">{formatDateTime(summary.createdAt)}</dd>
            {summary.description ? (
              <>
                <dt className="text-ink-soft">About</dt>
                <dd>{summary.description}</dd>
              </>
            ) : null}
          </dl>

          <section aria-label="Fits over this list" className="flex flex-col gap-1.5">
            <h3 className="text-xs font-semibold tracking-wide text-ink-soft uppercase">Fits over this list</h3>
            {runs.isError ? <ErrorAlert error={runs.error} title="The model runs could not be loaded" /> : null}
            {runs.isPending ? <p className="text-xs text-ink-faint">Loading…</p> : null}
            {runs.data && usedBy.length === 0 ? <p className="text-sm text-ink-soft">No fit has used this list yet.</p> : null}
            {usedBy.length ? (
              <ul className="flex flex-col gap-1 text-sm">
                {usedBy.map((run) => (
                  <li key={run.id} className="flex items-center justify-between gap-2">
                    <Link className="truncate font-medium text-accent hover:underline" to={`/models/${run.id}`}>
                      {run.label}
                    </Link>
                    <RunStatusBadge run={run} />
                  </li>
                ))}
              </ul>
            ) : null}
            {usedBy.length >= MAX_RUNS ? <p className="text-xs text-ink-faint">The {MAX_RUNS} newest fits are listed.</p> : null}
          </section>

          {summary.canDelete ? (
            <section aria-label="Delete the list" className="flex flex-col gap-2 border-t border-line pt-3">
              {remove.isError ? <ErrorAlert error={remove.error} title="The list was not deleted" /> : null}
              {!confirming ? (
                <Button variant="danger" onClick={() => setConfirming(true)}>
                  Delete list
                </Button>
              ) : (
                <Alert tone="warn" title={`Delete “${summary.name}”?`}>
                  <p>
                    This cannot be undone. Fits already done keep their assets
                    {queuedRuns.length ? `; ${queuedRuns.length} queued fit${queuedRuns.length > 1 ? 's' : ''} over this list would fail` : ''}.
                  </p>
                  <div className="mt-2 flex gap-2">
                    <Button
                      size="sm"
                      variant="danger"
                      disabled={remove.isPending}
                      onClick={() => remove.mutate(summary.id, { onSuccess: () => onDeleted(summary.name) })}
                    >
                      {remove.isPending ? 'Deleting…' : 'Yes, delete the list'}
                    </Button>
                    <Button size="sm" variant="quiet" onClick={() => setConfirming(false)}>
                      Keep it
                    </Button>
                  </div>
                </Alert>
              )}
            </section>
          ) : null}
        </div>

        <div className="min-w-0">
          {detail.isError ? <ErrorAlert error={detail.error} title="The list could not be loaded" /> : null}
          <DataGrid<MemberRow>
            ariaLabel={`Assets of ${summary.name}`}
            rows={rows}
            columns={columns}
            loading={detail.isPending}
            getRowId={(p) => String(p.data.id)}
            quickSearch
            csvFileName={`asset-list-${summary.id}.csv`}
            height={420}
            emptyMessage="No assets"
          />
        </div>
      </div>
    </Card>
  );
}
