import { useMemo, useState } from 'react';
import { Link, useParams } from 'react-router-dom';
import { ModuleRegistry, TooltipModule, type ColDef } from 'ag-grid-community';
import { ESTIMATOR_LABELS, type ModelResults, type ModelRun } from '@shared/schemas/modelRuns';
import { PageHeader } from '../../components/PageHeader';
import { Card } from '../../components/Card';
import { Button } from '../../components/Button';
import { Field } from '../../components/Field';
import { Alert, ErrorAlert } from '../../components/Alert';
import { Caution } from '../../components/Caution';
import { DataGrid } from '../../components/DataGrid';
import { Figure, formatNumber } from '../../components/Figure';
import { formatDateTime } from '../../lib/format';
import { useCurrentUser } from '../../app/currentUser';
import { useApproveRun, useCancelRun, useModelLoadings, useModelResults, useModelRun, useModelRuns, useRetireRun } from './api';
import { LifecycleBadge, RunProgress, RunStatusBadge } from './RunProgress';
import { ScreePlot } from './ScreePlot';
import { LoadingsHeatmap } from './LoadingsHeatmap';

type AssetRow = ModelResults['assetRows'][number];

const percent = (v: number | null) => (v === null || v === undefined ? null : v * 100);

// Header tooltips say what the variance and volatility columns measure and in which unit.
ModuleRegistry.registerModules([TooltipModule]);

/** Annualised factor volatility √(hᵢ · periods per year), square-root-of-time scaling (common practice). */
const factorVolatility = (communality: number | null, periodsPerYear: number) => (communality === null ? null : Math.sqrt(communality * periodsPerYear));

const figureOrDash = (digits: number) => (p: { value: number | null | undefined }) => (p.value === null || p.value === undefined ? '—' : formatNumber(p.value, digits));

function assetColumns(periodsPerYear: number): ColDef<AssetRow>[] {
  return [
    { field: 'symbol', headerName: 'Symbol', pinned: 'left', minWidth: 90, maxWidth: 130, cellClass: 'll-figure' },
    { field: 'name', headerName: 'Name', minWidth: 160, flex: 1.6 },
    { field: 'sector', headerName: 'Sector', minWidth: 120 },
    {
      colId: 'factorVolatility',
      headerName: 'Factor vol (ann. %)',
      headerTooltip: `Factor volatility, annualised: √(hᵢ · ${periodsPerYear}) — the part of the asset's volatility the factors explain`,
      type: 'figure',
      minWidth: 120,
      valueGetter: (p) => percent(factorVolatility(p.data?.communality ?? null, periodsPerYear)),
      valueFormatter: figureOrDash(2),
    },
    {
      field: 'specificVolatility',
      headerName: 'Specific vol (ann. %)',
      headerTooltip: `Specific volatility, annualised: √(Ψᵢ · ${periodsPerYear})`,
      type: 'figure',
      minWidth: 120,
      valueGetter: (p) => percent(p.data?.specificVolatility ?? null),
      valueFormatter: figureOrDash(2),
    },
    {
      colId: 'communality',
      headerName: 'Communality (%², per period)',
      headerTooltip: 'Communality hᵢ = Σₖ Wᵢₖ²: the factor part of the per-period return variance, in squared percent (1 %² = 0.0001), not annualised',
      type: 'figure',
      minWidth: 130,
      // Variance of simple returns ×10⁴ reads as %² (a daily 0.000144 is 1.44 %², i.e. 1.2 % a day).
      valueGetter: (p) => (p.data?.communality === null || p.data?.communality === undefined ? null : p.data.communality * 1e4),
      valueFormatter: figureOrDash(4),
    },
    { field: 'factorShare', headerName: 'Factor share (%)', type: 'figure', minWidth: 110, valueGetter: (p) => percent(p.data?.factorShare ?? null), valueFormatter: figureOrDash(1) },
    { colId: 'heywood', headerName: 'Heywood', minWidth: 100, cellDataType: 'text', valueGetter: (p) => (p.data?.heywood ? 'at floor' : 'no') },
  ];
}

function Summary({ run, results }: { run: ModelRun; results: ModelResults }) {
  const d = results.diagnostics;
  const q = results.assets / results.observations;
  const heywood = (d.heywood ?? []).filter(Boolean).length;
  const isFactor = results.method === 'fa' || results.method === 'ppca';
  return (
    <Card title="Summary">
      <dl className="grid grid-cols-2 gap-x-6 gap-y-3 sm:grid-cols-4 lg:grid-cols-6">
        <div className="col-span-2">
          <dt className="text-xs font-medium text-ink-soft">Estimator</dt>
          <dd className="text-sm">{ESTIMATOR_LABELS[results.method]}</dd>
        </div>
        <div className="col-span-2">
          <dt className="text-xs font-medium text-ink-soft">Window</dt>
          <dd className="font-mono text-sm tabular-nums">
            {results.firstDate} … {results.lastDate}
          </dd>
        </div>
        <Figure label="Assets (N)" value={results.assets} digits={0} />
        <Figure label="Observations (T)" value={results.observations} digits={0} />
        <Figure label="q = N/T" value={q} digits={3} />
        <Figure label="Factors (L)" value={isFactor ? results.factors : null} digits={0} />
        <Figure label="Log-likelihood" value={results.logLikelihood} digits={2} />
        <div>
          <dt className="text-xs font-medium text-ink-soft">Converged</dt>
          <dd className="text-sm">{d.converged ? 'yes' : 'no'}{d.iterations ? <span className="text-ink-soft"> ({d.iterations} iterations)</span> : null}</dd>
        </div>
        <Figure label="Variance from factors" value={d.explainedShare === null || d.explainedShare === undefined ? null : d.explainedShare * 100} unit="%" digits={1} />
        <Figure label="Effective sample size" value={d.effectiveSampleSize ?? null} digits={1} />
        {d.decayFactor ? <Figure label={`λ (half-life ${run.parameters.weighting.kind === 'exponential' ? run.parameters.weighting.halfLife : ''})`} value={d.decayFactor} digits={5} /> : null}
        <div className="col-span-2">
          <dt className="text-xs font-medium text-ink-soft">Data fingerprint</dt>
          <dd className="truncate font-mono text-xs text-ink-soft" title={results.dataSha256}>
            SHA-256 {results.dataSha256.slice(0, 16)}…
          </dd>
        </div>
      </dl>
      <div className="mt-4 flex flex-col gap-2">
        {q > 0.5 ? (
          <Alert tone="warn" title={`q = N/T is ${formatNumber(q, 2)}`}>
            With this many assets per observation the sample covariance is unreliable and understates the risk of optimised portfolios; prefer the factor model or shrinkage estimate.
          </Alert>
        ) : null}
        {!d.converged ? <Alert tone="warn" title="The fit did not converge">Its figures are not at the likelihood optimum; refit with a longer window or fewer factors.</Alert> : null}
        {heywood > 0 ? (
          <Alert tone="warn" title={`${heywood} Heywood case${heywood === 1 ? '' : 's'}`}>
            These assets’ specific variances sit at their floor: the model explains nearly all their variance, which usually signals too many factors or too short a window.
          </Alert>
        ) : null}
        {(d.missingEntries as number | undefined) ? (
          <Alert tone="info" title="Missing data">
            {String(d.missingEntries)} missing entries on {String(d.incompleteDates)} dates, handled by {String(d.missingMethod)}.
          </Alert>
        ) : null}
        <Caution extra="Loadings and factor counts are statistical estimates from the window shown; they shift with the window and the estimator." />
      </div>
    </Card>
  );
}

function CriteriaTable({ results }: { results: ModelResults }) {
  const d = results.diagnostics;
  if (!d.criteria?.length) return null;
  return (
    <Card title="Choosing the number of factors">
      {d.recommendationReason ? (
        <p className="mb-3 text-sm text-ink">
          <span className="font-medium">Recommended L = {d.recommendedFactors}.</span> {d.recommendationReason}
        </p>
      ) : null}
      <div className="overflow-x-auto">
        <table className="w-full text-sm" aria-label="Criteria table">
          <thead className="border-b border-line text-right text-xs text-ink-soft">
            <tr>
              <th className="px-2 py-1.5 text-left font-medium">L</th>
              <th className="px-2 py-1.5 font-medium">Log-likelihood</th>
              <th className="px-2 py-1.5 font-medium">AIC</th>
              <th className="px-2 py-1.5 font-medium">BIC</th>
              <th className="px-2 py-1.5 font-medium">Bai–Ng IC_p2</th>
              <th className="px-2 py-1.5 font-medium">λ_L / λ_L+1</th>
              <th className="px-2 py-1.5 font-medium">Held-out ℓ per obs.</th>
            </tr>
          </thead>
          <tbody className="font-mono text-xs tabular-nums">
            {d.criteria.map((row) => (
              <tr key={row.factors} className={`border-b border-line last:border-0 text-right ${row.factors === d.recommendedFactors ? 'bg-accent-soft' : ''}`}>
                <td className="px-2 py-1 text-left">{row.factors}{row.factors === d.recommendedFactors ? ' ◆' : ''}</td>
                <td className="px-2 py-1">{row.logLikelihood === null ? '—' : formatNumber(row.logLikelihood, 1)}</td>
                <td className="px-2 py-1">{row.aic === null ? '—' : formatNumber(row.aic, 1)}</td>
                <td className="px-2 py-1">{row.bic === null ? '—' : formatNumber(row.bic, 1)}</td>
                <td className="px-2 py-1">{row.extra?.baiNgIcp2 == null ? '—' : formatNumber(row.extra.baiNgIcp2, 4)}</td>
                <td className="px-2 py-1">{row.extra?.eigenvalueRatio == null ? '—' : formatNumber(row.extra.eigenvalueRatio, 3)}</td>
                <td className="px-2 py-1">{row.extra?.heldOutLogLikelihood == null ? '—' : formatNumber(row.extra.heldOutLogLikelihood, 3)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </Card>
  );
}

function Lifecycle({ run }: { run: ModelRun }) {
  const user = useCurrentUser();
  const approve = useApproveRun();
  const retire = useRetireRun();
  const [comment, setComment] = useState('');
  const mayAct = user.role === 'analyst' || user.role === 'admin';
  const ownRun = run.createdBy?.id === user.id;
  const action = run.status === 'succeeded' && run.lifecycle === 'draft' ? 'approve' : run.lifecycle === 'approved' ? 'retire' : null;
  const pending = approve.isPending || retire.isPending;
  const error = approve.error ?? retire.error;
  return (
    <Card title="Lifecycle" actions={<LifecycleBadge run={run} />}>
      <div className="flex flex-col gap-3 text-sm">
        <p className="text-ink-soft">
          Run by {run.createdBy?.name ?? '—'} on {formatDateTime(run.createdAt)}
          {run.worker ? `, fitted by worker ${run.worker}${run.attempts > 1 ? ` (attempt ${run.attempts})` : ''}` : ''}.
          {run.approvedBy ? ` Approved by ${run.approvedBy.name} on ${formatDateTime(run.approvedAt)}: “${run.approvalComment}”.` : ''}
          {run.retiredBy ? ` Retired by ${run.retiredBy.name} on ${formatDateTime(run.retiredAt)}: “${run.retireComment}”.` : ''}
        </p>
        {error ? <ErrorAlert error={error} /> : null}
        {mayAct && action === 'approve' && ownRun ? <Alert tone="info">You ran this fit: a second analyst or an administrator approves it.</Alert> : null}
        {mayAct && action && !(action === 'approve' && ownRun) ? (
          <form
            className="flex flex-col gap-2"
            onSubmit={(event) => {
              event.preventDefault();
              const mutation = action === 'approve' ? approve : retire;
              mutation.mutate({ id: run.id, comment }, { onSuccess: () => setComment('') });
            }}
          >
            <Field label={action === 'approve' ? 'Approval comment' : 'Reason for retiring'} hint="Recorded in the audit trail.">
              <textarea rows={2} className="field-input" value={comment} onChange={(e) => setComment(e.target.value)} />
            </Field>
            <div>
              <Button type="submit" variant={action === 'approve' ? 'primary' : 'danger'} disabled={pending || comment.trim().length < 3}>
                {action === 'approve' ? 'Approve this model' : 'Retire this model'}
              </Button>
            </div>
          </form>
        ) : null}
      </div>
    </Card>
  );
}

function CompareWith({ run }: { run: ModelRun }) {
  const runs = useModelRuns();
  const [other, setOther] = useState('');
  const candidates = (runs.data ?? []).filter((r) => r.id !== run.id && r.status === 'succeeded');
  return (
    <div className="flex items-end gap-2">
      <Field label="Compare with">
        <select className="field-input" value={other} onChange={(e) => setOther(e.target.value)}>
          <option value="">Choose a version…</option>
          {candidates.map((r) => (
            <option key={r.id} value={r.id}>
              {r.label} ({r.lifecycle})
            </option>
          ))}
        </select>
      </Field>
      {other ? (
        <Link className="pb-1.5 text-sm font-medium text-accent hover:underline" to={`/models/compare?first=${run.id}&second=${other}`}>
          Compare
        </Link>
      ) : null}
    </div>
  );
}

export default function ModelPage() {
  const id = Number(useParams().id);
  const user = useCurrentUser();
  const run = useModelRun(id);
  const succeeded = run.data?.status === 'succeeded';
  const results = useModelResults(id, succeeded);
  const [orientation, setOrientation] = useState<'canonical' | 'varimax'>('canonical');
  const isFactor = results.data ? results.data.method === 'fa' || results.data.method === 'ppca' : false;
  const loadings = useModelLoadings(id, orientation, succeeded && isFactor);
  const cancel = useCancelRun();
  const rows = useMemo(() => results.data?.assetRows, [results.data]);
  const periodsPerYear = results.data?.periodsPerYear;
  const columns = useMemo(() => assetColumns(periodsPerYear ?? 0), [periodsPerYear]);

  if (run.isError) return <ErrorAlert error={run.error} />;
  if (!run.data) return <p className="text-sm text-ink-faint">Loading…</p>;
  const r = run.data;
  const canCancel = (user.role === 'analyst' || user.role === 'admin') && (r.status === 'queued' || r.status === 'running');

  return (
    <div className="flex flex-col gap-4">
      <PageHeader
        title={`Model ${r.label}`}
        description={`${ESTIMATOR_LABELS[r.estimator]} · run by ${r.createdBy?.name ?? '—'}`}
        actions={
          <>
            <RunStatusBadge run={r} />
            <LifecycleBadge run={r} />
            {canCancel ? (
              <Button variant="danger" onClick={() => cancel.mutate(r.id)} disabled={cancel.isPending}>
                Cancel fit
              </Button>
            ) : null}
          </>
        }
      />
      {r.status !== 'succeeded' ? (
        <Card title="Progress">
          <RunProgress run={r} />
          {r.status === 'failed' ? <div className="mt-3"><Alert tone="breach" title="The fit failed">{r.error}</Alert></div> : null}
        </Card>
      ) : null}
      {results.isError ? <ErrorAlert error={results.error} /> : null}
      {results.data ? (
        <>
          <Summary run={r} results={results.data} />
          <div className="grid gap-4 lg:grid-cols-2">
            <div className="flex flex-col gap-4">
              <Lifecycle run={r} />
              <Card title="Compare versions">
                <CompareWith run={r} />
              </Card>
            </div>
            <Card title="Eigenvalue spectrum">
              {results.data.diagnostics.eigenvalues?.length ? (
                <>
                {results.data.diagnostics.spectrumSource ? <p className="mb-2 text-xs text-ink-soft">{String(results.data.diagnostics.spectrumSource)}</p> : null}
                <ScreePlot eigenvalues={results.data.diagnostics.eigenvalues} edge={results.data.diagnostics.marchenkoPasturEdge ?? null} factors={results.data.factors} />
                </>
              ) : (
                <p className="text-sm text-ink-faint">No spectrum: with missing data the fit works on the observed entries only.</p>
              )}
            </Card>
          </div>
          <CriteriaTable results={results.data} />
          <Card title="Assets">
            <DataGrid<AssetRow>
              rows={rows}
              columns={columns}
              getRowId={(p) => String(p.data.assetId)}
              csvFileName={`loadline-model-${r.label.replace(/\s+/g, '-')}-assets.csv`}
              quickSearch
              height={420}
              ariaLabel="Model assets"
              rowClass={(row) => (row.heywood ? 'll-row-muted' : undefined)}
            />
            <p className="mt-2 text-xs text-ink-faint">
              Communality hᵢ = Σₖ Wᵢₖ² and the factor share hᵢ/(hᵢ + Ψᵢ) do not depend on the orientation of the loadings. Factor volatility √hᵢ and specific volatility √Ψᵢ are
              annualised by √{results.data.periodsPerYear} (square-root-of-time, common practice); communality itself is the per-period variance in %² (1 %² = 0.0001).
            </p>
          </Card>
          {isFactor ? (
            <Card
              title="Loadings (orientation-dependent)"
              actions={
                <div role="radiogroup" aria-label="Orientation" className="flex gap-1">
                  {(['canonical', 'varimax'] as const).map((o) => (
                    <Button key={o} size="sm" variant={orientation === o ? 'primary' : 'secondary'} aria-pressed={orientation === o} onClick={() => setOrientation(o)}>
                      {o === 'canonical' ? 'Canonical' : 'Varimax'}
                    </Button>
                  ))}
                </div>
              }
            >
              {loadings.data ? (
                <div className="flex flex-col gap-3">
                  <Alert tone="info" title={orientation === 'canonical' ? 'Canonical orientation' : 'Varimax rotation: an interpretation aid'}>
                    {loadings.data.note}
                  </Alert>
                  <LoadingsHeatmap symbols={loadings.data.symbols} loadings={loadings.data.loadings} factors={loadings.data.factors} assets={rows} />
                </div>
              ) : loadings.isError ? (
                <ErrorAlert error={loadings.error} />
              ) : (
                <p className="text-sm text-ink-faint">Loading…</p>
              )}
            </Card>
          ) : null}
        </>
      ) : null}
    </div>
  );
}
