/**
 * Layout generator: a parcel sortation hall of fleetwright's own invention, in the legend
 * of sim/layout.ts, scaled to about `width` x `height` cells. At 40 x 20 with the default
 * options it reproduces the layout of scenarios/demo-sortation.yaml exactly.
 *
 * West to east:
 *   - the west wall, then a column of induct points (P) on every other row, then a
 *     four-column aisle;
 *   - chute islands: one blocked column `chuteCells` tall (the chute) with a drop point (D)
 *     above and below, `laneColumns` floor columns apart; islands stand in rows (bands)
 *     with `aisleRows` floor rows between bands, three rows above the first band and four
 *     below the last (rows left over are split between the two);
 *   - a four-column aisle (columns left over are split between the west and east aisles);
 *   - the parking block: one parking column (H) along the east wall and, when `parking`
 *     asks for more spots than the perimeter holds, pairs of back-to-back parking columns
 *     with a one-cell lane between pairs ("HH." repeated), broken by a cross aisle every
 *     12 rows and open along the top and bottom rows so every lane joins the main floor.
 * Perimeter parking: one spot above each island column on the top floor row and one below
 * it on the bottom floor row, as in the demo hall.
 *
 * Every endpoint touches plain floor that is connected to all other plain floor, so the
 * hall is well-formed (sim/layout.ts checkWellFormed) for up to `parking` robots.
 * Deterministic: a pure function of its options. O(width * height).
 *
 * Example: generateSortationHall({ width: 150, height: 80, parking: 1000 }) gives a hall of
 * 150 x 80 cells with 38 induct points, 390 chute islands (780 drop points) and 1136
 * parking spots.
 */
import { InputError } from '../sim/errors.ts';

export interface SortationHallOptions {
  /** Columns of the hall, walls included. */
  width: number;
  /** Rows of the hall, walls included. */
  height: number;
  /** At least this many parking spots (parking stripes are added on the east side); default: the perimeter spots only. */
  parking?: number;
  /** Blocked cells of one chute island between its two drop points; default 2. */
  chuteCells?: number;
  /** Floor rows between two bands of chute islands; default 3. */
  aisleRows?: number;
  /** Floor columns between neighbouring chute islands; default 2. */
  laneColumns?: number;
}

const westAisleColumns = 4;
const eastAisleColumns = 4;
const topMarginRows = 3;
const bottomMarginRows = 4;
/** A parking stripe column is broken by a cross aisle every this many rows. */
const stripeRunRows = 12;

export function generateSortationHall(options: SortationHallOptions): string {
  const width = positiveInteger(options.width, 'width');
  const height = positiveInteger(options.height, 'height');
  const chuteCells = positiveInteger(options.chuteCells ?? 2, 'chuteCells');
  const aisleRows = positiveInteger(options.aisleRows ?? 3, 'aisleRows');
  const laneColumns = positiveInteger(options.laneColumns ?? 2, 'laneColumns');
  const parkingWanted = options.parking ?? 0;
  if (!Number.isInteger(parkingWanted) || parkingWanted < 0) {
    throw new InputError(`generateSortationHall: parking: got ${parkingWanted}, expected a whole number >= 0`);
  }

  // Rows: bands of islands between the margins.
  const bandRows = chuteCells + 2;
  const innerRows = height - 2;
  const bands = Math.floor((innerRows - topMarginRows - bottomMarginRows + aisleRows) / (bandRows + aisleRows));
  if (bands < 1) {
    throw new InputError(
      `generateSortationHall: height: got ${height}, expected at least ${2 + topMarginRows + bottomMarginRows + bandRows} rows for one band of chute islands`,
    );
  }
  const rowSlack = innerRows - (topMarginRows + bottomMarginRows + bands * bandRows + (bands - 1) * aisleRows);
  const firstBandRow = 1 + topMarginRows + Math.floor(rowSlack / 2);

  // Stripe rows: the parking rows of one stripe column (rows 2 .. height-3 without cross aisles).
  const isStripeRow = (y: number) => y >= 2 && y <= height - 3 && (y - 1) % stripeRunRows !== 0;
  let stripeRows = 0;
  for (let y = 0; y < height; y++) if (isStripeRow(y)) stripeRows++;

  // Columns: find the fewest stripe pairs that give enough parking.
  const pitch = laneColumns + 1;
  const islandsFor = (blockColumns: number) => Math.floor((width - 2 - 1 - westAisleColumns - eastAisleColumns - 1 - blockColumns) / pitch) + 1;
  let pairs = 0;
  let islands = islandsFor(1);
  const parkingFor = (p: number, m: number) => 2 * m + innerRows + 2 * p * stripeRows;
  while (islands >= 1 && parkingFor(pairs, islands) < parkingWanted) {
    if (stripeRows === 0) break;
    pairs++;
    islands = islandsFor(1 + 3 * pairs);
  }
  if (islands < 1 || parkingFor(pairs, islands) < parkingWanted) {
    throw new InputError(
      `generateSortationHall: width: got ${width} x ${height}, expected a hall large enough for at least one column of chute islands and ${parkingWanted} parking spots`,
    );
  }
  const blockColumns = 1 + 3 * pairs;
  const columnSlack = width - (2 + 1 + westAisleColumns + (islands - 1) * pitch + 1 + eastAisleColumns + blockColumns);
  const firstIslandColumn = 1 + 1 + westAisleColumns + Math.floor(columnSlack / 2);
  const blockStart = width - 1 - blockColumns;

  const grid: string[][] = [];
  for (let y = 0; y < height; y++) grid.push(new Array<string>(width).fill('.'));
  for (let x = 0; x < width; x++) {
    grid[0][x] = '#';
    grid[height - 1][x] = '#';
  }
  for (let y = 0; y < height; y++) {
    grid[y][0] = '#';
    grid[y][width - 1] = '#';
  }
  // Induct points on every other row along the west wall.
  for (let y = 2; y <= height - 4; y += 2) grid[y][1] = 'P';
  // Chute islands and the perimeter parking above and below their columns.
  for (let i = 0; i < islands; i++) {
    const x = firstIslandColumn + i * pitch;
    grid[1][x] = 'H';
    grid[height - 2][x] = 'H';
    for (let b = 0; b < bands; b++) {
      const top = firstBandRow + b * (bandRows + aisleRows);
      grid[top][x] = 'D';
      for (let k = 1; k <= chuteCells; k++) grid[top + k][x] = '#';
      grid[top + chuteCells + 1][x] = 'D';
    }
  }
  // Parking block: stripe pairs, then the column along the east wall.
  for (let p = 0; p < pairs; p++) {
    const x = blockStart + 3 * p;
    for (let y = 0; y < height; y++) {
      if (!isStripeRow(y)) continue;
      grid[y][x] = 'H';
      grid[y][x + 1] = 'H';
    }
  }
  for (let y = 1; y <= height - 2; y++) grid[y][width - 2] = 'H';
  return grid.map((row) => row.join('')).join('\n') + '\n';
}

function positiveInteger(value: number, field: string): number {
  if (!Number.isInteger(value) || value < 1) {
    throw new InputError(`generateSortationHall: ${field}: got ${value}, expected a whole number >= 1`);
  }
  return value;
}
