/**
 * Per station: utilisation (share of time a robot was in service there) as a bar, and
 * idle while work waited (no robot in service although a task for it was released) as a
 * thinner bar in front, so a starving station shows a short dark bar with a long vermillion
 * one. Large floors show the stations that starved most; stations.csv holds all of them.
 */
import * as Plot from '@observablehq/plot';
import { chartFigure, dataTable, renderPlot } from '../plot.ts';
import { percent } from '../format.ts';
import { accentColour, stateColours } from '../palette.ts';
import type { Json } from '../results-folder.ts';

export const stationLimit = 50;

export interface StationRow {
  cell: string;
  kind: string;
  utilisation: number;
  starved: number;
}

/** Reads the rows of summary.stations, today's fields or the planned ones (utilisation, noRobotFraction + travellingFraction). */
export function stationRows(stations: Json[]): StationRow[] {
  return stations.map((s) => ({
    cell: String(s.cell),
    kind: String(s.kind),
    utilisation: typeof s.utilisation === 'number' ? s.utilisation : 1 - s.idleFraction,
    starved:
      typeof s.starvedFraction === 'number'
        ? s.starvedFraction
        : typeof s.noRobotFraction === 'number'
          ? s.noRobotFraction + (typeof s.travellingFraction === 'number' ? s.travellingFraction : 0)
          : NaN,
  }));
}

export function stationBars(id: string, rows: StationRow[], title = 'Stations: utilisation and idle time while work waited'): { html: string; shown: number } {
  const shown = [...rows].sort((a, b) => b.starved - a.starved || b.utilisation - a.utilisation || (a.cell < b.cell ? -1 : 1)).slice(0, stationLimit);
  const label = (r: StationRow) => `${r.kind} ${r.cell}`;
  const svg = renderPlot({
    width: 880,
    height: 50 + shown.length * 15,
    marginLeft: 90,
    x: { domain: [0, 1], grid: true, tickFormat: '%', label: 'share of time' },
    y: { domain: shown.map(label), label: null },
    marks: [
      Plot.barX(shown, { y: label, x: 'utilisation', fill: stateColours.loaded, insetTop: 1, insetBottom: 1, className: 'mark-utilisation-bar' }),
      Plot.barX(shown, { y: label, x: 'starved', fill: accentColour, insetTop: 4.5, insetBottom: 4.5, className: 'mark-idle-while-work-waits-bar' }),
      Plot.ruleX([0]),
    ],
  });
  const table = dataTable(
    rows.length > shown.length ? `The ${shown.length} stations that were idle longest while work waited (of ${rows.length})` : 'Stations',
    [
      { label: 'station', value: label },
      { label: 'utilisation', value: (r) => percent(r.utilisation), numeric: true },
      { label: 'idle while work waited', value: (r) => percent(r.starved), numeric: true },
    ],
    shown,
    rows.length > shown.length ? 'stations.csv holds every station.' : undefined,
  );
  const reading =
    'Dark bar: utilisation, the share of time a robot was in service at the station. Vermillion bar in front: the share of time it stood idle while a task for it was waiting, so robots, not work, were short; this is the number to act on.';
  return { html: chartFigure(id, title, reading, svg, table), shown: shown.length };
}
