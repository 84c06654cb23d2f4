import { useEffect, useMemo, useRef, useState } from 'react';
import { Link, useBlocker, useNavigate, useParams, type Blocker } from 'react-router-dom';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import type { PortfolioDetail } from '@shared/schemas/portfolios';
import { WEIGHT_SUM_TOLERANCE } from '@shared/schemas/portfolios';
import { PageHeader } from '../../components/PageHeader';
import { Card } from '../../components/Card';
import { Button } from '../../components/Button';
import { Field } from '../../components/Field';
import { Alert, ErrorAlert } from '../../components/Alert';
import { Figure } from '../../components/Figure';
import { ApiError } from '../../lib/api';
import { HoldingsGrid, localProblems, newHoldingKey, type EditableHolding } from './HoldingsGrid';
import { useDeletePortfolio, usePortfolio, usePortfolios, useReplaceHoldings, useUpdatePortfolio, useUploadHoldingsCsv } from './api';

const DetailsSchema = z.object({
  name: z.string().trim().min(1, 'a name is required').max(120, 'at most 120 characters'),
  description: z.string().max(2000, 'at most 2000 characters'),
  baseCurrency: z.string().trim().regex(/^[A-Za-z]{3}$/, 'a three-letter code, e.g. USD'),
  benchmark: z.string(),
});
type Details = z.infer<typeof DetailsSchema>;

type Mode = 'weights' | 'market-values';

function rowsFrom(p: PortfolioDetail, mode: Mode): EditableHolding[] {
  return p.holdings.map((h) => ({
    key: newHoldingKey(),
    symbol: h.symbol,
    assetName: h.assetName,
    value: mode === 'market-values' ? (h.marketValue ?? null) : h.weight * 100,
  }));
}

/** Server issues name rows as holdings.<index>.<field>: map them to the grid's rows. */
function serverProblems(error: unknown, rows: EditableHolding[]): { byRow: Map<number, string[]>; general: string[] } {
  const byRow = new Map<number, string[]>();
  const general: string[] = [];
  if (!(error instanceof ApiError)) return { byRow, general };
  for (const issue of error.issues) {
    const match = /^holdings\.(\d+)\./.exec(issue.path);
    const row = match ? rows[Number(match[1])] : undefined;
    if (row) byRow.set(row.key, [...(byRow.get(row.key) ?? []), issue.message]);
    else general.push(issue.message);
  }
  return { byRow, general };
}

/** Why "Save holdings" is disabled, said beside it; null when it is enabled. */
function saveBlockedReason({ pending, dirty, problemRows }: { pending: boolean; dirty: boolean; problemRows: number }): string | null {
  if (pending) return null;
  if (problemRows > 0) return `${problemRows} ${problemRows === 1 ? 'row has problems' : 'rows have problems'}: fix the marked rows to save.`;
  if (!dirty) return 'Nothing changed since the last save.';
  return null;
}

/** Asks before an in-app navigation would drop unsaved holdings (the browser asks on its own for a closing tab). */
function LeaveDialog({ blocker }: { blocker: Blocker }) {
  const ref = useRef<HTMLDialogElement>(null);
  const open = blocker.state === 'blocked';
  useEffect(() => {
    const dialog = ref.current;
    if (!dialog) return;
    if (open && !dialog.open) dialog.showModal();
    if (!open && dialog.open) dialog.close();
  }, [open]);
  return (
    <dialog
      ref={ref}
      aria-labelledby="leave-title"
      aria-describedby="leave-body"
      className="m-auto max-w-md rounded-lg border border-line bg-surface p-5 text-ink shadow-lg backdrop:bg-ink/30"
      // Escape closes a modal dialog: treat it as staying.
      onCancel={(e) => {
        e.preventDefault();
        if (blocker.state === 'blocked') blocker.reset();
      }}
    >
      <h2 id="leave-title" className="text-base font-semibold">
        Leave with unsaved holdings?
      </h2>
      <p id="leave-body" className="mt-2 text-sm text-ink-soft">
        The holdings have changes that are not saved. Leaving this page drops them.
      </p>
      <div className="mt-4 flex justify-end gap-2">
        <Button autoFocus onClick={() => blocker.state === 'blocked' && blocker.reset()}>
          Stay and keep editing
        </Button>
        <Button variant="danger" onClick={() => blocker.state === 'blocked' && blocker.proceed()}>
          Leave without saving
        </Button>
      </div>
    </dialog>
  );
}

export default function PortfolioEditorPage() {
  const id = Number(useParams().id);
  const navigate = useNavigate();
  const portfolio = usePortfolio(id);
  const all = usePortfolios();
  const update = useUpdatePortfolio(id);
  const replace = useReplaceHoldings(id);
  const upload = useUploadHoldingsCsv(id);
  const remove = useDeletePortfolio();
  const [mode, setMode] = useState<Mode>('weights');
  const [rows, setRows] = useState<EditableHolding[]>([]);
  const [dirty, setDirty] = useState(false);
  const [file, setFile] = useState<File | null>(null);
  const [csvUnit, setCsvUnit] = useState<'fraction' | 'percent'>('fraction');
  const [saved, setSaved] = useState<string | null>(null);
  const [addedRowKey, setAddedRowKey] = useState<number | undefined>(undefined);
  // Set once the portfolio is deleted, so the move to the list is not asked about.
  const deleted = useRef(false);
  const blocker = useBlocker(({ currentLocation, nextLocation }) => dirty && !deleted.current && (currentLocation.pathname !== nextLocation.pathname || currentLocation.search !== nextLocation.search));
  useEffect(() => {
    if (!dirty) return;
    // Closing or reloading the tab: the browser shows its own question (the text is not customisable).
    const ask = (event: BeforeUnloadEvent) => {
      event.preventDefault();
      event.returnValue = '';
    };
    window.addEventListener('beforeunload', ask);
    return () => window.removeEventListener('beforeunload', ask);
  }, [dirty]);
  const form = useForm<Details>({ resolver: zodResolver(DetailsSchema), defaultValues: { name: '', description: '', baseCurrency: 'USD', benchmark: '' } });

  const data = portfolio.data;
  useEffect(() => {
    if (!data) return;
    const initialMode: Mode = data.inputMode === 'market-values' && data.holdings.every((h) => h.marketValue !== null) ? 'market-values' : 'weights';
    setMode(initialMode);
    setRows(rowsFrom(data, initialMode));
    setDirty(false);
    form.reset({ name: data.name, description: data.description, baseCurrency: data.baseCurrency, benchmark: data.benchmark ? String(data.benchmark.id) : '' });
  }, [data, form]);

  const canEdit = data?.canEdit ?? false;
  const valueName = mode === 'weights' ? 'weight' : 'market value';
  const local = useMemo(() => localProblems(rows, valueName), [rows, valueName]);
  const server = useMemo(() => serverProblems(replace.error, rows), [replace.error, rows]);
  const problems = useMemo(() => {
    const merged = new Map(local);
    for (const [key, list] of server.byRow) merged.set(key, [...(merged.get(key) ?? []), ...list]);
    return merged;
  }, [local, server]);
  const total = rows.reduce((s, r) => s + (r.value ?? 0), 0);
  const saveReason = saveBlockedReason({ pending: replace.isPending, dirty, problemRows: local.size });
  const sumProblem = mode === 'weights' && rows.length > 0 && Math.abs(total - 100) > WEIGHT_SUM_TOLERANCE * 100 ? `The weights sum to ${total.toFixed(4)} %, not 100 %.` : null;

  const edit = (next: EditableHolding[]) => {
    setRows(next);
    setDirty(true);
    setSaved(null);
  };
  const switchMode = (next: Mode) => {
    if (!data || next === mode) return;
    setMode(next);
    // Market values start from the stored ones when known, else from weights × 1 000 000 as a neutral scale.
    setRows(
      rows.map((r) => {
        const held = data.holdings.find((h) => h.symbol === r.symbol);
        if (next === 'weights') return { ...r, valueText: undefined, value: held ? held.weight * 100 : null };
        return { ...r, valueText: undefined, value: held?.marketValue ?? (held ? Math.round(held.weight * 1_000_000) : null) };
      }),
    );
    setDirty(true);
  };
  const saveHoldings = () =>
    replace.mutate(
      {
        mode,
        weightUnit: 'percent',
        holdings: rows.map((r) => (mode === 'weights' ? { symbol: r.symbol, weight: r.value } : { symbol: r.symbol, marketValue: r.value })),
      },
      {
        onSuccess: (answer) => {
          setSaved(`Saved ${answer.holdings.length} holdings; weights normalised to sum to 100 %.`);
          setDirty(false);
        },
      },
    );
  const saveDetails = form.handleSubmit((values) =>
    update.mutate({
      name: values.name,
      description: values.description,
      baseCurrency: values.baseCurrency,
      benchmarkPortfolioId: values.benchmark ? Number(values.benchmark) : null,
    }),
  );

  if (portfolio.error) return <ErrorAlert error={portfolio.error} title="This portfolio cannot be shown" />;
  if (!data) return <p className="text-sm text-ink-soft">Loading…</p>;
  const benchmarkChoices = (all.data ?? []).filter((p) => p.id !== id);

  return (
    <div className="flex flex-col gap-5">
      <PageHeader
        title={data.name}
        description={`${data.kind === 'benchmark' ? 'Benchmark portfolio' : 'Fund'} of ${data.owner.name} · ${data.holdings.length} holdings · base currency ${data.baseCurrency}${canEdit ? '' : ' · read only'}`}
        actions={
          <>
            <Link to="/portfolios" className="text-sm text-ink-soft hover:text-ink">
              ← All portfolios
            </Link>
            {data.holdings.length ? (
              <Link to={`/portfolios/${id}/risk`} className="rounded-md border border-accent-strong bg-accent px-3 py-1.5 text-sm font-medium text-white hover:bg-accent-strong">
                Risk page
              </Link>
            ) : null}
          </>
        }
      />

      <Card title="Holdings" actions={canEdit ? <span className="text-xs text-ink-soft">{dirty ? 'Unsaved changes' : 'Saved'}</span> : undefined}>
        <div className="flex flex-col gap-3">
          {canEdit ? (
            <div className="flex flex-wrap items-center gap-4">
              <fieldset className="flex items-center gap-3 text-sm">
                <legend className="sr-only">Enter holdings as</legend>
                <label className="flex items-center gap-1.5">
                  <input type="radio" name="mode" checked={mode === 'weights'} onChange={() => switchMode('weights')} /> Weights (%)
                </label>
                <label className="flex items-center gap-1.5">
                  <input type="radio" name="mode" checked={mode === 'market-values'} onChange={() => switchMode('market-values')} /> Market values ({data.baseCurrency})
                </label>
              </fieldset>
              <Button
                size="sm"
                onClick={() => {
                  const key = newHoldingKey();
                  edit([...rows, { key, symbol: '', assetName: null, value: null }]);
                  setAddedRowKey(key);
                }}
              >
                Add row
              </Button>
              <span className="text-sm text-ink-soft">
                Total: <Figure value={total} digits={mode === 'weights' ? 4 : 0} unit={mode === 'weights' ? '%' : ` ${data.baseCurrency}`} size="sm" />
              </span>
            </div>
          ) : null}
          <HoldingsGrid
            key={mode}
            rows={rows}
            onChange={edit}
            valueLabel={mode === 'weights' ? 'Weight (%)' : `Market value (${data.baseCurrency})`}
            valueDigits={mode === 'weights' ? 4 : 0}
            problems={problems}
            readOnly={!canEdit}
            ariaLabel="Holdings"
            focusRowKey={addedRowKey}
          />
          {sumProblem ? <Alert tone="warn">{sumProblem} Saving is refused unless they sum to 100 % (within 0.01 %), or switch to market values.</Alert> : null}
          {replace.error ? (
            <ErrorAlert error={replace.error} title="The holdings were not saved: nothing changed" showIssues={server.byRow.size > 0} />
          ) : null}
          {server.general.map((m) => (
            <Alert key={m} tone="breach">
              {m}
            </Alert>
          ))}
          {saved ? <Alert tone="ok">{saved}</Alert> : null}
          {canEdit ? (
            <div className="flex items-center gap-2">
              <Button variant="primary" onClick={saveHoldings} disabled={replace.isPending || saveReason !== null} aria-describedby={saveReason ? 'save-holdings-reason' : undefined}>
                {replace.isPending ? 'Saving…' : 'Save holdings'}
              </Button>
              <Button onClick={() => (setRows(rowsFrom(data, mode)), setDirty(false), replace.reset())} disabled={!dirty}>
                Discard changes
              </Button>
              {saveReason ? (
                <span id="save-holdings-reason" className="text-sm text-ink-soft" data-testid="save-holdings-reason">
                  {saveReason}
                </span>
              ) : null}
            </div>
          ) : null}
        </div>
      </Card>

      {canEdit ? (
        <Card title="Upload holdings from CSV">
          <div className="flex flex-col gap-3">
            <p className="text-sm text-ink-soft">
              A header line <code className="font-mono text-xs">symbol,weight</code> or <code className="font-mono text-xs">symbol,market_value</code>, then one holding per line. The upload replaces every holding; a
              wrong line stops it and is named.
            </p>
            <div className="flex flex-wrap items-end gap-3">
              <Field label="CSV file">
                <input type="file" accept=".csv,text/csv" className="text-sm" onChange={(e) => setFile(e.target.files?.[0] ?? null)} />
              </Field>
              <Field label="Weights are">
                <select className="field-input" value={csvUnit} onChange={(e) => setCsvUnit(e.target.value as 'fraction' | 'percent')}>
                  <option value="fraction">fractions (sum 1)</option>
                  <option value="percent">percent (sum 100)</option>
                </select>
              </Field>
              <Button onClick={() => file && upload.mutate({ file, weightUnit: csvUnit }, { onSuccess: (a) => setSaved(`Uploaded ${a.holdings.length} holdings.`) })} disabled={!file || upload.isPending}>
                {upload.isPending ? 'Uploading…' : 'Upload and replace'}
              </Button>
            </div>
            <ErrorAlert error={upload.error} title="The file was not applied: nothing changed" />
          </div>
        </Card>
      ) : null}

      <LeaveDialog blocker={blocker} />

      <Card title="Details and benchmark">
        <form onSubmit={saveDetails} className="grid grid-cols-1 gap-3 md:grid-cols-3" noValidate>
          <Field label="Name" error={form.formState.errors.name?.message}>
            <input className="field-input" disabled={!canEdit} {...form.register('name')} />
          </Field>
          <Field label="Base currency" error={form.formState.errors.baseCurrency?.message}>
            <input className="field-input uppercase" maxLength={3} disabled={!canEdit} {...form.register('baseCurrency')} />
          </Field>
          <Field label="Benchmark" hint="Tracking error on the risk page is measured against it.">
            <select className="field-input" disabled={!canEdit} {...form.register('benchmark')}>
              <option value="">None</option>
              {benchmarkChoices.map((b) => (
                <option key={b.id} value={b.id}>
                  {b.name}
                  {b.kind === 'benchmark' ? ' (benchmark)' : ''}
                </option>
              ))}
            </select>
          </Field>
          <Field label="Description" error={form.formState.errors.description?.message} className="md:col-span-3">
            <textarea className="field-input min-h-16" disabled={!canEdit} {...form.register('description')} />
          </Field>
          {canEdit ? (
            <div className="flex items-center gap-3 md:col-span-3">
              <Button type="submit" variant="primary" disabled={update.isPending}>
                Save details
              </Button>
              <ErrorAlert error={update.error} />
              {update.isSuccess ? <span className="text-sm text-ok">Details saved.</span> : null}
              <span className="flex-1" />
              <Button
                variant="danger"
                onClick={() => {
                  if (window.confirm(`Delete ${data.name} and its holdings? This cannot be undone.`)) remove.mutate(id, {
                      onSuccess: () => {
                        deleted.current = true;
                        navigate('/portfolios');
                      },
                    });
                }}
              >
                Delete portfolio
              </Button>
            </div>
          ) : null}
        </form>
      </Card>
    </div>
  );
}
