import { useMemo, useRef, useState, type DragEvent } from 'react';
import { Link } from 'react-router-dom';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import type { ColDef } from 'ag-grid-community';
import {
  DATE_FORMATS, DELIMITERS, FREQUENCIES, IMPORT_FORMATS, OVERLAP_POLICIES, VALUE_KINDS, VALUE_KIND_LABELS,
  type ImportProblem, type ImportSummary,
} from '@shared/schemas/imports';
import { PageHeader } from '../../components/PageHeader';
import { Card } from '../../components/Card';
import { Button } from '../../components/Button';
import { Field } from '../../components/Field';
import { Alert, ErrorAlert } from '../../components/Alert';
import { DataGrid } from '../../components/DataGrid';
import { StatusBadge } from '../../components/StatusBadge';
import { formatCount } from '../../lib/format';
import type { UploadProgress } from '../../lib/api';
import { useCommitImport, useDownloadProblems, useImportProgress, useUploadAssetMetadata, useUploadImport, type ImportAnswer } from './api';

const OptionsFormSchema = z.object({
  format: z.enum(IMPORT_FORMATS),
  valueKind: z.enum(VALUE_KINDS),
  delimiter: z.enum(DELIMITERS),
  dateFormat: z.enum(DATE_FORMATS),
  overlap: z.enum(OVERLAP_POLICIES),
  frequency: z.enum(['auto', ...FREQUENCIES]),
  thresholdPercent: z.number({ message: 'must be a number' }).positive('must be above 0').max(10000),
  gapPeriods: z.number({ message: 'must be a whole number' }).int('must be a whole number').min(1, 'must be at least 1').max(10000),
});
type OptionsForm = z.infer<typeof OptionsFormSchema>;

const DEFAULTS: OptionsForm = { format: 'long', valueKind: 'simple-decimal', delimiter: 'auto', dateFormat: 'iso', overlap: 'reject', frequency: 'auto', thresholdPercent: 50, gapPeriods: 10 };

const LABELS: Record<string, string> = {
  long: 'Long: date, symbol, value', wide: 'Wide: date, then one column per symbol',
  auto: 'Detect', comma: 'Comma', semicolon: 'Semicolon', tab: 'Tab',
  iso: 'ISO 8601 (2024-03-31)', 'day-first': 'Day first (31/03/2024)', 'month-first': 'Month first (03/31/2024)',
  skip: 'Skip: keep stored values', replace: 'Replace: file values win (revisions kept)', reject: 'Reject the file',
  daily: 'Daily', weekly: 'Weekly', monthly: 'Monthly',
};

/** The option pickers of the form, in display order. */
const SELECTS: { name: 'format' | 'valueKind' | 'delimiter' | 'dateFormat' | 'overlap' | 'frequency'; label: string; hint?: string; options: readonly string[] }[] = [
  { name: 'format', label: 'Format', options: IMPORT_FORMATS },
  { name: 'valueKind', label: 'Values', options: VALUE_KINDS },
  { name: 'delimiter', label: 'Delimiter', options: DELIMITERS },
  { name: 'dateFormat', label: 'Date format', hint: 'Ambiguous dates are never guessed', options: DATE_FORMATS },
  { name: 'overlap', label: 'Already stored dates', options: OVERLAP_POLICIES },
  { name: 'frequency', label: 'Frequency', options: ['auto', ...FREQUENCIES] },
];

function percent(fraction: number): string {
  return `${Math.round(fraction * 100)} %`;
}

function megabytes(bytes: number): string {
  return `${(bytes / 1024 / 1024).toFixed(1)} MB`;
}

function ProgressBar({ label, fraction, detail }: { label: string; fraction: number; detail: string }) {
  return (
    <div className="flex flex-col gap-1">
      <div className="flex justify-between text-xs text-ink-soft">
        <span>{label}</span>
        <span className="font-mono tabular-nums">{detail}</span>
      </div>
      <progress aria-label={label} className="h-2 w-full accent-[#0e5c61]" max={1} value={fraction} />
    </div>
  );
}

function ProblemList({ summary }: { summary: ImportSummary }) {
  const download = useDownloadProblems();
  if (!summary.problems.length) return null;
  const shown = summary.problems;
  const total = summary.errorCount + summary.warningCount;
  return (
    <Card
      title={`Problems: ${formatCount(summary.errorCount)} error${summary.errorCount === 1 ? '' : 's'}, ${formatCount(summary.warningCount)} warning${summary.warningCount === 1 ? '' : 's'}`}
      actions={
        summary.id !== null ? (
          <Button size="sm" onClick={() => download.mutate(summary.id!)} disabled={download.isPending}>
            Download all problems (CSV)
          </Button>
        ) : null
      }
    >
      {total > shown.length ? <p className="mb-2 text-xs text-ink-soft">The first {shown.length} of {formatCount(total)} are listed; the CSV holds every one.</p> : null}
      <ErrorAlert error={download.error} />
      <ul aria-label="Problems" className="max-h-72 space-y-1 overflow-auto text-sm">
        {shown.map((p: ImportProblem, i: number) => (
          <li key={i} className="flex gap-2">
            <StatusBadge tone={p.severity === 'error' ? 'breach' : 'warn'}>{p.severity === 'error' ? 'Error' : 'Warning'}</StatusBadge>
            <span className="font-mono text-xs text-ink-soft whitespace-nowrap">{[p.row !== null ? `row ${p.row}` : null, p.column].filter(Boolean).join(' · ') || 'file'}</span>
            <span>{p.message}</span>
          </li>
        ))}
      </ul>
    </Card>
  );
}

function SummaryFigures({ summary }: { summary: ImportSummary }) {
  const c = summary.counts;
  const items: [string, string][] = [
    ['Rows read', formatCount(c.rowsRead)],
    ['Returns to store', formatCount(c.observations)],
    ['Assets found', `${formatCount(c.assetsFound)} (${formatCount(c.assetsNew)} new)`],
    ['Dates', summary.firstDate ? `${summary.firstDate} to ${summary.lastDate}` : '—'],
    ['Delimiter', summary.delimiter ?? '—'],
    ['Format', summary.options.format],
    ['Frequency', summary.detectedFrequency ? `${summary.detectedFrequency} (detected)` : summary.frequency ?? 'unknown'],
    ['New observations', formatCount(c.inserted)],
    ['Replaced', formatCount(c.replaced)],
    ['Skipped (already stored)', formatCount(c.skipped + c.unchanged)],
    ['Missing cells', formatCount(c.missingValues)],
    ['First prices (no return)', formatCount(c.firstPrices)],
  ];
  return (
    <dl aria-label="Import summary" className="grid grid-cols-2 gap-x-6 gap-y-2 text-sm md:grid-cols-4">
      {items.map(([term, value]) => (
        <div key={term} className="flex flex-col">
          <dt className="text-xs text-ink-soft">{term}</dt>
          <dd className="font-mono tabular-nums">{value}</dd>
        </div>
      ))}
    </dl>
  );
}

type PreviewRow = ImportSummary['previewRows'][number];
const PREVIEW_COLUMNS: ColDef<PreviewRow>[] = [
  { field: 'row', headerName: 'Row', type: 'figure', maxWidth: 90 },
  { field: 'date', headerName: 'Date', type: 'date' },
  { field: 'symbol', headerName: 'Symbol', cellClass: 'll-figure' },
  { field: 'value', headerName: 'Value as read (decimal)', type: 'figure', valueFormatter: (p) => (typeof p.value === 'number' ? p.value.toPrecision(8) : '') },
];
type AssetRow = ImportSummary['assets'][number];
const ASSET_COLUMNS: ColDef<AssetRow>[] = [
  { field: 'symbol', headerName: 'Symbol', cellClass: 'll-figure' },
  { field: 'observations', headerName: 'Values', type: 'figure' },
  { field: 'firstDate', headerName: 'First', type: 'date' },
  { field: 'lastDate', headerName: 'Last', type: 'date' },
  // A word, not a checkbox: AG Grid draws a boolean field as a checkbox, so the value is turned into text first.
  {
    colId: 'isNew',
    headerName: 'New asset',
    cellDataType: 'text',
    valueGetter: (p) => (p.data?.isNew ? 'new' : 'known'),
    cellRenderer: (p: { value: string }) => (p.value === 'new' ? <StatusBadge tone="info">new</StatusBadge> : <span className="text-ink-soft">known</span>),
  },
];

function AssetMetadataCard() {
  const upload = useUploadAssetMetadata();
  const input = useRef<HTMLInputElement>(null);
  return (
    <Card title="Asset metadata">
      <p className="mb-2 text-sm text-ink-soft">
        A CSV with a <span className="font-mono">symbol</span> column and any of <span className="font-mono">name, sector, country, currency, asset_class</span>. Unknown symbols are
        created; the given fields of known ones are updated, all or nothing.
      </p>
      <div className="flex flex-wrap items-end gap-2">
        <Field label="Metadata CSV">
          <input ref={input} type="file" accept=".csv,.txt,text/csv" className="text-sm" />
        </Field>
        <Button onClick={() => input.current?.files?.[0] && upload.mutate(input.current.files[0])} disabled={upload.isPending}>
          Upload metadata
        </Button>
      </div>
      <div className="mt-2">
        <ErrorAlert error={upload.error} />
        {upload.data ? (
          <Alert tone="ok">
            {formatCount(upload.data.rowsRead)} rows: {formatCount(upload.data.created)} assets created, {formatCount(upload.data.updated)} updated.
          </Alert>
        ) : null}
      </div>
    </Card>
  );
}

export default function ImportsPage() {
  const [file, setFile] = useState<File | null>(null);
  const [dragging, setDragging] = useState(false);
  const [ref, setRef] = useState<string | null>(null);
  const [uploadProgress, setUploadProgress] = useState<UploadProgress | null>(null);
  const [answer, setAnswer] = useState<ImportAnswer | null>(null);
  const [committed, setCommitted] = useState<ImportAnswer | null>(null);
  const [confirmReimport, setConfirmReimport] = useState(false);
  const fileInput = useRef<HTMLInputElement>(null);
  const uploadImport = useUploadImport();
  const commit = useCommitImport();
  const processing = useImportProgress(ref, uploadImport.isPending || commit.isPending);
  const form = useForm<OptionsForm>({ resolver: zodResolver(OptionsFormSchema), defaultValues: DEFAULTS });
  const { errors } = form.formState;

  const choose = (chosen: File | undefined | null) => {
    if (!chosen) return;
    setFile(chosen);
    setAnswer(null);
    setCommitted(null);
  };
  const onDrop = (event: DragEvent) => {
    event.preventDefault();
    setDragging(false);
    choose(event.dataTransfer.files?.[0]);
  };

  const preview = form.handleSubmit(async (values) => {
    if (!file) return;
    const uploadRef = crypto.randomUUID();
    setRef(uploadRef);
    setAnswer(null);
    setCommitted(null);
    setConfirmReimport(false);
    const { thresholdPercent, ...rest } = values;
    const result = await uploadImport.mutateAsync({ file, options: { ...rest, returnThreshold: thresholdPercent / 100 }, mode: 'preview', ref: uploadRef, onProgress: setUploadProgress }).catch(() => null);
    if (result) setAnswer(result);
  });

  const doCommit = async () => {
    if (!answer?.summary.id) return;
    setRef(answer.summary.ref);
    const result = await commit.mutateAsync({ id: answer.summary.id, confirmReimport }).catch(() => null);
    if (result) setCommitted(result);
  };

  const summary = committed?.summary ?? answer?.summary ?? null;
  const busy = uploadImport.isPending || commit.isPending;
  const progress = processing.data;
  const processedFraction = progress && progress.totalBytes ? Math.min(1, progress.bytesRead / progress.totalBytes) : 0;
  const phaseLabel = useMemo(() => {
    if (!progress) return 'waiting';
    return { waiting: 'waiting for the upload', reading: 'reading and checking', checking: 'checking against stored data', storing: 'storing', done: 'done', failed: 'stopped' }[progress.phase];
  }, [progress]);

  return (
    <div className="flex flex-col gap-4">
      <PageHeader title="Import return series" description="Upload returns or prices as CSV: preview what the file holds and every problem in it, then commit it in one step." />

      <Card title="1. File and options">
        <form onSubmit={preview} className="flex flex-col gap-4" aria-label="Import options">
          <div
            onDragOver={(event) => {
              event.preventDefault();
              setDragging(true);
            }}
            onDragLeave={() => setDragging(false)}
            onDrop={onDrop}
            data-testid="drop-zone"
            className={`flex flex-col items-center justify-center gap-2 rounded-lg border-2 border-dashed px-4 py-6 text-sm ${dragging ? 'border-accent bg-accent-soft' : 'border-line-strong bg-sunken'}`}
          >
            <p className="text-ink-soft">Drop a CSV file here, or choose one.</p>
            <label className="flex items-center gap-2">
              <span className="text-xs font-medium text-ink-soft">CSV file</span>
              <input ref={fileInput} type="file" accept=".csv,.tsv,.txt,text/csv,text/tab-separated-values" onChange={(event) => choose(event.target.files?.[0])} className="text-sm" />
            </label>
            {file ? (
              <p className="font-mono text-xs tabular-nums" aria-label="Chosen file">
                {file.name} · {megabytes(file.size)}
              </p>
            ) : null}
          </div>

          <div className="grid grid-cols-1 gap-3 md:grid-cols-4">
            {SELECTS.map(({ name, label, hint, options }) => (
              <Field key={name} label={label} hint={hint} error={errors[name]?.message}>
                <select className="field-input" {...form.register(name)}>
                  {options.map((v) => (
                    <option key={v} value={v}>
                      {name === 'valueKind' ? VALUE_KIND_LABELS[v as (typeof VALUE_KINDS)[number]] : LABELS[v]}
                    </option>
                  ))}
                </select>
              </Field>
            ))}
            <Field label="Warn above |return| (%)" error={errors.thresholdPercent?.message}>
              <input className="field-input font-mono" type="number" step="any" {...form.register('thresholdPercent', { valueAsNumber: true })} />
            </Field>
            <Field label="Warn on gaps longer than (periods)" error={errors.gapPeriods?.message}>
              <input className="field-input font-mono" type="number" step="1" {...form.register('gapPeriods', { valueAsNumber: true })} />
            </Field>
          </div>
          <div className="flex items-center gap-3">
            <Button type="submit" variant="primary" disabled={!file || busy}>
              Preview
            </Button>
            {!file ? <span className="text-xs text-ink-faint">Choose a file first.</span> : null}
          </div>
        </form>
      </Card>

      {ref && (busy || uploadProgress) ? (
        <Card title="2. Progress">
          <div className="flex flex-col gap-3">
            {uploadProgress ? (
              <ProgressBar label="Upload" fraction={uploadProgress.fraction} detail={`${megabytes(uploadProgress.loaded)} of ${megabytes(uploadProgress.total)} · ${percent(uploadProgress.fraction)}`} />
            ) : null}
            <ProgressBar
              label="Processing"
              fraction={!busy && (answer || committed) ? 1 : processedFraction}
              detail={!busy && summary ? `finished · ${formatCount(summary.counts.rowsRead)} rows` : `${phaseLabel} · ${formatCount(progress?.rowsRead ?? 0)} rows`}
            />
          </div>
        </Card>
      ) : null}

      <ErrorAlert error={uploadImport.error ?? commit.error} />

      {summary ? (
        <Card
          title={committed ? '3. Committed' : '3. Preview'}
          actions={<StatusBadge tone={summary.status === 'committed' ? 'ok' : summary.errorCount ? 'breach' : 'info'}>{summary.status}</StatusBadge>}
        >
          <div className="flex flex-col gap-4">
            {committed && committed.status === 201 ? (
              <Alert tone="ok" title="Import committed">
                {formatCount(summary.counts.inserted)} new observations, {formatCount(summary.counts.replaced)} replaced, {formatCount(summary.counts.skipped + summary.counts.unchanged)} skipped (batch #{summary.id}).{' '}
                <Link to="/data-quality" className="underline">
                  See data quality
                </Link>
              </Alert>
            ) : null}
            {committed && committed.status !== 201 ? <Alert tone="breach" title="Nothing was stored">{committed.error}</Alert> : null}
            {!committed && summary.errorCount > 0 ? (
              <Alert tone="breach" title="The file cannot be imported as it is">Fix the errors listed below (or the options), then preview again. Nothing has been stored.</Alert>
            ) : null}
            <SummaryFigures summary={summary} />
            {!committed && summary.alreadyImported ? (
              <Alert tone="warn" title="This file was imported before">
                The same file (SHA-256 {summary.sha256.slice(0, 12)}…) was committed in batch #{summary.alreadyImported.batchId}.
                <label className="mt-1 flex items-center gap-2">
                  <input type="checkbox" checked={confirmReimport} onChange={(event) => setConfirmReimport(event.target.checked)} />
                  Import it again anyway
                </label>
              </Alert>
            ) : null}
            {!committed ? (
              <div className="flex items-center gap-3">
                <Button variant="primary" onClick={doCommit} disabled={!summary.canCommit || busy || (Boolean(summary.alreadyImported) && !confirmReimport)}>
                  Commit import
                </Button>
                <span className="text-xs text-ink-faint">Stores everything in one transaction, or nothing.</span>
              </div>
            ) : null}
          </div>
        </Card>
      ) : null}

      {summary ? <ProblemList summary={summary} /> : null}

      {summary && !committed ? (
        <div className="grid grid-cols-1 gap-4 lg:grid-cols-2">
          <Card title="First rows as parsed">
            <DataGrid rows={summary.previewRows} columns={PREVIEW_COLUMNS} height={300} ariaLabel="First rows as parsed" />
          </Card>
          <Card title={`Assets in the file (${formatCount(summary.counts.assetsFound)})`}>
            <DataGrid rows={summary.assets} columns={ASSET_COLUMNS} height={300} quickSearch ariaLabel="Assets in the file" />
          </Card>
        </div>
      ) : null}

      <AssetMetadataCard />
    </div>
  );
}
