import { useMemo, useState } from 'react';
import { Button } from '../../components/Button';

/** Diverging colour: teal for positive, vermillion for negative, white at zero (readable in print too). */
function colour(v: number, max: number): string {
  const t = Math.min(1, Math.abs(v) / (max || 1));
  const [r, g, b] = v >= 0 ? [14, 92, 97] : [178, 59, 11];
  const mix = (c: number) => Math.round(255 + (c - 255) * t);
  return `rgb(${mix(r)},${mix(g)},${mix(b)})`;
}

/** What the heatmap knows of each asset beyond its loadings (from the model's asset rows). */
export type HeatmapAsset = { symbol: string; sector: string | null; variance: number };

type Scale = 'standardised' | 'raw';
type Order = 'sector' | 'model';

const COLUMN = 40;
const FEW_ROWS = 200;

/**
 * Loadings as a heatmap, one row per asset, one column per factor (orientation-dependent: the caller labels it).
 * Standardised, each row is Wᵢₖ / √(hᵢ + Ψᵢ): the model's correlation of asset i with factor k, on a fixed −1…1
 * scale, so volatile assets do not drown the rest; raw, the loadings in return units. Ordered by sector, a factor
 * that belongs to a sector shows as a block.
 */
export function LoadingsHeatmap({ symbols, loadings, factors, assets }: { symbols: string[]; loadings: number[][]; factors: number; assets?: HeatmapAsset[] }) {
  const [scale, setScale] = useState<Scale>(assets ? 'standardised' : 'raw');
  const [order, setOrder] = useState<Order>(assets ? 'sector' : 'model');
  const bySymbol = useMemo(() => new Map((assets ?? []).map((a) => [a.symbol, a])), [assets]);

  const rows = useMemo(() => {
    const out = symbols.map((symbol, i) => {
      const asset = bySymbol.get(symbol);
      const sd = asset && asset.variance > 0 ? Math.sqrt(asset.variance) : null;
      const values = scale === 'standardised' && sd ? loadings[i].map((v) => v / sd) : loadings[i];
      return { symbol, sector: asset?.sector ?? null, values };
    });
    // Assets without a sector go last.
    if (order === 'sector') out.sort((a, b) => (a.sector === b.sector ? 0 : a.sector === null ? 1 : b.sector === null ? -1 : a.sector.localeCompare(b.sector)) || a.symbol.localeCompare(b.symbol));
    return out;
  }, [symbols, loadings, bySymbol, scale, order]);

  const max = scale === 'standardised' ? 1 : rows.reduce((m, row) => Math.max(m, ...row.values.map(Math.abs)), 0);
  const many = rows.length > FEW_ROWS;
  const rowHeight = many ? 5 : 14;
  // Mono 10 px labels: about 6.1 px a character. Many rows: sector names at the start of each sector instead.
  const longest = many ? rows.reduce((m, r) => Math.max(m, (r.sector ?? '').length), 0) : rows.reduce((m, r) => Math.max(m, r.symbol.length), 0);
  const labelWidth = Math.max(48, Math.ceil(longest * 6.1) + 12);
  const width = labelWidth + factors * COLUMN;
  const height = 20 + rows.length * rowHeight;
  const format = (v: number) => (scale === 'standardised' ? v.toFixed(3) : v.toExponential(3));

  return (
    <div className="flex flex-col gap-2">
      {assets ? (
        <div className="flex flex-wrap items-center gap-3 text-xs text-ink-soft">
          <span className="flex items-center gap-1" role="radiogroup" aria-label="Loading scale">
            Scale
            {(['standardised', 'raw'] as const).map((s) => (
              <Button key={s} size="sm" variant={scale === s ? 'primary' : 'secondary'} aria-pressed={scale === s} onClick={() => setScale(s)}>
                {s === 'standardised' ? 'Correlation with factor' : 'Raw loadings'}
              </Button>
            ))}
          </span>
          <span className="flex items-center gap-1" role="radiogroup" aria-label="Row order">
            Rows
            {(['sector', 'model'] as const).map((o) => (
              <Button key={o} size="sm" variant={order === o ? 'primary' : 'secondary'} aria-pressed={order === o} onClick={() => setOrder(o)}>
                {o === 'sector' ? 'By sector' : 'As fitted'}
              </Button>
            ))}
          </span>
        </div>
      ) : null}
      <div className="max-h-[520px] overflow-auto rounded-md border border-line">
        <svg width={width} height={height} role="img" aria-label={`Loadings of ${symbols.length} assets on ${factors} factors`}>
          {Array.from({ length: factors }, (_, k) => (
            <text key={k} x={labelWidth + k * COLUMN + COLUMN / 2} y={13} textAnchor="middle" fontSize={11} fill="#4a5663">
              F{k + 1}
            </text>
          ))}
          {rows.map((row, i) => {
            const firstOfSector = many && order === 'sector' && (i === 0 || rows[i - 1].sector !== row.sector);
            return (
              <g key={row.symbol} transform={`translate(0, ${20 + i * rowHeight})`}>
                {!many ? (
                  <text x={labelWidth - 6} y={rowHeight - 3} textAnchor="end" fontSize={10} fontFamily="JetBrains Mono, monospace" fill="#1d2630">
                    {row.symbol}
                  </text>
                ) : firstOfSector ? (
                  <>
                    <line x1={0} x2={width} y1={0} y2={0} stroke="#4a5663" strokeWidth={0.6} />
                    <text x={labelWidth - 6} y={10} textAnchor="end" fontSize={10} fill="#1d2630">
                      {row.sector ?? 'No sector'}
                    </text>
                  </>
                ) : null}
                {row.values.map((v, k) => (
                  <rect key={k} x={labelWidth + k * COLUMN} y={0} width={COLUMN - 1} height={rowHeight - 1} fill={colour(v, max)}>
                    <title>{`${row.symbol}${row.sector ? ` (${row.sector})` : ''} F${k + 1}: ${format(v)}`}</title>
                  </rect>
                ))}
              </g>
            );
          })}
        </svg>
      </div>
      <div className="flex flex-wrap items-center gap-2 text-xs text-ink-soft">
        <span className="inline-block h-3 w-6" style={{ background: colour(-max, max) }} /> {scale === 'standardised' ? '−1' : 'negative'}
        <span className="inline-block h-3 w-6 border border-line" style={{ background: '#fff' }} /> 0
        <span className="inline-block h-3 w-6" style={{ background: colour(max, max) }} />{' '}
        {scale === 'standardised' ? '+1: each cell is Wᵢₖ/√(hᵢ + Ψᵢ), the model’s correlation of the asset with the factor' : `positive (largest |loading| ${max.toExponential(2)})`}
        {many ? ' · hover a cell for the asset and value' : ''}
      </div>
    </div>
  );
}
