/**
 * The floor drawn to scale (meters on both axes, one unit the same length on each) with
 * robot waiting time per cell as heat: walls as dark runs, parking and storage as light
 * grey, pickup and drop stations outlined, and every cell where robots waited filled by
 * its class of waiting robot-seconds per simulated hour. Drawn by Observable Plot from the
 * rows of cells.csv.
 */
import * as Plot from '@observablehq/plot';
import { nice } from 'd3-array';
import { compactTable, renderPlot } from './plot.ts';
import { heatColours, wallColour } from './palette.ts';
import { fixed } from './format.ts';
import type { CellCsvRow } from './results-folder.ts';

export interface FloorMap {
  svg: string;
  table: string;
  heatCells: number;
  stations: number;
}

interface Box {
  x1: number;
  x2: number;
  y1: number;
  y2: number;
}

const letters: Record<string, string> = { pickup: 'P', drop: 'D', parking: 'H', storage: 'S', charger: 'C' };

/** `heatMax` fixes the top of the colour scale (small multiples share one scale). */
export function floorMap(cells: CellCsvRow[], cellMeters: number, options: { heatMax?: number; maxWidth?: number; title?: string } = {}): FloorMap {
  const width = cells.reduce((m, c) => Math.max(m, c.x + 1), 0);
  const height = cells.reduce((m, c) => Math.max(m, c.y + 1), 0);
  const box = (c: { x: number; y: number }, cellsWide = 1): Box => ({ x1: c.x * cellMeters, x2: (c.x + cellsWide) * cellMeters, y1: c.y * cellMeters, y2: (c.y + 1) * cellMeters });

  // Walls as horizontal runs: one rectangle per run instead of one per cell.
  const blocked = new Set(cells.filter((c) => c.kind === 'blocked').map((c) => c.y * width + c.x));
  const walls: Box[] = [];
  for (let y = 0; y < height; y++) {
    let x = 0;
    while (x < width) {
      if (!blocked.has(y * width + x)) {
        x++;
        continue;
      }
      const start = x;
      while (x < width && blocked.has(y * width + x)) x++;
      walls.push(box({ x: start, y }, x - start));
    }
  }
  const heat = cells.filter((c) => c.kind !== 'blocked' && c.waitingSecondsPerHour > 0).map((c) => ({ ...box(c), ...c }));
  const stations = cells.filter((c) => c.kind === 'pickup' || c.kind === 'drop').map((c) => ({ ...box(c), ...c }));
  const grounds = cells.filter((c) => c.kind === 'parking' || c.kind === 'storage' || c.kind === 'charger').map((c) => ({ ...box(c), ...c }));
  const lettered = cells.filter((c) => letters[c.kind] !== undefined).map((c) => ({ cx: (c.x + 0.5) * cellMeters, cy: (c.y + 0.5) * cellMeters, letter: letters[c.kind] }));
  // A round top for the colour classes (d3's nice), so class edges read as round numbers.
  const heatMax = nice(0, options.heatMax ?? heat.reduce((m, c) => Math.max(m, c.waitingSecondsPerHour), 0), heatColours.length)[1];

  const maxWidth = options.maxWidth ?? 880;
  const margin = { left: 50, right: 12, top: 10, bottom: 40 };
  const cellPixels = Math.min(26, (maxWidth - margin.left - margin.right) / Math.max(1, width));
  const plotWidth = Math.round(width * cellPixels + margin.left + margin.right);
  const floorWidth = width * cellMeters;
  const floorHeight = height * cellMeters;

  const marks: Plot.Markish[] = [
    Plot.rect([{ x1: 0, x2: floorWidth, y1: 0, y2: floorHeight }], { x1: 'x1', x2: 'x2', y1: 'y1', y2: 'y2', fill: 'white', stroke: '#999', className: 'mark-floor' }),
    Plot.rect(grounds, { x1: 'x1', x2: 'x2', y1: 'y1', y2: 'y2', fill: '#e4e4e4', className: 'mark-parking-or-storage' }),
    Plot.rect(heat, { x1: 'x1', x2: 'x2', y1: 'y1', y2: 'y2', fill: 'waitingSecondsPerHour', className: 'mark-waiting-cell' }),
    Plot.rect(walls, { x1: 'x1', x2: 'x2', y1: 'y1', y2: 'y2', fill: wallColour, className: 'mark-wall' }),
    Plot.rect(stations, { x1: 'x1', x2: 'x2', y1: 'y1', y2: 'y2', stroke: '#111', strokeWidth: 1.2, fill: 'none', inset: 0.5, className: 'mark-station' }),
  ];
  // Letters only where a cell is big enough to read one.
  if (cellPixels >= 11) marks.push(Plot.text(lettered, { x: 'cx', y: 'cy', text: 'letter', fontSize: Math.min(12, cellPixels * 0.6), fill: '#111', stroke: 'white', strokeWidth: 2.5, className: 'mark-point-letter' }));

  const svg = renderPlot({
    width: plotWidth,
    marginLeft: margin.left,
    marginRight: margin.right,
    marginTop: margin.top,
    marginBottom: margin.bottom,
    aspectRatio: 1,
    x: { domain: [0, floorWidth], label: 'x (m)', labelAnchor: 'center' },
    y: { domain: [0, floorHeight], reverse: true, label: 'y (m)', labelAnchor: 'center' },
    color: { type: 'quantize', n: heatColours.length, domain: [0, Math.max(heatMax, 1e-9)], range: [...heatColours], legend: heat.length > 0, label: 'robot waiting, seconds per hour' },
    marks,
  });
  const hottest = [...heat].sort((a, b) => b.waitingSecondsPerHour - a.waitingSecondsPerHour || a.y - b.y || a.x - b.x).slice(0, 15);
  const table = compactTable(
    'Cells where robots waited longest',
    [
      { label: 'cell (x:y)', value: (c: (typeof hottest)[number]) => `${c.x}:${c.y}` },
      { label: 'kind', value: (c) => c.kind },
      { label: 'waiting (s/h)', value: (c) => fixed(c.waitingSecondsPerHour, 1), numeric: true },
    ],
    hottest,
    { parts: 3, note: `${heat.length} of ${cells.filter((c) => c.kind !== 'blocked').length} floor cells saw waiting; every cell is in cells.csv.` },
  );
  return { svg, table, heatCells: heat.length, stations: stations.length };
}
