import { useEffect, useMemo, useState } from 'react';
import { Link } from 'react-router-dom';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import type { ColDef } from 'ag-grid-community';
import type { AssetQuality } from '@shared/schemas/dataQuality';
import type { ImportBatch, ImportBatchDetail } from '@shared/schemas/imports';
import { PageHeader } from '../../components/PageHeader';
import { Card } from '../../components/Card';
import { Button } from '../../components/Button';
import { Field } from '../../components/Field';
import { Alert, ErrorAlert } from '../../components/Alert';
import { Caution } from '../../components/Caution';
import { DataGrid } from '../../components/DataGrid';
import { StatusBadge } from '../../components/StatusBadge';
import { formatCount, formatDateTime } from '../../lib/format';
import { useCurrentUser } from '../../app/currentUser';
import { useDownloadProblems } from '../imports/api';
import { CoverageHeatmap } from './CoverageHeatmap';
import { useAsset, useCoverage, useDataQuality, useImportBatch, useImportBatches, useUpdateAsset } from './api';

const pct = (digits: number) => (p: { value: unknown }) => (typeof p.value === 'number' ? `${(p.value * 100).toFixed(digits)} %` : '—');

// Minimum widths hold each column's figures and its (wrapped) header, so every column
// fits beside the rail at 1400 px; below that the grid scrolls sideways. Name and sector take what is left.
const QUALITY_COLUMNS: ColDef<AssetQuality>[] = [
  { field: 'symbol', headerName: 'Symbol', cellClass: 'll-figure', minWidth: 68 },
  { field: 'name', headerName: 'Name', minWidth: 120, flex: 1.6 },
  { field: 'sector', headerName: 'Sector', minWidth: 96, flex: 1.2 },
  { field: 'firstDate', headerName: 'First', type: 'date', width: 96, minWidth: 96 },
  { field: 'lastDate', headerName: 'Last', type: 'date', width: 96, minWidth: 96 },
  { field: 'observations', headerName: 'Values', type: 'figure', minWidth: 64, flex: 0.6 },
  { field: 'missingShare', headerName: 'Missing', type: 'figure', valueFormatter: pct(1), minWidth: 68, flex: 0.6 },
  { field: 'mean', headerName: 'Mean', type: 'figure', valueFormatter: pct(3), minWidth: 80, flex: 0.6 },
  { field: 'annualisedVolatility', headerName: 'Volatility (ann.)', type: 'figure', valueFormatter: pct(1), minWidth: 80, flex: 0.6 },
  { field: 'min', headerName: 'Min', type: 'figure', valueFormatter: pct(2), minWidth: 80, flex: 0.6 },
  { field: 'max', headerName: 'Max', type: 'figure', valueFormatter: pct(2), minWidth: 80, flex: 0.6 },
  { field: 'outliers', headerName: 'Outliers', type: 'figure', minWidth: 68, flex: 0.6 },
  {
    // The batch number on screen, its time on hover and in the CSV (the batch's row in the import history below has both).
    field: 'lastImportId',
    headerName: 'Last import',
    type: 'figure',
    minWidth: 68,
    flex: 0.6,
    valueFormatter: (p) => (p.value ? `#${p.value}` : '—'),
    cellRenderer: (p: { value: number | null; valueFormatted: string | null; data?: AssetQuality }) => (
      <span title={p.data?.lastImportAt ? `Imported ${formatDateTime(p.data.lastImportAt)}` : undefined}>{p.valueFormatted ?? '—'}</span>
    ),
  },
  { field: 'lastImportAt', headerName: 'Imported', type: 'timestamp', hide: true, valueFormatter: (p) => formatDateTime(p.value) },
];

const BATCH_COLUMNS: ColDef<ImportBatch>[] = [
  { field: 'id', headerName: 'Batch', type: 'figure', minWidth: 60, maxWidth: 90 },
  { field: 'createdAt', headerName: 'When', type: 'timestamp', valueFormatter: (p) => formatDateTime(p.value) },
  { field: 'userEmail', headerName: 'Who', minWidth: 130, flex: 1.4 },
  { field: 'kind', headerName: 'Kind', minWidth: 90, maxWidth: 140 },
  { field: 'status', headerName: 'Status', minWidth: 86, maxWidth: 120 },
  { field: 'fileName', headerName: 'File', minWidth: 130, flex: 1.4 },
  { field: 'rowsRead', headerName: 'Rows', type: 'figure', minWidth: 64, flex: 0.6 },
  { field: 'inserted', headerName: 'Inserted', type: 'figure', minWidth: 70, flex: 0.6 },
  { field: 'replaced', headerName: 'Replaced', type: 'figure', minWidth: 76, flex: 0.6 },
  { field: 'skipped', headerName: 'Skipped', type: 'figure', minWidth: 70, flex: 0.6 },
  { field: 'rejected', headerName: 'Rejected', type: 'figure', minWidth: 74, flex: 0.6 },
  { field: 'durationMs', headerName: 'Took (ms)', type: 'figure', minWidth: 70, flex: 0.6 },
];

type Revision = ImportBatchDetail['revisions'][number];
const REVISION_COLUMNS: ColDef<Revision>[] = [
  { field: 'symbol', headerName: 'Symbol', cellClass: 'll-figure' },
  { field: 'date', headerName: 'Date', type: 'date' },
  { field: 'oldValue', headerName: 'Old value', type: 'figure', valueFormatter: (p) => (p.value as number).toPrecision(8) },
  { field: 'newValue', headerName: 'New value', type: 'figure', valueFormatter: (p) => (p.value as number).toPrecision(8) },
];

const AssetFormSchema = z.object({
  name: z.string().trim().min(1, 'must not be empty').max(200),
  sector: z.string().trim().max(100),
  country: z.union([z.literal(''), z.string().trim().regex(/^[A-Z]{2}$/, 'two capital letters (ISO 3166)')]),
  currency: z.union([z.literal(''), z.string().trim().regex(/^[A-Z]{3}$/, 'three capital letters (ISO 4217)')]),
  assetClass: z.string().trim().max(60),
});
type AssetForm = z.infer<typeof AssetFormSchema>;
const ASSET_FIELDS: { name: keyof AssetForm; label: string; code?: boolean }[] = [
  { name: 'name', label: 'Name' },
  { name: 'sector', label: 'Sector' },
  { name: 'country', label: 'Country', code: true },
  { name: 'currency', label: 'Currency', code: true },
  { name: 'assetClass', label: 'Asset class' },
];

function AssetPanel({ assetId, canEdit, onClose }: { assetId: number; canEdit: boolean; onClose: () => void }) {
  const asset = useAsset(assetId);
  const update = useUpdateAsset();
  const form = useForm<AssetForm>({ resolver: zodResolver(AssetFormSchema), defaultValues: { name: '', sector: '', country: '', currency: '', assetClass: '' } });
  useEffect(() => {
    if (asset.data) form.reset({ name: asset.data.name, sector: asset.data.sector ?? '', country: asset.data.country ?? '', currency: asset.data.currency ?? '', assetClass: asset.data.assetClass ?? '' });
  }, [asset.data, form]);
  const { errors } = form.formState;
  const save = form.handleSubmit((v) =>
    update.mutate({ id: assetId, patch: { name: v.name, sector: v.sector || null, country: v.country || null, currency: v.currency || null, assetClass: v.assetClass || null } }),
  );
  return (
    <Card title={asset.data ? `${asset.data.symbol}: metadata` : 'Asset'} actions={<Button size="sm" variant="quiet" onClick={onClose}>Close</Button>}>
      <ErrorAlert error={asset.error} />
      <form onSubmit={save} className="grid grid-cols-1 gap-3 md:grid-cols-5" aria-label="Asset metadata">
        {ASSET_FIELDS.map(({ name, label, code }) => (
          <Field key={name} label={label} error={errors[name]?.message}>
            <input className={`field-input${code ? ' font-mono' : ''}`} disabled={!canEdit} {...form.register(name)} />
          </Field>
        ))}
        {canEdit ? (
          <div className="flex items-center gap-2 md:col-span-5">
            <Button type="submit" variant="primary" disabled={update.isPending}>
              Save metadata
            </Button>
            {update.isSuccess ? <span className="text-xs text-ok">Saved.</span> : null}
          </div>
        ) : null}
      </form>
      <div className="mt-2">
        <ErrorAlert error={update.error} />
      </div>
    </Card>
  );
}

function BatchDetail({ id, onClose }: { id: number; onClose: () => void }) {
  const batch = useImportBatch(id);
  const download = useDownloadProblems();
  const b = batch.data;
  return (
    <Card title={`Import batch #${id}`} actions={<Button size="sm" variant="quiet" onClick={onClose}>Close</Button>}>
      <ErrorAlert error={batch.error ?? download.error} />
      {b ? (
        <div className="flex flex-col gap-3">
          <p className="text-sm">
            <StatusBadge tone={b.status === 'committed' ? 'ok' : b.status === 'rejected' ? 'breach' : 'info'}>{b.status}</StatusBadge>{' '}
            <span className="font-mono text-xs">{b.fileName}</span> by {b.userEmail ?? '—'} on {formatDateTime(b.createdAt)}: {formatCount(b.rowsRead)} rows read, {formatCount(b.inserted)} inserted,{' '}
            {formatCount(b.replaced)} replaced, {formatCount(b.skipped)} skipped, {formatCount(b.rejected)} rejected; {formatCount(b.problemCount)} problems. SHA-256{' '}
            <span className="font-mono text-xs">{b.sha256.slice(0, 16)}…</span>
          </p>
          {b.problemCount > 0 ? (
            <div>
              <Button size="sm" onClick={() => download.mutate(id)}>
                Download all problems (CSV)
              </Button>
              <ul className="mt-2 max-h-40 space-y-1 overflow-auto text-sm">
                {b.problems.map((p, i) => (
                  <li key={i}>
                    <StatusBadge tone={p.severity === 'error' ? 'breach' : 'warn'}>{p.severity}</StatusBadge> <span className="font-mono text-xs">{p.row !== null ? `row ${p.row}` : ''} {p.column ?? ''}</span> {p.message}
                  </li>
                ))}
              </ul>
            </div>
          ) : null}
          <h3 className="text-sm font-semibold">Revisions ({formatCount(b.revisionCount)})</h3>
          {b.revisionCount ? <DataGrid rows={b.revisions} columns={REVISION_COLUMNS} height={240} csvFileName={`loadline-batch-${id}-revisions.csv`} ariaLabel="Revisions" /> : <p className="text-sm text-ink-soft">This batch replaced no stored values.</p>}
        </div>
      ) : null}
    </Card>
  );
}

/** The figures here are history of the stored returns, not model estimates: the caution says so. */
const HISTORY_CAUTION =
  'These are historical statistics of the stored returns, not forecasts or model estimates. Past volatility may not predict future volatility. The firm’s risk policy governs every decision.';

/** Tall enough for well over 13 rows: 520 px, or two thirds of a taller window (short tables still shrink to their rows). */
const assetGridHeightFor = (windowHeight: number) => Math.max(520, Math.round(windowHeight * 0.66));

export default function DataQualityPage() {
  const assetGridHeight = useMemo(() => assetGridHeightFor(window.innerHeight), []);
  const user = useCurrentUser();
  const canImport = user.role === 'analyst' || user.role === 'admin';
  const quality = useDataQuality();
  const coverage = useCoverage();
  const batches = useImportBatches();
  const [assetId, setAssetId] = useState<number | null>(null);
  const [batchId, setBatchId] = useState<number | null>(null);
  const totals = useMemo(() => {
    const rows = quality.data?.assets ?? [];
    return { assets: rows.length, observations: rows.reduce((s, r) => s + r.observations, 0), outliers: rows.reduce((s, r) => s + r.outliers, 0) };
  }, [quality.data]);

  return (
    <div className="flex flex-col gap-4">
      <PageHeader
        title="Data quality"
        description="What the stored return series hold: history, gaps, scale and outliers per asset, where coverage starts and stops, and every import."
        actions={canImport ? <Link to="/imports" className="text-sm font-medium text-accent underline">Import return series</Link> : null}
      />
      <ErrorAlert error={quality.error ?? coverage.error ?? batches.error} />
      {quality.data ? (
        <p className="text-sm text-ink-soft">
          <span className="font-mono tabular-nums">{formatCount(totals.assets)}</span> assets, <span className="font-mono tabular-nums">{formatCount(totals.observations)}</span>{' '}
          {quality.data.frequency ?? ''} observations (simple returns), <span className="font-mono tabular-nums">{formatCount(totals.outliers)}</span> robust outliers.
        </p>
      ) : null}

      <Card title="Assets">
        <DataGrid
          rows={quality.data?.assets}
          columns={QUALITY_COLUMNS}
          loading={quality.isLoading}
          getRowId={(p) => String(p.data.assetId)}
          quickSearch
          csvFileName="loadline-data-quality.csv"
          height={assetGridHeight}
          onRowClicked={(row) => setAssetId(row.assetId)}
          ariaLabel="Data quality by asset"
          emptyMessage="No assets yet: import return series first"
        />
        <div className="mt-2">
          <Caution
            compact
            text={HISTORY_CAUTION}
            extra={`Volatility is annualised with the square root of ${quality.data?.periodsPerYear ?? 252} periods a year (square-root-of-time scaling). Outliers: |0.6745 (x − median) / MAD| > 3.5 (Iglewicz and Hoaglin, 1993).`}
          />
        </div>
      </Card>

      {assetId !== null ? <AssetPanel assetId={assetId} canEdit={canImport} onClose={() => setAssetId(null)} /> : null}

      <Card title="Coverage over time">{coverage.data ? <CoverageHeatmap coverage={coverage.data} /> : <p className="text-sm text-ink-soft">Loading…</p>}</Card>

      <Card title="Import history">
        {batches.data && batches.data.length === 0 ? <Alert>No imports yet.</Alert> : null}
        <DataGrid
          rows={batches.data}
          columns={BATCH_COLUMNS}
          loading={batches.isLoading}
          getRowId={(p) => String(p.data.id)}
          csvFileName="loadline-import-history.csv"
          height={320}
          onRowClicked={(row) => setBatchId(row.id)}
          selectedRowId={batchId === null ? null : String(batchId)}
          ariaLabel="Import history"
        />
      </Card>
      {batchId !== null ? <BatchDetail id={batchId} onClose={() => setBatchId(null)} /> : null}
    </div>
  );
}
