import { useMemo } from 'react';

/** Diverging colour: teal for positive, vermillion for negative, white at zero (readable in print too). */
function colour(v: number, max: number): string {
  const t = Math.min(1, Math.abs(v) / (max || 1));
  const [r, g, b] = v >= 0 ? [14, 92, 97] : [178, 59, 11];
  const mix = (c: number) => Math.round(255 + (c - 255) * t);
  return `rgb(${mix(r)},${mix(g)},${mix(b)})`;
}

/** Loadings as a heatmap, one row per asset, one column per factor (orientation-dependent: the caller labels it). */
export function LoadingsHeatmap({ symbols, loadings, factors }: { symbols: string[]; loadings: number[][]; factors: number }) {
  const max = useMemo(() => loadings.reduce((m, row) => Math.max(m, ...row.map(Math.abs)), 0), [loadings]);
  const cell = 14;
  const rowHeight = symbols.length > 200 ? 3 : cell;
  // Mono 10 px labels: about 6.1 px a character.
  const labelWidth = symbols.length > 200 ? 0 : Math.max(48, Math.ceil(symbols.reduce((m, s) => Math.max(m, s.length), 0) * 6.1) + 10);
  const width = labelWidth + factors * 40;
  const height = 20 + symbols.length * rowHeight;
  return (
    <div className="flex flex-col gap-2">
      <div className="max-h-[520px] overflow-auto rounded-md border border-line">
        <svg width={width} height={height} role="img" aria-label={`Loadings of ${symbols.length} assets on ${factors} factors`}>
          {Array.from({ length: factors }, (_, k) => (
            <text key={k} x={labelWidth + k * 40 + 20} y={13} textAnchor="middle" fontSize={11} fill="#4a5663">
              F{k + 1}
            </text>
          ))}
          {loadings.map((row, i) => (
            <g key={symbols[i]} transform={`translate(0, ${20 + i * rowHeight})`}>
              {labelWidth ? (
                <text x={labelWidth - 6} y={rowHeight - 3} textAnchor="end" fontSize={10} fontFamily="JetBrains Mono, monospace" fill="#1d2630">
                  {symbols[i]}
                </text>
              ) : null}
              {row.map((v, k) => (
                <rect key={k} x={labelWidth + k * 40} y={0} width={39} height={rowHeight - (rowHeight > 4 ? 1 : 0)} fill={colour(v, max)}>
                  <title>{`${symbols[i]} F${k + 1}: ${v.toExponential(3)}`}</title>
                </rect>
              ))}
            </g>
          ))}
        </svg>
      </div>
      <div className="flex items-center gap-2 text-xs text-ink-soft">
        <span className="inline-block h-3 w-6" style={{ background: colour(-max, max) }} /> negative
        <span className="inline-block h-3 w-6 border border-line" style={{ background: '#fff' }} /> zero
        <span className="inline-block h-3 w-6" style={{ background: colour(max, max) }} /> positive (largest |loading| {max.toExponential(2)})
      </div>
    </div>
  );
}
