/**
 * Mean lead time against the swept parameter (sweep page): at a stable point the mean with
 * its interval as a symbol and a vertical bar; at an unstable point (the backlog grew) an
 * hollow symbol with an arrow up at the lower bound, with no interval (DESIGN §7: an unstable run's lead
 * times count the ages of tasks still waiting, so they only say "at least"). Series as in
 * the throughput chart (same colours and symbols).
 */
import * as Plot from '@observablehq/plot';
import { renderPlot } from '../plot.ts';
import type { IntervalLike } from '../format.ts';
import { seriesColours } from '../palette.ts';
import { axisTicks, curveSymbols, seriesNudge } from './throughput-curve.ts';

export interface LeadPoint {
  x: number;
  series: string;
  lead: IntervalLike | null;
  lowerBound: boolean;
}

export function leadTimeCurve(points: LeadPoint[], options: { xLabel: string; integerX?: boolean }): { svg: string; points: number; lowerBounds: number; intervals: number } {
  const series = [...new Set(points.map((p) => p.series))];
  const nudge = seriesNudge(series);
  const data = points
    .filter((p) => p.lead !== null && typeof p.lead.mean === 'number' && Number.isFinite(p.lead.mean))
    .map((p) => ({ x: p.x, series: p.series, mean: p.lead!.mean as number, low: p.lowerBound ? null : (p.lead!.low ?? null), high: p.lowerBound ? null : (p.lead!.high ?? null), lowerBound: p.lowerBound }));
  if (data.length === 0) return { svg: '', points: 0, lowerBounds: 0, intervals: 0 };
  const ranged = data.filter((d) => d.low !== null && d.high !== null);
  const xs = points.map((p) => p.x);
  const pad = options.integerX ? 0.5 : (Math.max(...xs) - Math.min(...xs)) * 0.04 || 1;
  const domain = [Math.min(...xs) - pad, Math.max(...xs) + pad];
  const symbolRange = series.map((_, i) => curveSymbols[i % curveSymbols.length]);
  // The scale follows the stable points; a lower bound above it is pinned to the top edge
  // with its value written beside it (an unstable point's "at least" would flatten the rest).
  const stableTop = Math.max(0, ...data.filter((d) => !d.lowerBound).map((d) => d.high ?? d.mean));
  const yTop = stableTop > 0 ? stableTop * 1.25 : Math.max(1, ...data.map((d) => d.mean)) * 1.1;
  // Labels of lower bounds at one x go one row each, in series order.
  const lowerBounds = data
    .filter((d) => d.lowerBound)
    .map((d, _, all) => ({ ...d, shown: Math.min(d.mean, yTop), label: `≥ ${Math.round(d.mean)}`, row: all.filter((o) => o.x === d.x && series.indexOf(o.series) < series.indexOf(d.series)).length }));
  const svg = renderPlot({
    width: 880,
    height: 300,
    marginLeft: 56,
    // Room for the value of a lower bound at the last x.
    marginRight: 64,
    marginTop: 30,
    x: { label: options.xLabel, domain, ticks: axisTicks(xs, domain[0], domain[1], options.integerX === true), ...(options.integerX ? { tickFormat: 'd' } : {}) },
    y: { grid: true, label: 'mean lead time (s)', domain: [0, yTop], nice: true },
    color: { domain: series, range: series.map((_, i) => seriesColours[i % seriesColours.length]) },
    symbol: { domain: series, range: symbolRange, legend: series.length > 1, fill: 'color', stroke: '#111', strokeWidth: 0.8 } as Plot.ScaleOptions,
    marks: [
      Plot.ruleY([0]),
      // One set of marks per series, each nudged sideways by its own dx (as in the throughput chart).
      ...series.flatMap((name) => {
        const dx = nudge(name);
        const own = data.filter((d) => d.series === name);
        const bounds = lowerBounds.filter((d) => d.series === name);
        return [
          Plot.line(own.filter((d) => !d.lowerBound), { x: 'x', y: 'mean', stroke: 'series', strokeOpacity: 0.7, sort: 'x', dx }),
          Plot.ruleX(own.filter((d) => d.low !== null && d.high !== null), { x: 'x', y1: 'low', y2: 'high', stroke: 'series', strokeWidth: 2, dx, className: 'mark-lead-interval' }),
          Plot.dot(own.filter((d) => !d.lowerBound), { x: 'x', y: 'mean', r: 4.5, symbol: 'series', fill: 'series', stroke: '#111', strokeWidth: 0.8, dx, className: 'mark-lead-mean' }),
          // A lower bound: the hollow symbol with an arrow up ("at least this").
          Plot.dot(bounds, { x: 'x', y: 'shown', r: 4.5, symbol: 'series', fill: 'white', stroke: 'series', strokeWidth: 2, dx, className: 'mark-lead-lower-bound' }),
          Plot.text(bounds, { x: 'x', y: 'shown', text: () => '↑', dy: -11, dx, fontSize: 14, fontWeight: 'bold', fill: 'series' }),
        ];
      }),
      // Values of the lower bounds to the right of each x, one row per series.
      ...lowerBounds.map((d) => Plot.text([d], { x: 'x', y: 'shown', text: 'label', dx: 14 + Math.max(0, ...series.map(nudge)), dy: d.row * 12, textAnchor: 'start', fontSize: 10, fill: 'series', stroke: 'white', strokeWidth: 3 })),
    ],
  });
  return { svg, points: data.length, lowerBounds: data.filter((d) => d.lowerBound).length, intervals: ranged.length };
}
