/**
 * Throughput against fleet size (size and sweep pages): the mean per fleet size with its
 * confidence interval as a vertical bar, a line through the means, the target as a dashed
 * horizontal line and the recommended fleet ringed. Fleet sizes whose run was not stable
 * are drawn hollow.
 */
import * as Plot from '@observablehq/plot';
import { chartFigure, dataTable, renderPlot } from '../plot.ts';
import { fixed, intervalText, type IntervalLike } from '../format.ts';
import { accentColour } from '../palette.ts';

export interface CurvePoint {
  robots: number;
  throughputPerHour: IntervalLike;
  leadTimeSeconds?: IntervalLike | null;
  stable?: boolean | null;
  /** Several lines (sweep): the series this point belongs to. */
  series?: string;
  /** The size search's own verdict (size --json curve: meets, fails or undecided), shown as it is when given. */
  verdict?: string;
}

export function fleetSizeCurve(id: string, points: CurvePoint[], options: { target?: number | null; recommended?: number | null; title?: string; xLabel?: string } = {}): { html: string; dots: number; intervals: number } {
  const data = points.map((p) => ({
    robots: p.robots,
    series: p.series ?? '',
    mean: p.throughputPerHour.mean ?? NaN,
    low: p.throughputPerHour.low ?? null,
    high: p.throughputPerHour.high ?? null,
    stable: p.stable !== false,
    point: p,
  }));
  const ranged = data.filter((d) => d.low !== null && d.high !== null);
  const target = options.target ?? null;
  const recommended = data.filter((d) => d.robots === options.recommended);
  const series = [...new Set(data.map((d) => d.series))];
  const marks: Plot.Markish[] = [
    Plot.ruleY([0]),
    Plot.line(data, { x: 'robots', y: 'mean', z: 'series', stroke: series.length > 1 ? 'series' : '#555', strokeWidth: 1.2, sort: 'robots' }),
    Plot.ruleX(ranged, { x: 'robots', y1: 'low', y2: 'high', stroke: series.length > 1 ? 'series' : '#111', strokeWidth: 2, className: 'mark-throughput-interval' }),
    Plot.dot(data, { x: 'robots', y: 'mean', r: 4, stroke: series.length > 1 ? 'series' : '#111', fill: (d: (typeof data)[number]) => (d.stable ? '#111' : 'white'), className: 'mark-throughput-mean' }),
  ];
  if (target !== null) marks.push(Plot.ruleY([target], { stroke: accentColour, strokeWidth: 2, strokeDasharray: '6 4', className: 'mark-target-line' }), Plot.text([target], { y: (d: number) => d, text: () => `target ${target} tasks/h`, frameAnchor: 'left', dy: -8, dx: 4, textAnchor: 'start', fill: accentColour }));
  if (recommended.length > 0) marks.push(Plot.dot(recommended, { x: 'robots', y: 'mean', r: 10, stroke: accentColour, strokeWidth: 2.5, className: 'mark-recommended' }));
  const svg = renderPlot({
    width: 880,
    height: 340,
    x: { label: options.xLabel ?? 'robots', nice: true },
    y: { grid: true, label: 'throughput (tasks/h)', nice: true, domain: target !== null ? [0, Math.max(target, ...data.map((d) => d.high ?? d.mean)) * 1.08] : undefined },
    color: series.length > 1 ? { legend: true } : undefined,
    marks,
  });
  const table = dataTable(
    'Throughput per fleet size',
    [
      ...(series.length > 1 ? [{ label: 'series', value: (d: (typeof data)[number]) => d.series }] : []),
      { label: options.xLabel ?? 'robots', value: (d: (typeof data)[number]) => d.robots, numeric: true },
      { label: 'throughput (tasks/h)', value: (d) => intervalText(d.point.throughputPerHour, 1), numeric: true },
      { label: 'lead time (s)', value: (d) => intervalText(d.point.leadTimeSeconds, 1), numeric: true },
      { label: 'stable', value: (d) => (d.point.stable === null || d.point.stable === undefined ? '–' : d.point.stable ? 'yes' : 'no') },
      ...(target !== null
        ? [
            {
              label: 'meets target',
              value: (d: (typeof data)[number]) =>
                d.point.verdict !== undefined ? (d.point.verdict === 'meets' ? 'yes' : d.point.verdict === 'fails' ? 'no' : d.point.verdict) : d.low !== null ? (d.low >= target ? 'yes' : 'no') : fixed(d.mean, 1),
            },
          ]
        : []),
    ],
    data,
  );
  const reading = `Dot: mean throughput over replications (hollow: backlog grew, not stable); vertical bar: its confidence interval${target !== null ? '; dashed line: the target' : ''}${recommended.length > 0 ? '; ring: the recommended fleet' : ''}. The curve flattens where robots start to get in each other's way.`;
  return { html: chartFigure(id, options.title ?? 'Throughput against fleet size', reading, svg, table), dots: data.length, intervals: ranged.length };
}
