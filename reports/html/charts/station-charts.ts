/**
 * Station charts from the run summary's `stations[]` rows (the engine's station split,
 * reports/station-summary.ts), pickups (where work queues) and drops as separate groups:
 *
 * - pickup stations: one stacked bar per station splitting its time into busy (a robot in
 *   service), idle while work waited with no robot assigned to it (the fleet or the
 *   dispatch is short: the number planners act on), idle while a robot assigned to it was
 *   on its way (travel), and idle with no work waiting; beside it the queue, robot-seconds
 *   per hour spent standing in line behind the robot in service;
 * - drops: one column per drop with its utilisation (chutes idle most of the time by
 *   design, so a compact column chart rather than a bar per row).
 *
 * Each chart carries a compact data table (the stations that matter most, side by side);
 * stations.csv, named on the page, holds every station.
 */
import * as Plot from '@observablehq/plot';
import { chartFigure, compactTable, renderLegend, renderPlot } from '../plot.ts';
import { fixed, percent } from '../format.ts';
import { accentColour, stateColours } from '../palette.ts';
import type { Json } from '../results-folder.ts';

/** Drawn at most; larger floors show the stations that matter most, stations.csv holds all. */
export const stationLimit = 50;

export interface PickupRow {
  cell: string;
  kind: string;
  utilisation: number;
  noRobot: number;
  travelling: number;
  /** 1 - the other three: idle with no work for this station waiting. */
  noWork: number;
  queueSecondsPerHour: number;
}

export interface DropRow {
  cell: string;
  utilisation: number;
  queueSecondsPerHour: number;
}

const num = (v: unknown) => (typeof v === 'number' && Number.isFinite(v) ? v : 0);

/** Summary rows of the pickup group (older summaries without `group`: every row of kind pickup). */
export function pickupRows(stations: Json[]): PickupRow[] {
  return stations
    .filter((s) => (s.group ?? s.kind) === 'pickup')
    .map((s) => {
      const utilisation = typeof s.utilisation === 'number' ? s.utilisation : 1 - num(s.idleFraction);
      const noRobot = num(s.noRobotFraction ?? s.starvedFraction);
      const travelling = num(s.travellingFraction);
      return { cell: String(s.cell), kind: String(s.kind), utilisation, noRobot, travelling, noWork: Math.max(0, 1 - utilisation - noRobot - travelling), queueSecondsPerHour: num(s.queueSecondsPerHour) };
    });
}

export function dropRows(stations: Json[]): DropRow[] {
  return stations
    .filter((s) => (s.group ?? s.kind) === 'drop')
    .map((s) => ({ cell: String(s.cell), utilisation: typeof s.utilisation === 'number' ? s.utilisation : 1 - num(s.idleFraction), queueSecondsPerHour: num(s.queueSecondsPerHour) }));
}

/** The parts of a pickup station's time, in stacking order, with their colours (grey prints apart: dark, vermillion, light blue, light grey). */
export const pickupParts = [
  { key: 'utilisation', label: 'busy (robot in service)', colour: stateColours.loaded },
  { key: 'noRobot', label: 'idle, work waits, no robot assigned', colour: accentColour },
  { key: 'travelling', label: 'idle, work waits, robot on its way', colour: stateColours.empty },
  { key: 'noWork', label: 'idle, no work waiting', colour: '#e4e4e4' },
] as const;

export function pickupStationChart(id: string, rows: PickupRow[], title: string, csvName: string | null): { html: string; segments: number; queueBars: number; shown: number } {
  const shown = [...rows].sort((a, b) => b.noRobot - a.noRobot || b.utilisation - a.utilisation || (a.cell < b.cell ? -1 : 1)).slice(0, stationLimit);
  const label = (r: PickupRow) => `${r.kind === 'drop' ? 'pick station' : 'pickup'} ${r.cell}`;
  const segments = shown.flatMap((r) => pickupParts.map((p, order) => ({ station: label(r), part: p.label, order, share: r[p.key] })));
  const height = 50 + shown.length * 22;
  const y = { domain: shown.map(label), label: null };
  const frame = { height, marginTop: 10, marginBottom: 40 };
  const legend = renderLegend({ color: { domain: pickupParts.map((p) => p.label), range: pickupParts.map((p) => p.colour) } });
  const split = renderPlot({
    ...frame,
    width: 600,
    marginLeft: 110,
    marginRight: 16,
    x: { domain: [0, 1], grid: true, tickFormat: '%', label: 'share of time' },
    y,
    color: { domain: pickupParts.map((p) => p.label), range: pickupParts.map((p) => p.colour) },
    marks: [Plot.barX(segments, { y: 'station', x: 'share', fill: 'part', order: 'order', stroke: 'white', strokeWidth: 0.5, insetTop: 2, insetBottom: 2, className: 'mark-station-segment' }), Plot.ruleX([0])],
  });
  // Queue beside it on its own scale (robot-seconds per hour); same height and margins, so the rows line up.
  const queue = renderPlot({
    ...frame,
    width: 270,
    marginLeft: 12,
    marginRight: 24,
    x: { grid: true, label: 'queue (robot-s per hour)', nice: true, domain: [0, Math.max(1, ...shown.map((r) => r.queueSecondsPerHour))] },
    y: { ...y, axis: null },
    marks: [Plot.barX(shown, { y: label, x: 'queueSecondsPerHour', fill: '#555', insetTop: 5, insetBottom: 5, className: 'mark-queue-bar' }), Plot.ruleX([0])],
  });
  const table = compactTable(
    `Pickup stations${rows.length > shown.length ? `: the ${shown.length} with most time without a robot (of ${rows.length})` : ''}`,
    [
      { label: 'station', value: label },
      { label: 'busy', value: (r) => percent(r.utilisation), numeric: true },
      { label: 'no robot', value: (r) => percent(r.noRobot), numeric: true },
      { label: 'on its way', value: (r) => percent(r.travelling), numeric: true },
      { label: 'queue s/h', value: (r) => fixed(r.queueSecondsPerHour, 1), numeric: true },
    ],
    shown,
    { maxRows: 24, parts: 2, note: csvName ? `${csvName} holds every station.` : undefined },
  );
  const reading =
    'Each bar is 100% of a pickup station’s time after the warm-up: busy (a robot in service), idle while its work waited with no robot assigned (too few robots, or dispatch: the number to act on), idle while the assigned robot was still on its way (travel), and idle with no work waiting. Right: robot-seconds per hour robots stood in line behind the robot in service there.';
  return {
    html: chartFigure(id, title, reading, `${legend}<div class="plot-row">${split}${queue}</div>`, table),
    segments: segments.length,
    queueBars: shown.length,
    shown: shown.length,
  };
}

export function dropStationChart(id: string, rows: DropRow[], title: string, csvName: string | null): { html: string; columns: number } {
  const shown = [...rows].sort((a, b) => b.utilisation - a.utilisation || (a.cell < b.cell ? -1 : 1)).slice(0, 120);
  const svg = renderPlot({
    width: 880,
    height: 230,
    marginBottom: 56,
    marginLeft: 50,
    x: { domain: shown.map((r) => r.cell), label: 'drop (x:y), busiest first', tickRotate: -90, tickSize: 0 },
    y: { grid: true, tickFormat: '%', label: 'busy (share of time)', domain: [0, Math.max(0.01, ...shown.map((r) => r.utilisation)) * 1.1], nice: true },
    marks: [Plot.barY(shown, { x: 'cell', y: 'utilisation', fill: stateColours.loaded, inset: 0.5, className: 'mark-drop-bar' }), Plot.ruleY([0])],
  });
  const total = rows.reduce((s, r) => s + r.queueSecondsPerHour, 0);
  const table = compactTable(
    'Busiest drops',
    [
      { label: 'drop', value: (r: DropRow) => r.cell },
      { label: 'busy', value: (r) => percent(r.utilisation), numeric: true },
      { label: 'queue s/h', value: (r) => fixed(r.queueSecondsPerHour, 1), numeric: true },
    ],
    shown,
    { maxRows: 12, parts: 3, note: `${rows.length} drops; queue at all of them: ${fixed(total, 1)} robot-seconds per hour.${csvName ? ` ${csvName} holds every station.` : ''}` },
  );
  return {
    html: chartFigure(id, title, 'Share of time a robot was tipping at each drop, busiest first. Drops idle most of the time by design; a drop much busier than the rest is where a queue can form.', svg, table),
    columns: shown.length,
  };
}
