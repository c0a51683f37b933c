/**
 * Throughput against fleet size or offered demand (size and sweep pages), drawn by
 * Observable Plot: per point the mean over replications as a symbol and its confidence
 * interval as a vertical bar, a line through each series' means, and the references a
 * reader compares with: the target (dashed horizontal), offered = delivered (a diagonal,
 * when demand is on the x axis), and labelled vertical rules (the hand-formula fleet, the
 * knee). Points whose backlog grew (not stable) are drawn hollow; capacity points, which
 * have no stability verdict, filled. Each series has its own colour (Okabe-Ito) and symbol,
 * so series stay apart in grey and for colour-vision deficiencies (palette.ts seriesColours). Fleet sizes are whole
 * robots: an integer axis gets integer ticks only. With several lines, points at one x are
 * nudged sideways a little so that none hides another (the table gives the true values).
 */
import * as Plot from '@observablehq/plot';
import { ticks } from 'd3-array';
import { renderPlot } from '../plot.ts';
import type { IntervalLike } from '../format.ts';
import { accentColour, seriesColours } from '../palette.ts';

export interface CurvePoint {
  x: number;
  /** The line the point belongs to ('' for a single line). */
  series: string;
  throughputPerHour: IntervalLike;
  /** false: backlog grew (drawn hollow); null or undefined: no verdict (capacity). */
  stable?: boolean | null;
}

export interface CurveOptions {
  xLabel: string;
  /** Whole numbers only on the x axis (robots). */
  integerX?: boolean;
  target?: number | null;
  /** Ring the point of this series at this x (the recommended fleet). */
  recommended?: { x: number; series: string } | null;
  /** Labelled vertical rules: the hand-formula fleet, the knee, ... */
  verticals?: { x: number; label: string; className: string }[];
  /** Draw offered = delivered (x is the offered demand in tasks per hour). */
  offeredLine?: boolean;
  height?: number;
}

/** Symbols Plot draws filled or hollow alike, in order of how well they tell apart when small. */
export const curveSymbols = ['circle', 'square', 'triangle', 'diamond', 'star', 'wye', 'cross'] as const;

/**
 * Ticks for the x axis: the values drawn when there are few of them (a sweep's fleet
 * sizes), else d3's nice ticks; on an integer axis (robots) whole numbers only.
 */
export function axisTicks(values: readonly number[], low: number, high: number, integer: boolean): number[] {
  const distinct = [...new Set(values)].sort((a, b) => a - b);
  if (distinct.length > 0 && distinct.length <= 12) return integer ? distinct.filter(Number.isInteger) : distinct;
  const nice = ticks(low, high, 10);
  return integer ? nice.filter(Number.isInteger) : nice;
}

/**
 * Sideways nudge per series, in pixels, so that points of several lines at one x do not
 * hide each other: 7 px apart, centred on the true x, at most 48 px in all.
 */
export function seriesNudge(series: readonly string[]): (name: string) => number {
  if (series.length < 2) return () => 0;
  const step = Math.min(7, 48 / (series.length - 1));
  return (name) => (series.indexOf(name) - (series.length - 1) / 2) * step;
}

export function throughputCurve(points: CurvePoint[], options: CurveOptions): { svg: string; stableDots: number; unstableDots: number; intervals: number; series: string[] } {
  const series = [...new Set(points.map((p) => p.series))];
  const colourOf = (s: string) => seriesColours[series.indexOf(s) % seriesColours.length];
  const symbolOf = (s: string) => curveSymbols[series.indexOf(s) % curveSymbols.length];
  const nudge = seriesNudge(series);
  const data = points
    .filter((p) => typeof p.throughputPerHour?.mean === 'number' && Number.isFinite(p.throughputPerHour.mean))
    .map((p) => ({
      x: p.x,
      series: p.series,
      mean: p.throughputPerHour.mean as number,
      low: p.throughputPerHour.low ?? null,
      high: p.throughputPerHour.high ?? null,
      unstable: p.stable === false,
    }));
  const ranged = data.filter((d) => d.low !== null && d.high !== null);
  const verticals = options.verticals ?? [];
  const xs = [...points.map((p) => p.x), ...verticals.map((v) => v.x)];
  const xLow = Math.min(...xs);
  const xHigh = Math.max(...xs);
  // Half a step of room on each side so the end points are not on the frame.
  const pad = options.integerX ? 0.5 : (xHigh - xLow) * 0.04 || 1;
  const xDomain = [xLow - pad, xHigh + pad];
  const target = options.target ?? null;
  const yTop = Math.max(target ?? 0, ...data.map((d) => d.high ?? d.mean), ...(options.offeredLine ? [xHigh] : [])) * 1.1 || 1;

  const marks: Plot.Markish[] = [Plot.ruleY([0])];
  if (options.offeredLine) {
    marks.push(
      Plot.line([{ x: Math.max(0, xLow), y: Math.max(0, xLow) }, { x: xHigh, y: xHigh }], { x: 'x', y: 'y', stroke: '#777', strokeDasharray: '2 3', className: 'mark-offered-line' }),
      Plot.text([{ x: xHigh, y: xHigh }], { x: 'x', y: 'y', text: () => 'offered = delivered', textAnchor: 'end', dx: -6, dy: -8, fill: '#555' }),
    );
  }
  for (const v of verticals) marks.push(Plot.ruleX([v.x], { stroke: '#555', strokeDasharray: '5 3', className: v.className }));
  // One label per x: references that fall on the same fleet (hand formula and knee) share it.
  for (const x of [...new Set(verticals.map((v) => v.x))]) {
    const text = verticals.filter((v) => v.x === x).map((v) => v.label).join(', ');
    marks.push(Plot.text([x], { x: (d: number) => d, text: () => text, frameAnchor: 'top', rotate: -90, textAnchor: 'end', dx: 10, dy: 4, fill: '#333', fontSize: 10 }));
  }
  if (target !== null) {
    marks.push(
      Plot.ruleY([target], { stroke: accentColour, strokeWidth: 2, strokeDasharray: '6 4', className: 'mark-target-line' }),
      Plot.text([target], { y: (d: number) => d, text: () => `target ${target} tasks/h`, frameAnchor: 'left', dy: -8, dx: 4, textAnchor: 'start', fill: accentColour }),
    );
  }
  // One set of marks per series, each nudged sideways by its own dx.
  for (const name of series) {
    const dx = nudge(name);
    const own = data.filter((d) => d.series === name);
    marks.push(
      Plot.line(own, { x: 'x', y: 'mean', stroke: 'series', strokeWidth: 1.3, strokeOpacity: 0.8, sort: 'x', dx }),
      Plot.ruleX(own.filter((d) => d.low !== null && d.high !== null), { x: 'x', y1: 'low', y2: 'high', stroke: 'series', strokeWidth: 2, dx, className: 'mark-throughput-interval' }),
      Plot.dot(own.filter((d) => !d.unstable), { x: 'x', y: 'mean', r: 4.5, symbol: 'series', fill: 'series', stroke: '#111', strokeWidth: 0.8, dx, className: 'mark-point-stable' }),
      Plot.dot(own.filter((d) => d.unstable), { x: 'x', y: 'mean', r: 4.5, symbol: 'series', fill: 'white', stroke: 'series', strokeWidth: 2, dx, className: 'mark-point-unstable' }),
    );
  }
  const ringed = options.recommended ? data.filter((d) => d.x === options.recommended!.x && d.series === options.recommended!.series) : [];
  if (ringed.length > 0) marks.push(Plot.dot(ringed, { x: 'x', y: 'mean', r: 11, stroke: accentColour, strokeWidth: 2.5, dx: nudge(ringed[0].series), className: 'mark-recommended' }));

  const svg = renderPlot({
    width: 880,
    height: options.height ?? 360,
    marginLeft: 56,
    marginRight: 24,
    marginTop: 24,
    x: {
      label: options.xLabel,
      domain: xDomain,
      ticks: axisTicks(xs, xDomain[0], xDomain[1], options.integerX === true),
      ...(options.integerX ? { tickFormat: 'd' } : {}),
    },
    y: { grid: true, label: 'throughput (tasks/h)', domain: [0, yTop], nice: true },
    // One legend of coloured symbols (Plot colours a symbol legend bound to the same channel as fill); none for a single line.
    symbol: { domain: series, range: series.map(symbolOf), legend: series.length > 1, fill: 'color', stroke: '#111', strokeWidth: 0.8 } as Plot.ScaleOptions,
    color: { domain: series, range: series.map(colourOf) },
    marks,
  });
  return { svg, stableDots: data.filter((d) => !d.unstable).length, unstableDots: data.filter((d) => d.unstable).length, intervals: ranged.length, series };
}
