import { useMemo } from 'react';
import { Link, useSearchParams } from 'react-router-dom';
import type { ColDef } from 'ag-grid-community';
import type { ModelComparison } from '@shared/schemas/modelRuns';
import { PageHeader } from '../../components/PageHeader';
import { Card } from '../../components/Card';
import { Alert, ErrorAlert } from '../../components/Alert';
import { Caution } from '../../components/Caution';
import { DataGrid } from '../../components/DataGrid';
import { formatNumber } from '../../components/Figure';
import { useCompareRuns } from './api';

type Row = ModelComparison['assets'][number];

const pct = (v: number | null | undefined) => (v === null || v === undefined ? null : v * 100);
const fmt = (digits: number, signed = false) => (p: { value: number | null }) => (p.value === null || p.value === undefined ? '—' : formatNumber(p.value, digits, signed));
/** Per-period variance as squared percent, as on the model page (1 %² = 0.0001). */
const squaredPercent = (v: number | null | undefined) => (v === null || v === undefined ? null : v * 1e4);

/** Two model versions side by side: how far their loading subspaces are apart and how each asset changed. */
export default function ComparePage() {
  const [params] = useSearchParams();
  const first = params.get('first') ? Number(params.get('first')) : null;
  const second = params.get('second') ? Number(params.get('second')) : null;
  const compare = useCompareRuns(first, second);
  const c = compare.data;
  const columns = useMemo<ColDef<Row>[]>(
    () => [
      { field: 'symbol', headerName: 'Symbol', pinned: 'left', cellClass: 'll-figure', minWidth: 90, maxWidth: 130 },
      { colId: 'communalityFirst', headerName: `Communality ${c?.first.label ?? 'A'} (%²)`, type: 'figure', minWidth: 120, valueGetter: (p) => squaredPercent(p.data?.communalityFirst), valueFormatter: fmt(4) },
      { colId: 'communalitySecond', headerName: `Communality ${c?.second.label ?? 'B'} (%²)`, type: 'figure', minWidth: 120, valueGetter: (p) => squaredPercent(p.data?.communalitySecond), valueFormatter: fmt(4) },
      { colId: 'communalityChange', headerName: 'Change (%²)', type: 'figure', minWidth: 110, valueGetter: (p) => squaredPercent(p.data?.communalityChange), valueFormatter: fmt(4, true) },
      { headerName: `Specific vol ${c?.first.label ?? 'A'} (%)`, type: 'figure', minWidth: 120, valueGetter: (p) => pct(p.data?.specificVolFirst), valueFormatter: fmt(2) },
      { headerName: `Specific vol ${c?.second.label ?? 'B'} (%)`, type: 'figure', minWidth: 120, valueGetter: (p) => pct(p.data?.specificVolSecond), valueFormatter: fmt(2) },
      { headerName: 'Change (pp)', type: 'figure', minWidth: 120, valueGetter: (p) => pct(p.data?.specificVolChange), valueFormatter: fmt(2, true) },
    ],
    [c],
  );
  return (
    <div className="flex flex-col gap-4">
      <PageHeader title="Compare model versions" description={c ? `${c.first.label} against ${c.second.label}` : 'Choose two succeeded runs on the Models page.'} actions={<Link className="text-sm text-accent hover:underline" to="/models">All models</Link>} />
      {first === null || second === null || first === second ? <Alert tone="info">Choose two different versions to compare.</Alert> : null}
      {compare.isError ? <ErrorAlert error={compare.error} /> : null}
      {c ? (
        <>
          <Card title="Principal angles between the loading subspaces">
            {c.principalAnglesDegrees ? (
              <div className="flex flex-col gap-2">
                <ul className="flex flex-wrap gap-3 font-mono text-sm tabular-nums" aria-label="Principal angles">
                  {c.principalAnglesDegrees.map((a, k) => (
                    <li key={k} className="rounded-md border border-line bg-sunken px-2 py-1">
                      θ{k + 1} = {formatNumber(a, 2)}°
                    </li>
                  ))}
                </ul>
                <p className="text-xs text-ink-soft">{c.note}</p>
                <LargestAngleNote anglesDegrees={c.principalAnglesDegrees} />
              </div>
            ) : (
              <p className="text-sm text-ink-soft">At least one of the two is a dense covariance (sample or Ledoit–Wolf): there is no loading subspace to compare.</p>
            )}
            <p className="mt-2 text-xs text-ink-faint">
              {c.commonAssets} assets in common{c.onlyInFirst.length ? `; ${c.onlyInFirst.length} only in ${c.first.label}` : ''}
              {c.onlyInSecond.length ? `; ${c.onlyInSecond.length} only in ${c.second.label}` : ''}.
            </p>
          </Card>
          <Card title="Portfolio volatility under each version">
            {c.portfolios.length ? (
              <div className="overflow-x-auto">
                <table className="w-full text-sm" aria-label="Portfolio volatility">
                  <thead className="border-b border-line text-right text-xs text-ink-soft">
                    <tr>
                      <th className="px-2 py-1.5 text-left font-medium">Portfolio</th>
                      <th className="px-2 py-1.5 font-medium">Holdings</th>
                      <th className="px-2 py-1.5 font-medium">Covered {c.first.label}</th>
                      <th className="px-2 py-1.5 font-medium">Covered {c.second.label}</th>
                      <th className="px-2 py-1.5 font-medium">Vol {c.first.label} (ann. %)</th>
                      <th className="px-2 py-1.5 font-medium">Vol {c.second.label} (ann. %)</th>
                      <th className="px-2 py-1.5 font-medium">Change (pp)</th>
                    </tr>
                  </thead>
                  <tbody className="font-mono text-xs tabular-nums">
                    {c.portfolios.map((p) => (
                      <tr key={p.id} className="border-b border-line text-right last:border-0">
                        <td className="px-2 py-1 text-left font-sans text-sm">
                          <Link className="text-accent hover:underline" to={`/portfolios/${p.id}/risk`}>
                            {p.name}
                          </Link>
                          {p.kind === 'benchmark' ? <span className="ml-1 text-xs text-ink-faint">(benchmark)</span> : null}
                        </td>
                        <td className="px-2 py-1">{p.holdings}</td>
                        <td className="px-2 py-1">{formatNumber(p.coveredFirst * 100, 1)} %</td>
                        <td className="px-2 py-1">{formatNumber(p.coveredSecond * 100, 1)} %</td>
                        <td className="px-2 py-1">{p.volFirst === null ? '—' : formatNumber(p.volFirst * 100, 2)}</td>
                        <td className="px-2 py-1">{p.volSecond === null ? '—' : formatNumber(p.volSecond * 100, 2)}</td>
                        <td className="px-2 py-1">{p.volChange === null ? '—' : formatNumber(p.volChange * 100, 2, true)}</td>
                      </tr>
                    ))}
                  </tbody>
                </table>
                <p className="mt-2 text-xs text-ink-faint">Holdings a model does not cover are left out of its figure (see the covered weight). Annualised by the square root of the periods per year.</p>
              </div>
            ) : (
              <p className="text-sm text-ink-soft">No portfolios you can read.</p>
            )}
          </Card>
          <Card title="Per asset">
            <DataGrid<Row> rows={c.assets} columns={columns} getRowId={(p) => p.data.symbol} csvFileName={`loadline-compare-${c.first.id}-${c.second.id}.csv`} quickSearch height={440} ariaLabel="Per-asset changes" />
            <p className="mt-2 text-xs text-ink-faint">For dense covariances (sample, Ledoit–Wolf) the “specific” volatility is the asset’s total volatility and there is no communality.</p>
          </Card>
          <Caution extra="Differences between versions reflect both the data window and estimation noise." />
        </>
      ) : null}
    </div>
  );
}

/**
 * Said when the largest principal angle passes 45° (Björck & Golub 1973): near 90° a direction spanned by one model's
 * loadings has no counterpart in the other's.
 */
function LargestAngleNote({ anglesDegrees }: { anglesDegrees: number[] }) {
  if (!anglesDegrees.length) return null;
  const largest = Math.max(...anglesDegrees);
  if (!(largest > 45)) return null;
  return (
    <p className="text-sm text-ink" data-testid="largest-angle-note">
      The largest angle is {formatNumber(largest, 1)}°, above 45°: a direction in one model has little or no counterpart in the other (near 90°, none).
    </p>
  );
}
