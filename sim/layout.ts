/**
 * The floor: a W x H grid of cells, 4-connected, parsed from the fixed legend of the
 * scenario file. Cells are indexed `y * width + x` and every per-cell fact lives in a typed
 * array of length width * height, so planners touch flat memory only.
 *
 * Legend: `.` floor, `#` blocked, `P` pickup, `D` drop, `S` storage (shelf spot),
 * `H` parking, `C` charger. Every letter cell is also travelable floor.
 */
import { InputError } from './errors.ts';

export const CellKind = {
  Blocked: 0,
  Floor: 1,
  Pickup: 2,
  Drop: 3,
  Storage: 4,
  Parking: 5,
  Charger: 6,
} as const;
export type CellKind = (typeof CellKind)[keyof typeof CellKind];

const legend: Record<string, CellKind> = {
  '#': CellKind.Blocked,
  '.': CellKind.Floor,
  P: CellKind.Pickup,
  D: CellKind.Drop,
  S: CellKind.Storage,
  H: CellKind.Parking,
  C: CellKind.Charger,
};

export const legendCharacters = Object.keys(legend).join('');

export class LayoutError extends InputError {
  override readonly code = 'BAD_LAYOUT';
  constructor(message: string) {
    super(message);
    this.name = 'LayoutError';
  }
}

export interface Layout {
  readonly width: number;
  readonly height: number;
  readonly cellCount: number;
  /** CellKind per cell. */
  readonly kind: Uint8Array;
  /** 1 where a robot may stand. */
  readonly passable: Uint8Array;
  /** 4 entries per cell (N, E, S, W): the neighbouring passable cell or -1. */
  readonly neighbors: Int32Array;
  /** Number of passable neighbours per cell. */
  readonly degree: Uint8Array;
  /**
   * Per cell, bit d set when `neighbors[c * 4 + d]` is a cell (d = 0..3: N, E, S, W): the
   * neighbour table as one byte per cell, for inner loops on big halls (120 KB on 480 x 250,
   * where the table is 1.9 MB). The neighbour that way is c - width, c + 1, c + width, c - 1.
   */
  readonly openDirections: Uint8Array;
  readonly pickups: Int32Array;
  readonly drops: Int32Array;
  readonly storage: Int32Array;
  readonly parking: Int32Array;
  readonly chargers: Int32Array;
  /** Passable cells in reading order. */
  readonly floorCells: Int32Array;
}

/** `x:y` label of a cell, the form users write in trace files and weights. */
export function cellLabel(layout: Pick<Layout, 'width'>, cell: number): string {
  return `${cell % layout.width}:${Math.floor(cell / layout.width)}`;
}

/** Parses `x:y` into a cell index, or returns null when malformed or outside the grid. */
export function parseCellLabel(layout: Pick<Layout, 'width' | 'height'>, label: string): number | null {
  const match = /^\s*(\d+)\s*:\s*(\d+)\s*$/.exec(label);
  if (!match) return null;
  const x = Number(match[1]);
  const y = Number(match[2]);
  if (x >= layout.width || y >= layout.height) return null;
  return y * layout.width + x;
}

/**
 * Parses layout text. Leading and trailing blank lines are dropped and so is trailing
 * whitespace on each row (YAML block scalars often carry it); rows must then be of equal
 * length. Throws LayoutError naming the row and column of the first problem.
 */
export function parseLayout(text: string): Layout {
  const rows = text
    .replace(/\r\n?/g, '\n')
    .split('\n')
    .map((row) => row.replace(/\s+$/, ''));
  while (rows.length > 0 && rows[0] === '') rows.shift();
  while (rows.length > 0 && rows[rows.length - 1] === '') rows.pop();
  if (rows.length === 0) throw new LayoutError('layout is empty: expected rows of the legend characters ' + legendCharacters);
  const width = rows[0].length;
  for (let y = 0; y < rows.length; y++) {
    if (rows[y].length !== width) {
      throw new LayoutError(
        `layout row ${y + 1} has ${rows[y].length} cells, expected ${width} like row 1 (every row must have the same width)`,
      );
    }
  }
  const height = rows.length;
  const cellCount = width * height;
  const kind = new Uint8Array(cellCount);
  for (let y = 0; y < height; y++) {
    const row = rows[y];
    for (let x = 0; x < width; x++) {
      const character = row[x];
      const cellKind = legend[character];
      if (cellKind === undefined) {
        throw new LayoutError(
          `layout row ${y + 1} column ${x + 1} has ${JSON.stringify(character)}, expected one of "${legendCharacters}"`,
        );
      }
      kind[y * width + x] = cellKind;
    }
  }
  return buildLayout(width, height, kind);
}

/** Builds the derived arrays from a kind grid (also used by layout generators). */
export function buildLayout(width: number, height: number, kind: Uint8Array): Layout {
  const cellCount = width * height;
  const passable = new Uint8Array(cellCount);
  for (let c = 0; c < cellCount; c++) passable[c] = kind[c] === CellKind.Blocked ? 0 : 1;
  const neighbors = new Int32Array(cellCount * 4).fill(-1);
  const degree = new Uint8Array(cellCount);
  const openDirections = new Uint8Array(cellCount);
  const lists: number[][] = [[], [], [], [], [], [], []];
  const floor: number[] = [];
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const c = y * width + x;
      lists[kind[c]].push(c);
      if (!passable[c]) continue;
      floor.push(c);
      const candidates = [y > 0 ? c - width : -1, x < width - 1 ? c + 1 : -1, y < height - 1 ? c + width : -1, x > 0 ? c - 1 : -1];
      for (let d = 0; d < 4; d++) {
        const n = candidates[d];
        if (n >= 0 && passable[n]) {
          neighbors[c * 4 + d] = n;
          degree[c]++;
          openDirections[c] |= 1 << d;
        }
      }
    }
  }
  return {
    width,
    height,
    cellCount,
    kind,
    passable,
    neighbors,
    degree,
    openDirections,
    pickups: Int32Array.from(lists[CellKind.Pickup]),
    drops: Int32Array.from(lists[CellKind.Drop]),
    storage: Int32Array.from(lists[CellKind.Storage]),
    parking: Int32Array.from(lists[CellKind.Parking]),
    chargers: Int32Array.from(lists[CellKind.Charger]),
    floorCells: Int32Array.from(floor),
  };
}

/** True when cells a and b are 4-neighbours or equal (a legal one-tick action). */
export function isLegalStep(layout: Layout, from: number, to: number): boolean {
  if (from === to) return true;
  const base = from * 4;
  const n = layout.neighbors;
  return n[base] === to || n[base + 1] === to || n[base + 2] === to || n[base + 3] === to;
}

/** Component label per passable cell (-1 for blocked), by breadth-first search with an explicit queue. */
export function componentLabels(layout: Layout, allowed?: Uint8Array): { labels: Int32Array; count: number } {
  const labels = new Int32Array(layout.cellCount).fill(-1);
  const queue = new Int32Array(layout.cellCount);
  let count = 0;
  for (let start = 0; start < layout.cellCount; start++) {
    if (!layout.passable[start] || labels[start] !== -1) continue;
    if (allowed && !allowed[start]) continue;
    let head = 0;
    let tail = 0;
    queue[tail++] = start;
    labels[start] = count;
    while (head < tail) {
      const c = queue[head++];
      for (let d = 0; d < 4; d++) {
        const n = layout.neighbors[c * 4 + d];
        if (n < 0 || labels[n] !== -1) continue;
        if (allowed && !allowed[n]) continue;
        labels[n] = count;
        queue[tail++] = n;
      }
    }
    count++;
  }
  return { labels, count };
}

/**
 * Endpoints (Ma et al. AAMAS 2017): task endpoints (P, D, S) and non-task endpoints where
 * robots rest (parking H, and chargers C, where a robot stays for its whole charge).
 */
export function isEndpointKind(kind: number): boolean {
  return kind === CellKind.Pickup || kind === CellKind.Drop || kind === CellKind.Storage || kind === CellKind.Parking || kind === CellKind.Charger;
}

export interface WellFormedness {
  wellFormed: boolean;
  /** Human-readable reason naming the endpoints (x:y), or null. */
  violation: string | null;
  /** The two endpoints that cannot reach each other without crossing another endpoint, if that is the reason. */
  pair: [number, number] | null;
}

/**
 * Well-formedness of a lifelong pickup-and-delivery instance (Ma, Li, Kumar, Koenig,
 * AAMAS 2017, Definition 1): at least as many non-task endpoints (parking) as robots, and
 * any two endpoints joined by a path that passes through no other endpoint.
 *
 * Method: label the connected components of the non-endpoint passable cells; two
 * endpoints are joined without crossing a third exactly when they are 4-neighbours or
 * touch a common component. O(cells + endpoints^2 * 16) in the worst case; the pair
 * check stops at the first violation in reading order.
 */
export function checkWellFormed(layout: Layout, robots: number): WellFormedness {
  // Chargers are endpoints (no path may need to cross one) but are not counted as rest
  // places here: a charger is held by the robot charging on it, so idle robots need parking.
  if (layout.parking.length < robots) {
    return {
      wellFormed: false,
      violation: `${layout.parking.length} parking spots (H) for ${robots} robots: well-formedness needs at least one non-task endpoint per robot`,
      pair: null,
    };
  }
  const endpointMask = new Uint8Array(layout.cellCount);
  const endpoints: number[] = [];
  for (let c = 0; c < layout.cellCount; c++) {
    if (isEndpointKind(layout.kind[c])) {
      endpointMask[c] = 1;
      endpoints.push(c);
    }
  }
  const allowed = new Uint8Array(layout.cellCount);
  for (let c = 0; c < layout.cellCount; c++) allowed[c] = layout.passable[c] && !endpointMask[c] ? 1 : 0;
  const { labels } = componentLabels(layout, allowed);
  // Up to four touching components per endpoint.
  const touching = new Int32Array(endpoints.length * 4).fill(-1);
  for (let i = 0; i < endpoints.length; i++) {
    const c = endpoints[i];
    let k = 0;
    for (let d = 0; d < 4; d++) {
      const n = layout.neighbors[c * 4 + d];
      if (n < 0 || labels[n] < 0) continue;
      const label = labels[n];
      let seen = false;
      for (let j = 0; j < k; j++) if (touching[i * 4 + j] === label) seen = true;
      if (!seen) touching[i * 4 + k++] = label;
    }
  }
  for (let i = 0; i < endpoints.length; i++) {
    for (let j = i + 1; j < endpoints.length; j++) {
      if (isLegalStep(layout, endpoints[i], endpoints[j])) continue;
      let shared = false;
      for (let a = 0; a < 4 && !shared; a++) {
        const label = touching[i * 4 + a];
        if (label < 0) break;
        for (let b = 0; b < 4; b++) {
          if (touching[j * 4 + b] === label) {
            shared = true;
            break;
          }
        }
      }
      if (!shared) {
        const a = endpoints[i];
        const b = endpoints[j];
        return {
          wellFormed: false,
          violation: `endpoints ${describeCell(layout, a)} and ${describeCell(layout, b)} are not joined by a path that avoids every other endpoint`,
          pair: [a, b],
        };
      }
    }
  }
  return { wellFormed: true, violation: null, pair: null };
}

const kindNames: Record<number, string> = {
  [CellKind.Blocked]: 'blocked',
  [CellKind.Floor]: 'floor',
  [CellKind.Pickup]: 'pickup',
  [CellKind.Drop]: 'drop',
  [CellKind.Storage]: 'storage',
  [CellKind.Parking]: 'parking',
  [CellKind.Charger]: 'charger',
};

export function describeCell(layout: Layout, cell: number): string {
  return `${kindNames[layout.kind[cell]]} ${cellLabel(layout, cell)}`;
}
