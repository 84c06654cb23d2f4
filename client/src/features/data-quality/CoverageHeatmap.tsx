import { memo, useMemo } from 'react';
import { HeatmapRect } from '@visx/heatmap';
import { scaleLinear } from '@visx/scale';
import { AxisBottom, AxisLeft } from '@visx/axis';
import { Group } from '@visx/group';
import { ParentSize } from '@visx/responsive';
import type { Coverage } from '@shared/schemas/dataQuality';

type Cell = { bin: number; count: number };
type Column = { bin: number; bins: Cell[] };

const MARGIN = { top: 8, right: 12, bottom: 36, left: 150 };
const ROW = 3; // pixels per asset

/**
 * Coverage by asset (rows, grouped by sector) and month (columns): the share of the month's stored dates on which
 * the asset has a value. White is no data (not listed yet, or a gap); deep teal is complete.
 */
function Heatmap({ coverage, width }: { coverage: Coverage; width: number }) {
  const rows = coverage.assets.length;
  const columns = coverage.months.length;
  const height = rows * ROW + MARGIN.top + MARGIN.bottom;
  const innerWidth = Math.max(10, width - MARGIN.left - MARGIN.right);
  const binWidth = innerWidth / Math.max(1, columns);
  const data = useMemo<Column[]>(
    () => coverage.months.map((_, j) => ({ bin: j, bins: coverage.assets.map((__, i) => ({ bin: i, count: coverage.cells[i][j] })) })),
    [coverage],
  );
  const xScale = scaleLinear<number>({ domain: [0, columns], range: [0, innerWidth] });
  const yScale = scaleLinear<number>({ domain: [0, rows], range: [0, rows * ROW] });
  const colour = scaleLinear<string>({ domain: [0, 1], range: ['#f3f1ec', '#0e5c61'] });
  // One left tick per sector: where its block of rows starts.
  const sectorStarts = useMemo(() => {
    const starts: { index: number; sector: string }[] = [];
    coverage.assets.forEach((a, i) => {
      if (i === 0 || a.sector !== coverage.assets[i - 1].sector) starts.push({ index: i, sector: a.sector ?? 'No sector' });
    });
    return starts;
  }, [coverage]);
  const yearTicks = coverage.months.map((m, j) => ({ m, j })).filter(({ m }) => m.endsWith('-01'));

  return (
    <svg width={width} height={height} role="img" aria-label={`Coverage heatmap: ${rows} assets by ${columns} months`}>
      <Group left={MARGIN.left} top={MARGIN.top}>
        <rect width={innerWidth} height={rows * ROW} fill="#ffffff" />
        <HeatmapRect<Column, Cell> data={data} xScale={(j) => xScale(j) ?? 0} yScale={(i) => yScale(i) ?? 0} colorScale={(v) => colour(v as number)} binWidth={binWidth} binHeight={ROW} gap={0} />
        <AxisLeft
          scale={yScale}
          tickValues={sectorStarts.map((s) => s.index)}
          tickFormat={(v) => sectorStarts.find((s) => s.index === Number(v))?.sector ?? ''}
          stroke="#c2bcb0"
          tickStroke="#c2bcb0"
          tickLabelProps={{ fontSize: 10, fill: '#4a5663', textAnchor: 'end', dy: '0.6em' }}
        />
        <AxisBottom
          top={rows * ROW}
          scale={xScale}
          tickValues={yearTicks.map((t) => t.j)}
          tickFormat={(v) => coverage.months[Number(v)]?.slice(0, 4) ?? ''}
          stroke="#c2bcb0"
          tickStroke="#c2bcb0"
          tickLabelProps={{ fontSize: 10, fill: '#4a5663', textAnchor: 'start', fontFamily: 'JetBrains Mono' }}
        />
      </Group>
    </svg>
  );
}

/** Memoised: tens of thousands of cells should not re-render when the page's other state changes. */
export const CoverageHeatmap = memo(function CoverageHeatmap({ coverage }: { coverage: Coverage }) {
  if (!coverage.assets.length) return <p className="text-sm text-ink-soft">No return series stored yet.</p>;
  return (
    <div>
      {/* ParentSize measures in an absolutely placed box: the outer box needs the heatmap's own height. */}
      <ParentSize debounceTime={50} parentSizeStyles={{ width: '100%', height: coverage.assets.length * ROW + MARGIN.top + MARGIN.bottom }}>{({ width }) => (width > 0 ? <Heatmap coverage={coverage} width={width} /> : null)}</ParentSize>
      <div className="mt-2 flex items-center gap-2 text-xs text-ink-soft" aria-hidden>
        <span className="inline-block h-3 w-6 border border-line" style={{ background: '#f3f1ec' }} /> no values
        <span className="inline-block h-3 w-6" style={{ background: 'linear-gradient(90deg, #f3f1ec, #0e5c61)' }} />
        <span className="inline-block h-3 w-6" style={{ background: '#0e5c61' }} /> every date of the month
      </div>
    </div>
  );
});
