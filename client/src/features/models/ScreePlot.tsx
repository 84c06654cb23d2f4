import { ParentSize } from '@visx/responsive';
import { scaleBand, scaleLinear } from '@visx/scale';
import { Bar, Line } from '@visx/shape';
import { AxisBottom, AxisLeft } from '@visx/axis';
import { Group } from '@visx/group';

const MARGIN = { top: 14, right: 16, bottom: 34, left: 64 };

/**
 * The top eigenvalues of the sample covariance (scree plot) with the Marchenko–Pastur upper edge: eigenvalues of a
 * pure-noise covariance of this shape would stay below the dashed line (Marchenko & Pastur 1967).
 */
export function ScreePlot({ eigenvalues, edge, factors, height = 240 }: { eigenvalues: number[]; edge: number | null; factors: number; height?: number }) {
  const above = edge === null ? null : eigenvalues.filter((v) => v > edge).length;
  return (
    <figure className="flex flex-col gap-1">
      <div style={{ height }} role="img" aria-label={`Scree plot of ${eigenvalues.length} eigenvalues${above !== null ? `, ${above} above the Marchenko–Pastur edge` : ''}`}>
        <ParentSize>
          {({ width }) => {
            if (width < 10 || !eigenvalues.length) return null;
            const innerWidth = width - MARGIN.left - MARGIN.right;
            const innerHeight = height - MARGIN.top - MARGIN.bottom;
            const x = scaleBand({ domain: eigenvalues.map((_, k) => k + 1), range: [0, innerWidth], padding: 0.25 });
            const top = Math.max(eigenvalues[0], edge ?? 0) * 1.05;
            const y = scaleLinear({ domain: [0, top], range: [innerHeight, 0], nice: true });
            return (
              <svg width={width} height={height}>
                <Group left={MARGIN.left} top={MARGIN.top}>
                  {eigenvalues.map((v, k) => (
                    <Bar key={k} x={x(k + 1)} y={y(v)} width={x.bandwidth()} height={innerHeight - y(v)} fill={k < factors ? '#0e5c61' : '#c2bcb0'}>
                      <title>{`λ${k + 1} = ${v.toExponential(3)}`}</title>
                    </Bar>
                  ))}
                  {edge !== null ? (
                    <>
                      <Line from={{ x: 0, y: y(edge) }} to={{ x: innerWidth, y: y(edge) }} stroke="#8f5600" strokeWidth={1.5} strokeDasharray="5 4" />
                      <text x={innerWidth} y={y(edge) - 4} textAnchor="end" fontSize={11} fill="#8f5600">
                        Marchenko–Pastur edge
                      </text>
                    </>
                  ) : null}
                  <AxisLeft scale={y} numTicks={5} tickFormat={(v) => Number(v).toExponential(1)} stroke="#dad5cb" tickStroke="#dad5cb" tickLabelProps={{ fill: '#4a5663', fontSize: 10, fontFamily: 'JetBrains Mono, monospace' }} />
                  <AxisBottom top={innerHeight} scale={x} stroke="#dad5cb" tickStroke="#dad5cb" label="Eigenvalue rank" labelProps={{ fill: '#4a5663', fontSize: 11, textAnchor: 'middle' }} tickLabelProps={{ fill: '#4a5663', fontSize: 10 }} />
                </Group>
              </svg>
            );
          }}
        </ParentSize>
      </div>
      <figcaption className="text-xs text-ink-soft">
        Top eigenvalues of the sample covariance; teal bars are the {factors} fitted factor{factors === 1 ? '' : 's'}.
        {above !== null
          ? ` ${above} eigenvalue${above === 1 ? '' : 's'} lie above the edge σ²(1 + √(N/T))², beyond what noise of one common variance σ² would give.` +
            (above > factors ? ' The edge assumes every asset has the same specific variance; uneven specific variances push noise eigenvalues above it, so more eigenvalues than factors can clear it (Marchenko & Pastur 1967).' : '')
          : ''}
      </figcaption>
    </figure>
  );
}
