/** Throughput per sample interval over the run, one line per replication, the warm-up cut shaded (throughput.csv). */
import * as Plot from '@observablehq/plot';
import { chartFigure, dataTable, renderPlot } from '../plot.ts';
import { fixed } from '../format.ts';
import type { ResultsFolder } from '../results-folder.ts';

/** Rows are averaged into at most ~120 points per replication so that long runs stay readable. */
export function throughputOverTime(series: NonNullable<ResultsFolder['throughput']>, warmupSeconds: number): { html: string; lines: number } {
  const byReplication = new Map<number, typeof series>();
  for (const row of series) {
    let list = byReplication.get(row.replication);
    if (!list) byReplication.set(row.replication, (list = []));
    list.push(row);
  }
  const points: { replication: string; minutes: number; throughputPerHour: number }[] = [];
  for (const [replication, rows] of byReplication) {
    const group = Math.max(1, Math.ceil(rows.length / 120));
    for (let i = 0; i < rows.length; i += group) {
      const part = rows.slice(i, i + group);
      const seconds = part.reduce((s, r) => s + (r.endSeconds - r.startSeconds), 0);
      const delivered = part.reduce((s, r) => s + (r.throughputPerHour * (r.endSeconds - r.startSeconds)) / 3600, 0);
      points.push({ replication: `replication ${replication + 1}`, minutes: (part[0].startSeconds + seconds / 2) / 60, throughputPerHour: (delivered / seconds) * 3600 });
    }
  }
  const endMinutes = series.reduce((m, r) => Math.max(m, r.endSeconds), 0) / 60;
  const marks: Plot.Markish[] = [];
  // Without y1/y2 the band spans the whole height of the frame.
  if (warmupSeconds > 0) marks.push(Plot.rect([{ x1: 0, x2: warmupSeconds / 60 }], { x1: 'x1', x2: 'x2', fill: '#e8e8e8', className: 'mark-warm-up' }));
  marks.push(
    Plot.ruleY([0]),
    Plot.line(points, { x: 'minutes', y: 'throughputPerHour', z: 'replication', stroke: '#333', strokeOpacity: 0.55, strokeWidth: 1.2, className: 'mark-replication-line' }),
  );
  const svg = renderPlot({
    width: 880,
    height: 260,
    x: { domain: [0, endMinutes], label: 'simulated time (min)' },
    y: { grid: true, label: 'throughput (tasks/h)', nice: true },
    marks,
  });
  const table = dataTable(
    'Mean throughput per replication after the warm-up',
    [
      { label: 'replication', value: (r: { replication: number; mean: number; intervals: number }) => r.replication + 1 },
      { label: 'intervals after warm-up', value: (r) => r.intervals, numeric: true },
      { label: 'throughput (tasks/h)', value: (r) => fixed(r.mean, 1), numeric: true },
    ],
    [...byReplication].map(([replication, rows]) => {
      const kept = rows.filter((r) => !r.warmup);
      const seconds = kept.reduce((s, r) => s + (r.endSeconds - r.startSeconds), 0);
      const delivered = kept.reduce((s, r) => s + (r.throughputPerHour * (r.endSeconds - r.startSeconds)) / 3600, 0);
      return { replication, intervals: kept.length, mean: seconds > 0 ? (delivered / seconds) * 3600 : NaN };
    }),
  );
  return {
    html: chartFigure(
      'throughput-over-time',
      'Throughput over simulated time',
      `Deliveries per hour in each sample interval, one line per replication${warmupSeconds > 0 ? '; the grey band is the warm-up cut, left out of every figure in this report' : ''}. A curve that still climbs or falls at the end means the run is not in a steady state.`,
      svg,
      table,
    ),
    lines: byReplication.size,
  };
}
