import { useMemo, useState } from 'react';
import { ParentSize } from '@visx/responsive';
import { scaleLinear, scaleUtc } from '@visx/scale';
import { LinePath, Line } from '@visx/shape';
import { AxisBottom, AxisLeft } from '@visx/axis';
import { Group } from '@visx/group';

type Point = { date: string; value: number };

const MARGIN = { top: 12, right: 16, bottom: 30, left: 56 };

/** The portfolio's factor return (Wᵀw)ᵀz_t over the model's window: per period, or summed over time. */
export function FactorHistoryChart({ points, height = 240 }: { points: Point[]; height?: number }) {
  const [cumulative, setCumulative] = useState(true);
  const series = useMemo(() => {
    let running = 0;
    return points.map((p) => {
      running += p.value;
      return { t: Date.parse(p.date), y: (cumulative ? running : p.value) * 100 };
    });
  }, [points, cumulative]);

  return (
    <div className="flex flex-col gap-2">
      <div className="flex items-center gap-3 text-xs text-ink-soft">
        <label className="flex items-center gap-1">
          <input type="radio" checked={cumulative} onChange={() => setCumulative(true)} /> Summed over the window
        </label>
        <label className="flex items-center gap-1">
          <input type="radio" checked={!cumulative} onChange={() => setCumulative(false)} /> Per period
        </label>
        <span className="ml-auto">% of portfolio value, factor part only (no specific returns)</span>
      </div>
      <div style={{ height }} role="img" aria-label={`Factor return history, ${points.length} periods`}>
        <ParentSize>
          {({ width }) => {
            if (width < 10 || !series.length) return null;
            const innerWidth = width - MARGIN.left - MARGIN.right;
            const innerHeight = height - MARGIN.top - MARGIN.bottom;
            const ys = series.map((s) => s.y);
            const lo = Math.min(0, ...ys);
            const hi = Math.max(0, ...ys);
            const x = scaleUtc({ domain: [series[0].t, series[series.length - 1].t], range: [0, innerWidth] });
            const y = scaleLinear({ domain: [lo, hi === lo ? lo + 1 : hi], range: [innerHeight, 0], nice: true });
            return (
              <svg width={width} height={height}>
                <Group left={MARGIN.left} top={MARGIN.top}>
                  <Line from={{ x: 0, y: y(0) }} to={{ x: innerWidth, y: y(0) }} stroke="#dad5cb" />
                  <LinePath data={series} x={(d) => x(d.t)} y={(d) => y(d.y)} stroke="#0e5c61" strokeWidth={1.5} />
                  <AxisLeft scale={y} numTicks={5} tickFormat={(v) => `${Number(v).toFixed(1)} %`} stroke="#dad5cb" tickStroke="#dad5cb" tickLabelProps={{ fill: '#4a5663', fontSize: 11, fontFamily: 'JetBrains Mono, monospace' }} />
                  <AxisBottom top={innerHeight} scale={x} numTicks={Math.max(2, Math.floor(innerWidth / 110))} stroke="#dad5cb" tickStroke="#dad5cb" tickLabelProps={{ fill: '#4a5663', fontSize: 11 }} />
                </Group>
              </svg>
            );
          }}
        </ParentSize>
      </div>
    </div>
  );
}
