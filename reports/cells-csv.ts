/**
 * `cells.csv`: robot waiting time per floor cell, the data under the report's floor heatmap.
 * One row per cell of the grid (walls included, so the floor can be drawn from this file
 * alone), in reading order: x, y (0-based from the top-left corner), the cell's kind in the
 * words of the layout legend, and the robot-seconds of waiting at that cell per simulated
 * hour (a robot holding a task that did not move), averaged over replications, whole run.
 * x and y are separate columns so that no spreadsheet reads `17:10` as a clock time.
 */
import { stringify } from 'csv-stringify/sync';
import type { ReplicationRecord } from '../sim/engine.ts';
import type { Layout } from '../sim/layout.ts';

export const cellKindNames = ['blocked', 'floor', 'pickup', 'drop', 'storage', 'parking', 'charger'] as const;
export type CellKindName = (typeof cellKindNames)[number];

export interface CellRow {
  x: number;
  y: number;
  kind: CellKindName;
  waitingSecondsPerHour: number;
}

/** Mean over replications of each cell's waiting robot-seconds per simulated hour. */
export function cellRows(layout: Layout, records: ReplicationRecord[]): CellRow[] {
  const perHour = new Float64Array(layout.cellCount);
  for (const record of records) {
    const hours = (record.endTick * record.tickSeconds) / 3600;
    const waiting = record.metrics.cellWaitingTicks;
    for (let c = 0; c < layout.cellCount; c++) perHour[c] += (waiting[c] * record.tickSeconds) / hours / records.length;
  }
  const rows: CellRow[] = [];
  for (let c = 0; c < layout.cellCount; c++) {
    rows.push({ x: c % layout.width, y: Math.floor(c / layout.width), kind: cellKindNames[layout.kind[c]], waitingSecondsPerHour: Number(perHour[c].toFixed(3)) });
  }
  return rows;
}

/** The CSV text; with `policy`, a leading policy column (the comparison writes one block per policy). */
export function cellsCsv(blocks: { policy?: string; rows: CellRow[] }[]): string {
  const withPolicy = blocks.some((b) => b.policy !== undefined);
  const rows = blocks.flatMap((b) => b.rows.map((r) => (withPolicy ? { policy: b.policy ?? '', ...r } : { ...r })));
  const columns = withPolicy ? ['policy', 'x', 'y', 'kind', 'waitingSecondsPerHour'] : ['x', 'y', 'kind', 'waitingSecondsPerHour'];
  return stringify(rows, { header: true, columns });
}
