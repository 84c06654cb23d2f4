import { useEffect, useMemo, useRef, useState, type ReactNode } from 'react';
import { Link, useParams, useSearchParams } from 'react-router-dom';
import type { ColDef } from 'ag-grid-community';
import type { PortfolioRisk } from '@shared/schemas/portfolios';
import { ESTIMATOR_LABELS } from '@shared/schemas/modelRuns';
import { PageHeader } from '../../components/PageHeader';
import { Card } from '../../components/Card';
import { Button } from '../../components/Button';
import { Field } from '../../components/Field';
import { ApiError } from '../../lib/api';
import { Alert, ErrorAlert } from '../../components/Alert';
import { Caution } from '../../components/Caution';
import { DataGrid } from '../../components/DataGrid';
import { Figure, formatNumber } from '../../components/Figure';
import { StatusBadge } from '../../components/StatusBadge';
import { FactorHistoryChart } from './FactorHistoryChart';
import { HoldingsGrid, describeProblems, isBlankHolding, localProblems, newHoldingKey, type EditableHolding } from './HoldingsGrid';
import { WholeNumberField } from './WholeNumberField';
import { useApprovedModels, usePortfolio, usePortfolioRisk, useWhatIfRisk, type RiskParams, type WhatIfWeight } from './api';

type Contributor = PortfolioRisk['contributors'][number];

const pct = (x: number | null | undefined, digits = 2) => (x === null || x === undefined || Number.isNaN(x) ? '—' : `${formatNumber(x * 100, digits)} %`);

/** How the model's periods read: 252 a year are trading days (daily), 52 weeks, 12 months; anything else "periods". */
export function periodWords(periodsPerYear: number | undefined): { one: string; many: string; adjective: string } {
  if (periodsPerYear === 252) return { one: 'trading day', many: 'trading days', adjective: 'daily' };
  if (periodsPerYear === 52) return { one: 'week', many: 'weeks', adjective: 'weekly' };
  if (periodsPerYear === 12) return { one: 'month', many: 'months', adjective: 'monthly' };
  return { one: 'period', many: 'periods', adjective: 'per period' };
}

/** `approved 2026-12-02`, `draft`, `retired (approved 2026-11-02)`. */
function lifecycleText(lifecycle: string, approvedAt: string | null): string {
  const day = approvedAt ? approvedAt.slice(0, 10) : null;
  if (!day) return lifecycle;
  return lifecycle === 'approved' ? `approved ${day}` : `${lifecycle} (approved ${day})`;
}

function useDebounced<T>(value: T, ms: number): T {
  const [debounced, setDebounced] = useState(value);
  useEffect(() => {
    const timer = setTimeout(() => setDebounced(value), ms);
    return () => clearTimeout(timer);
  }, [value, ms]);
  return debounced;
}

export default function PortfolioRiskPage() {
  const id = Number(useParams().id);
  const portfolio = usePortfolio(id);
  const approved = useApprovedModels();
  const [search] = useSearchParams();
  // ?model=<run id> opens the page under a chosen run (e.g. from a model page); default: the latest approved one.
  const [params, setParams] = useState<RiskParams>(() => {
    const chosen = Number(search.get('model'));
    // The page lists every contributor (grid, CSV) and draws the factor return history: ask for both.
    return { horizon: 1, draws: 10_000, seed: 20261202, contributors: 'all', history: true, ...(chosen > 0 ? { model: chosen } : {}) };
  });
  const [editRows, setEditRows] = useState<EditableHolding[] | null>(null);

  // Rows with nothing typed in them are left out; any other row that cannot be read is marked, and until every marked
  // row is fixed the last valid weights stay in force (no what-if is sent for a partial portfolio).
  const whatIfProblems = useMemo(() => (editRows ? localProblems(editRows, 'weight', { ignoreBlankRows: true }) : new Map<number, string[]>()), [editRows]);
  const whatIfProblemLines = useMemo(() => (editRows ? describeProblems(editRows, whatIfProblems) : []), [editRows, whatIfProblems]);
  const editedRows = useMemo(() => (editRows ?? []).filter((r) => !isBlankHolding(r)), [editRows]);
  const whatIfBlocked = editRows !== null && (whatIfProblems.size > 0 || editedRows.length === 0);
  const lastValidWeights = useRef<WhatIfWeight[] | null>(null);
  const whatIfWeights = useMemo<WhatIfWeight[] | null>(() => {
    if (!editRows) return (lastValidWeights.current = null);
    if (whatIfBlocked) return lastValidWeights.current;
    return (lastValidWeights.current = editedRows.map((r) => ({ symbol: r.symbol, weight: (r.value as number) / 100 })));
  }, [editRows, editedRows, whatIfBlocked]);
  const editedSum = editedRows.reduce((s, r) => s + (r.value ?? 0), 0);
  const debouncedWeights = useDebounced(whatIfWeights, 350);
  const debouncedParams = useDebounced(params, 350);
  const saved = usePortfolioRisk(id, debouncedParams);
  const whatIf = useWhatIfRisk(id, debouncedParams, debouncedWeights);
  const inWhatIf = editRows !== null;
  // The server's problems with the weights it was sent (unknown symbols) go on the rows holding those symbols.
  const gridProblems = useMemo(() => {
    const merged = new Map(whatIfProblems);
    if (!(whatIf.error instanceof ApiError) || !debouncedWeights || !editRows) return merged;
    for (const issue of whatIf.error.issues) {
      const index = /^holdings\.(\d+)\./.exec(issue.path)?.[1];
      const symbol = index === undefined ? undefined : debouncedWeights[Number(index)]?.symbol;
      const row = symbol ? editRows.find((r) => r.symbol === symbol) : undefined;
      if (row) merged.set(row.key, [...(merged.get(row.key) ?? []), issue.message.replace(/^row \d+: /, '')]);
    }
    return merged;
  }, [whatIfProblems, whatIf.error, debouncedWeights, editRows]);
  const risk = inWhatIf ? (whatIf.data ?? saved.data) : saved.data;
  const error = inWhatIf ? whatIf.error : saved.error;
  const updating = (inWhatIf ? whatIf.isFetching : saved.isFetching) || whatIfWeights !== debouncedWeights || params !== debouncedParams;

  const startWhatIf = () => {
    if (!portfolio.data) return;
    setEditRows(portfolio.data.holdings.map((h) => ({ key: newHoldingKey(), symbol: h.symbol, assetName: h.assetName, value: h.weight * 100 })));
  };

  const contributorColumns = useMemo<ColDef<Contributor>[]>(
    () => [
      { field: 'symbol', headerName: 'Symbol', cellClass: 'll-figure', minWidth: 90, maxWidth: 130 },
      { field: 'assetName', headerName: 'Asset', flex: 1.6, minWidth: 160, valueFormatter: (p) => p.value ?? '' },
      { field: 'weight', headerName: 'Weight', type: 'figure', minWidth: 100, valueFormatter: (p) => pct(p.value) },
      { field: 'marginal', headerName: 'Marginal (∂σ/∂w, ann.)', type: 'figure', minWidth: 130, valueFormatter: (p) => pct(p.value) },
      { field: 'contribution', headerName: 'Contribution (ann.)', type: 'figure', minWidth: 120, valueFormatter: (p) => pct(p.value, 3) },
      { field: 'percent', headerName: 'Share of variance', type: 'figure', minWidth: 120, sort: 'desc', comparator: (a: number, b: number) => Math.abs(a) - Math.abs(b), valueFormatter: (p) => pct(p.value) },
    ],
    [],
  );

  const name = portfolio.data?.name ?? risk?.portfolio.name ?? 'Portfolio';
  const periods = periodWords(risk?.model.periodsPerYear);
  // Cards showing figures say so when they are for the edited weights.
  const figureTitle = (title: string): ReactNode =>
    inWhatIf ? (
      <span className="flex flex-wrap items-center gap-2">
        {title} <StatusBadge tone="warn">What-if</StatusBadge>
      </span>
    ) : (
      title
    );

  // The settings and what-if controls wait for the portfolio: a missing one (or another manager's) shows only this.
  if (!(id > 0) || (portfolio.error instanceof ApiError && portfolio.error.status === 404)) {
    return (
      <div className="flex flex-col gap-5">
        <PageHeader title="Portfolio not found" actions={<Link to="/portfolios" className="text-sm text-ink-soft hover:text-ink">← Portfolios</Link>} />
        <Alert tone="warn" title="No portfolio to show">
          There is no portfolio {Number.isFinite(id) ? <span className="font-mono">#{id}</span> : 'at this address'} that you can open. It may have been deleted, or belong to
          another portfolio manager. <Link to="/portfolios" className="font-medium text-accent underline">See your portfolios</Link>.
        </Alert>
      </div>
    );
  }
  if (portfolio.isPending) return <p className="text-sm text-ink-soft">Loading the portfolio…</p>;
  const percentSum = risk ? risk.contributors.reduce((s, c) => s + c.percent, risk.otherContributors?.percent ?? 0) : null;

  return (
    <div className="flex flex-col gap-5">
      <PageHeader
        title={`Risk · ${name}`}
        description={
          risk ? (
            <>
              Model <span className="font-mono">{risk.model.label}</span> ({ESTIMATOR_LABELS[risk.model.method]}, {lifecycleText(risk.model.lifecycle, risk.model.approvedAt)}) · window {risk.model.windowStart} to {risk.model.windowEnd} · {risk.model.assets} assets ×{' '}
              {risk.model.observations} observations{risk.model.factors ? ` · ${risk.model.factors} factors` : ''}
            </>
          ) : (
            'What the approved models say about this portfolio, next to what the sample covariance says.'
          )
        }
        actions={
          <Link to={`/portfolios/${id}`} className="text-sm text-ink-soft hover:text-ink">
            ← Holdings
          </Link>
        }
      />
      <Caution
        extra={risk ? `Estimation window: ${risk.model.windowStart} to ${risk.model.windowEnd} (${risk.model.label}).${risk.currencyNote ? ` ${risk.currencyNote}` : ''}` : undefined}
      />
      {risk?.modelNote ? <Alert title="Model used">{risk.modelNote}</Alert> : null}

      <Card title="Model and settings">
        <div className="flex flex-wrap items-end gap-3">
          <Field label="Model version">
            <select
              className="field-input min-w-64"
              value={params.model ?? ''}
              onChange={(e) => setParams({ ...params, model: e.target.value ? Number(e.target.value) : undefined })}
            >
              <option value="">Latest approved</option>
              {params.model && !(approved.data ?? []).some((m) => m.runId === params.model) ? (
                <option value={params.model}>{risk?.model.runId === params.model ? `${risk.model.label} (${risk.model.lifecycle})` : `Run ${params.model}`}</option>
              ) : null}
              {(approved.data ?? []).map((m) => (
                <option key={m.runId} value={m.runId}>
                  {m.label} · {ESTIMATOR_LABELS[m.estimator]} · {m.firstDate} to {m.lastDate}
                </option>
              ))}
            </select>
          </Field>
          <WholeNumberField label={`Horizon (${periods.many})`} what="The horizon" value={params.horizon} min={1} max={260} onCommit={(horizon) => setParams((p) => ({ ...p, horizon }))} />
          <Field label="Monte Carlo draws">
            <select className="field-input" value={params.draws} onChange={(e) => setParams({ ...params, draws: Number(e.target.value) })}>
              {[5_000, 10_000, 50_000, 100_000].map((d) => (
                <option key={d} value={d}>
                  {d.toLocaleString('en-GB')}
                </option>
              ))}
            </select>
          </Field>
          <WholeNumberField label="Seed" what="The seed" className="w-32" value={params.seed} min={0} max={2 ** 31 - 1} onCommit={(seed) => setParams((p) => ({ ...p, seed }))} />
          <div className="ml-auto flex items-center gap-2 self-center">
            {inWhatIf ? <StatusBadge tone="warn">What-if: not saved</StatusBadge> : null}
            <span aria-live="polite" className="text-xs text-ink-faint">
              {updating ? 'Updating…' : risk ? `Computed in ${risk.elapsedMs.toFixed(1)} ms` : ''}
            </span>
          </div>
        </div>
      </Card>

      <ErrorAlert error={error} title={inWhatIf ? 'The what-if weights cannot be evaluated' : 'Risk cannot be shown'} />

      {inWhatIf ? <WhatIfStatus blocked={whatIfBlocked} problems={whatIfProblemLines} sum={editedSum} holdings={editedRows.length} shown={whatIf.data !== undefined} /> : null}

      {risk ? (
        <>
          {risk.uncovered.length ? (
            <Alert tone="warn" title={`${risk.uncovered.length} holding(s) outside the model's universe`}>
              Left out of every figure (not renormalised): {risk.uncovered.map((u) => `${u.symbol} (${pct(u.weight)})`).join(', ')}.
            </Alert>
          ) : null}
          <div className="grid grid-cols-1 gap-5 xl:grid-cols-2">
            <Card title={figureTitle('Predicted volatility, side by side (annualised)')}>
              <table className="w-full text-sm" aria-label="Predicted volatility">
                <thead>
                  <tr className="border-b border-line text-left text-xs text-ink-soft">
                    <th className="py-1.5 font-medium">Estimator</th>
                    <th className="py-1.5 text-right font-medium">Volatility</th>
                    <th className="py-1.5 text-right font-medium">Ratio to sample</th>
                    <th className="py-1.5 pl-3 font-medium">Source</th>
                  </tr>
                </thead>
                <tbody>
                  {risk.volatilities.map((v) => (
                    <tr key={v.estimator} className="border-b border-line/60 align-top">
                      <th scope="row" className="py-1.5 text-left font-medium text-ink">
                        {ESTIMATOR_LABELS[v.estimator]}
                      </th>
                      <td className="py-1.5 text-right font-mono whitespace-nowrap tabular-nums" data-testid={`vol-${v.estimator}`}>
                        {pct(v.annualisedVolatility)}
                      </td>
                      <td className="py-1.5 text-right font-mono tabular-nums" data-testid={`ratio-${v.estimator}`}>
                        {v.ratioToSample === null ? '—' : formatNumber(v.ratioToSample, 3)}
                      </td>
                      <td className="py-1.5 pl-3 text-xs text-ink-soft">
                        {v.source}
                        {v.note ? <span className="block text-warn">{v.note}</span> : null}
                      </td>
                    </tr>
                  ))}
                </tbody>
              </table>
              <p className="mt-2 text-xs text-ink-soft">
                q = N/T = <span className="font-mono">{risk.concentrationRatio.toFixed(3)}</span>. Sample and Ledoit–Wolf are computed on the same window and universe as {risk.model.label}.
              </p>
              {risk.sampleNote ? (
                <div className="mt-2">
                  <Alert tone="warn">{risk.sampleNote}</Alert>
                </div>
              ) : null}
            </Card>

            <Card title={figureTitle('Factor and specific risk, tracking error')}>
              <div className="grid grid-cols-2 gap-4">
                <Figure label="Volatility, this model (annualised)" value={risk.annualisedVolatility * 100} unit="%" size="lg" />
                <Figure label={periods.adjective === 'per period' ? 'Volatility per period' : `Volatility, ${periods.adjective}`} value={risk.volatility * 100} unit="%" digits={3} size="lg" />
                {risk.split ? (
                  <div className="col-span-2">
                    <p className="mb-1 text-xs font-medium text-ink-soft">Share of variance</p>
                    <div className="flex h-4 overflow-hidden rounded-sm border border-line" aria-hidden>
                      <div className="bg-accent" style={{ width: `${risk.split.factorShare * 100}%` }} />
                      <div className="bg-line-strong" style={{ width: `${risk.split.specificShare * 100}%` }} />
                    </div>
                    <p className="mt-1 text-sm">
                      Factor <span className="font-mono tabular-nums" data-testid="factor-share">{pct(risk.split.factorShare, 1)}</span> · specific{' '}
                      <span className="font-mono tabular-nums">{pct(risk.split.specificShare, 1)}</span>
                    </p>
                  </div>
                ) : (
                  <p className="col-span-2 text-sm text-ink-soft">A dense covariance model has no factor/specific split.</p>
                )}
                <div className="col-span-2 border-t border-line pt-3">
                  {risk.trackingError ? (
                    <>
                      <Figure label={`Tracking error against ${risk.trackingError.benchmark.name} (annualised)`} value={risk.trackingError.annualisedVolatility * 100} unit="%" size="lg" />
                      {risk.trackingError.uncoveredBenchmarkWeight > 0 ? (
                        <p className="text-xs text-warn">Benchmark weight outside the model's universe: {pct(risk.trackingError.uncoveredBenchmarkWeight)}.</p>
                      ) : null}
                    </>
                  ) : (
                    <p className="text-sm text-ink-soft">No benchmark chosen: tracking error is not shown.</p>
                  )}
                </div>
              </div>
            </Card>

            <Card title={figureTitle(`Value at risk and expected shortfall, ${risk.tailRisk.horizon} ${risk.tailRisk.horizon === 1 ? periods.one : periods.many}`)}>
              <table className="w-full text-sm" aria-label="Value at risk and expected shortfall">
                <thead>
                  <tr className="border-b border-line text-left text-xs text-ink-soft">
                    <th className="py-1.5 font-medium">Method</th>
                    <th className="py-1.5 text-right font-medium">VaR 95 %</th>
                    <th className="py-1.5 text-right font-medium">ES 95 %</th>
                    <th className="py-1.5 text-right font-medium">VaR 99 %</th>
                    <th className="py-1.5 text-right font-medium">ES 99 %</th>
                  </tr>
                </thead>
                <tbody>
                  {[
                    { label: 'Parametric (normal)', rows: risk.tailRisk.parametric },
                    { label: `Monte Carlo (${risk.tailRisk.monteCarlo.draws.toLocaleString('en-GB')} draws, seed ${risk.tailRisk.monteCarlo.seed})`, rows: risk.tailRisk.monteCarlo.levels },
                  ].map((m) => (
                    <tr key={m.label} className="border-b border-line/60">
                      <th scope="row" className="py-1.5 text-left font-medium">
                        {m.label}
                      </th>
                      {[0.95, 0.99].flatMap((c) => {
                        const row = m.rows.find((r) => r.confidence === c);
                        return [
                          <td key={`v${c}`} className="py-1.5 text-right font-mono whitespace-nowrap tabular-nums">
                            {pct(row?.valueAtRisk)}
                          </td>,
                          <td key={`e${c}`} className="py-1.5 text-right font-mono whitespace-nowrap tabular-nums">
                            {pct(row?.expectedShortfall)}
                          </td>,
                        ];
                      })}
                    </tr>
                  ))}
                </tbody>
              </table>
              <p className="mt-2 text-xs text-ink-soft">
                Losses as a share of portfolio value, zero mean. Monte Carlo draws from the fitted generative model (simulated volatility {periods.adjective}{' '}
                <span className="font-mono">{pct(risk.tailRisk.monteCarlo.simulatedVolatility, 3)}</span>); both scale to the horizon by the square root of time.
              </p>
            </Card>

            <Card title={figureTitle('Exposure summary')}>
              {risk.exposure ? (
                <div className="flex flex-col gap-3">
                  <div className="grid grid-cols-2 gap-4">
                    <Figure label="Factor variance share (rotation-invariant)" value={risk.exposure.factorVarianceShare * 100} unit="%" />
                    <Figure label={`Exposure norm ‖Wᵀw‖, ${periods.adjective} (rotation-invariant)`} value={risk.exposure.exposureNorm * 100} unit="%" digits={3} />
                  </div>
                  <table className="w-full text-sm" aria-label="Exposures to the canonical factors">
                    <thead>
                      <tr className="border-b border-line text-left text-xs text-ink-soft">
                        <th className="py-1 font-medium">Canonical factor</th>
                        <th className="py-1 text-right font-medium">Exposure (Wᵀw, % {periods.adjective})</th>
                      </tr>
                    </thead>
                    <tbody>
                      {risk.exposure.exposures.map((e, k) => (
                        <tr key={k} className="border-b border-line/60">
                          <td className="py-1">Factor {k + 1}</td>
                          <td className="py-1 text-right font-mono tabular-nums">{formatNumber(e * 100, 3, true)}</td>
                        </tr>
                      ))}
                    </tbody>
                  </table>
                  <p className="text-xs text-ink-soft">{risk.exposure.caveat}</p>
                </div>
              ) : (
                <p className="text-sm text-ink-soft">Exposures exist only under factor models; {risk.model.label} is a dense covariance.</p>
              )}
            </Card>
          </div>

          {risk.factorReturnHistory ? (
            <Card title={figureTitle('Factor return history over the estimation window')}>
              <FactorHistoryChart points={risk.factorReturnHistory} />
              <p className="mt-1 text-xs text-ink-soft">From the stored factor scores E[z_t | x_t] weighted by the portfolio's exposures Wᵀw. Past factor returns do not predict future ones.</p>
            </Card>
          ) : null}

          <Card title={figureTitle('Contributors to volatility (Euler)')}>
            <DataGrid<Contributor>
              rows={risk.contributors}
              columns={contributorColumns}
              getRowId={(p) => p.data.symbol}
              csvFileName={`risk-contributors-${id}.csv`}
              quickSearch
              height={360}
              ariaLabel="Contributors"
            />
            <p className="mt-2 text-xs text-ink-soft">
              Shares of variance sum to <span className="font-mono">{percentSum === null ? '—' : pct(percentSum, 4)}</span>; contributions sum to the annualised volatility.
            </p>
          </Card>
        </>
      ) : saved.isLoading ? (
        <p className="text-sm text-ink-soft">Computing…</p>
      ) : null}

      <Card
        title="What-if weights"
        actions={
          inWhatIf ? (
            <Button size="sm" onClick={() => setEditRows(null)}>
              Back to saved weights
            </Button>
          ) : (
            <Button size="sm" variant="primary" onClick={startWhatIf} disabled={!portfolio.data}>
              Edit weights (what-if)
            </Button>
          )
        }
      >
        {inWhatIf && editRows ? (
          <div className="flex flex-col gap-2">
            <p className="text-sm text-ink-soft">
              Edit weights in % (they need not sum to 100 %; now <span className="font-mono">{formatNumber(editedSum, 2)} %</span>). Every figure above follows; nothing is saved. Rows left
              blank are ignored.
            </p>
            {whatIfProblemLines.length ? <p className="text-sm font-medium text-breach">Fix the marked rows to update the figures.</p> : null}
            <div>
              <Button size="sm" onClick={() => setEditRows([...editRows, { key: newHoldingKey(), symbol: '', assetName: null, value: null }])}>
                Add row
              </Button>
            </div>
            <HoldingsGrid rows={editRows} onChange={setEditRows} valueLabel="Weight (%)" valueDigits={4} problems={gridProblems} height={320} ariaLabel="What-if weights" />
          </div>
        ) : (
          <p className="text-sm text-ink-soft">Change weights here to see every figure on this page recomputed for the edited portfolio, without saving.</p>
        )}
      </Card>
      <Caution compact />
    </div>
  );
}

/** Above the figures in what-if mode: they are for the edited weights (their sum), or why they have not followed. */
function WhatIfStatus({ blocked, problems, sum, holdings, shown }: { blocked: boolean; problems: string[]; sum: number; holdings: number; shown: boolean }) {
  const summary = (
    <>
      Edited weights sum to <span className="font-mono tabular-nums" data-testid="what-if-sum">{formatNumber(sum, 2)} %</span> over {holdings} holding{holdings === 1 ? '' : 's'}.
    </>
  );
  if (blocked)
    return (
      <div data-testid="what-if-status">
        <Alert tone="warn" title="Fix the marked rows to update the figures">
          {problems.length ? (
            <ul className="list-disc pl-4">
              {problems.slice(0, 10).map((line) => (
                <li key={line}>{line}</li>
              ))}
              {problems.length > 10 ? <li>and {problems.length - 10} more rows</li> : null}
            </ul>
          ) : (
            <p>Give at least one holding a weight.</p>
          )}
          <p className="mt-1">
            {shown ? 'The figures below are still those of the last weights that could be read.' : 'The figures below are still those of the saved weights.'} {summary}
          </p>
        </Alert>
      </div>
    );
  return (
    <div data-testid="what-if-status">
      <Alert tone="info" title="What-if figures for the edited weights, not saved">
        {summary} The saved portfolio is unchanged; “Back to saved weights” returns to it.
      </Alert>
    </div>
  );
}
