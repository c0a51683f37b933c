/**
 * Paired differences between policies for one metric (comparison.json differences): the
 * mean difference a - b as a dot with its Bonferroni-adjusted paired-t interval, and the
 * zero line; an interval that does not cross zero is a significant difference.
 */
import * as Plot from '@observablehq/plot';
import { dataTable, renderPlot } from '../plot.ts';
import { fixed } from '../format.ts';
import { accentColour } from '../palette.ts';
import type { Json } from '../results-folder.ts';

export function differenceChart(rows: Json[], options: { axisLabel: string; digits: number; scale?: number; unit: string }): { svg: string; table: string; pairs: number } {
  const scale = options.scale ?? 1;
  const data = rows.map((d) => ({
    pair: `${d.a} − ${d.b}`,
    mean: typeof d.mean === 'number' ? d.mean * scale : NaN,
    low: d.low === null ? null : d.low * scale,
    high: d.high === null ? null : d.high * scale,
    significant: d.significant === true,
    confidence: d.confidence,
    unpaired: d.unpairedHalfWidth === null || d.unpairedHalfWidth === undefined ? null : d.unpairedHalfWidth * scale,
    halfWidth: d.halfWidth === null ? null : d.halfWidth * scale,
    note: typeof d.note === 'string' ? d.note : '',
  }));
  const ranged = data.filter((d) => d.low !== null && d.high !== null);
  const svg = renderPlot({
    width: 880,
    height: 50 + data.length * 30,
    marginLeft: 260,
    x: { grid: true, label: options.axisLabel, nice: true },
    y: { domain: data.map((d) => d.pair), label: null },
    marks: [
      Plot.ruleX([0], { stroke: '#111', strokeDasharray: '3 3' }),
      Plot.ruleY(ranged, { y: 'pair', x1: 'low', x2: 'high', stroke: (d: (typeof data)[number]) => (d.significant ? accentColour : '#555'), strokeWidth: 2.5, className: 'mark-difference-interval' }),
      Plot.dot(data.filter((d) => Number.isFinite(d.mean)), { y: 'pair', x: 'mean', r: 4.5, fill: (d: (typeof data)[number]) => (d.significant ? accentColour : 'white'), stroke: '#111', className: 'mark-difference-mean' }),
    ],
  });
  const table = dataTable(
    `Paired differences (${options.unit})`,
    [
      { label: 'a − b', value: (d: (typeof data)[number]) => d.pair },
      { label: 'mean', value: (d) => fixed(d.mean, options.digits), numeric: true },
      { label: '± half-width', value: (d) => (d.halfWidth === null ? 'no interval' : fixed(d.halfWidth, options.digits)), numeric: true },
      { label: 'level', value: (d) => `${fixed(d.confidence * 100, 2)}%`, numeric: true },
      { label: 'significant', value: (d) => (d.significant ? 'yes' : 'no') },
      { label: 'unpaired ± (for scale)', value: (d) => (d.unpaired === null ? '–' : fixed(d.unpaired, options.digits)), numeric: true },
      ...(data.some((d) => d.note !== '') ? [{ label: 'note', value: (d: (typeof data)[number]) => d.note }] : []),
    ],
    data,
  );
  return { svg, table, pairs: data.length };
}
