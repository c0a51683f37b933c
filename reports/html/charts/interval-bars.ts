/**
 * Means with their confidence intervals for a few categories (policies, robot time
 * shares): a horizontal bar to the mean and a black interval bar from low to high, with
 * the numbers in the table below. Categories without an honest interval get no bar.
 */
import * as Plot from '@observablehq/plot';
import { dataTable, renderPlot } from '../plot.ts';
import { fixed, type IntervalLike } from '../format.ts';

export interface IntervalRow {
  label: string;
  interval: IntervalLike;
  colour: string;
}

export function intervalBars(rows: IntervalRow[], options: { axisLabel: string; caption: string; digits: number; scale?: number; unit: string; marginLeft?: number }): { svg: string; table: string } {
  const scale = options.scale ?? 1;
  const data = rows.map((r) => ({
    label: r.label,
    colour: r.colour,
    mean: (r.interval.mean ?? NaN) * scale,
    low: r.interval.low === null || r.interval.low === undefined ? null : r.interval.low * scale,
    high: r.interval.high === null || r.interval.high === undefined ? null : r.interval.high * scale,
    halfWidth: r.interval.halfWidth === null ? null : r.interval.halfWidth * scale,
  }));
  const withInterval = data.filter((d) => d.low !== null && d.high !== null && Number.isFinite(d.low) && Number.isFinite(d.high));
  const svg = renderPlot({
    width: 880,
    height: 40 + rows.length * 34,
    marginLeft: options.marginLeft ?? 150,
    x: { grid: true, label: options.axisLabel, nice: true },
    y: { domain: data.map((d) => d.label), label: null },
    color: { type: 'identity' },
    marks: [
      Plot.barX(data, { y: 'label', x: 'mean', fill: 'colour', insetTop: 6, insetBottom: 6, className: 'mark-mean-bar' }),
      Plot.ruleY(withInterval, { y: 'label', x1: 'low', x2: 'high', stroke: '#111', strokeWidth: 2, className: 'mark-interval' }),
      Plot.tickX(withInterval, { y: 'label', x: 'low', stroke: '#111', strokeWidth: 2, insetTop: 9, insetBottom: 9 }),
      Plot.tickX(withInterval, { y: 'label', x: 'high', stroke: '#111', strokeWidth: 2, insetTop: 9, insetBottom: 9 }),
      Plot.ruleX([0]),
    ],
  });
  const table = dataTable(options.caption, [
    { label: '', value: (d: (typeof data)[number]) => d.label },
    { label: `mean (${options.unit})`, value: (d) => fixed(d.mean, options.digits), numeric: true },
    { label: '± half-width', value: (d) => (d.halfWidth === null ? 'no interval' : fixed(d.halfWidth, options.digits)), numeric: true },
    { label: 'low', value: (d) => fixed(d.low, options.digits), numeric: true },
    { label: 'high', value: (d) => fixed(d.high, options.digits), numeric: true },
  ], data);
  return { svg, table };
}
