/**
 * Exact grid distances (in cells, equal to ticks at nominal speed) from one target cell to
 * every cell, by breadth-first search on the 4-connected grid (Moore 1959). One table is
 * O(cells) time and memory; tables are built lazily and kept in a bounded least-recently
 * used cache, so a hall with thousands of endpoints does not hold thousands of tables.
 * Unreachable and blocked cells hold `unreachable`.
 */
import type { Layout } from './layout.ts';
import { DistanceFields } from './distance-field.ts';

export const unreachable = 0x3fffffff;

/** Breadth-first distances to `target` (the grid is undirected, so "from" and "to" agree). */
export function distanceTable(layout: Layout, target: number, queue: Int32Array = new Int32Array(layout.cellCount)): Int32Array {
  const distance = new Int32Array(layout.cellCount).fill(unreachable);
  if (!layout.passable[target]) return distance;
  // Open sides as one byte per cell (Layout.openDirections) rather than four Int32 neighbour
  // entries: the search reads a quarter of a line per cell instead of one.
  const open = layout.openDirections;
  const width = layout.width;
  let head = 0;
  let tail = 0;
  distance[target] = 0;
  queue[tail++] = target;
  while (head < tail) {
    const c = queue[head++];
    const next = distance[c] + 1;
    const sides = open[c];
    if (sides & 1 && distance[c - width] === unreachable) {
      distance[c - width] = next;
      queue[tail++] = c - width;
    }
    if (sides & 2 && distance[c + 1] === unreachable) {
      distance[c + 1] = next;
      queue[tail++] = c + 1;
    }
    if (sides & 4 && distance[c + width] === unreachable) {
      distance[c + width] = next;
      queue[tail++] = c + width;
    }
    if (sides & 8 && distance[c - 1] === unreachable) {
      distance[c - 1] = next;
      queue[tail++] = c - 1;
    }
  }
  return distance;
}

export class DistanceTables {
  private readonly cache = new Map<number, Int32Array>();
  private readonly queue: Int32Array<ArrayBufferLike>;
  readonly capacity: number;
  builds = 0;
  private fieldCache: DistanceFields | null = null;

  /** `budgetBytes` bounds the cache (default 256 MiB); at least 16 tables are kept. */
  constructor(
    readonly layout: Layout,
    budgetBytes = 256 * 1024 * 1024,
  ) {
    this.queue = new Int32Array(layout.cellCount);
    this.capacity = Math.max(16, Math.floor(budgetBytes / (4 * layout.cellCount)));
  }

  /** Distances from every cell to `target`. */
  to(target: number): Int32Array {
    const cached = this.cache.get(target);
    if (cached) {
      // Refresh recency only when the cache can overflow; a Map keeps insertion order.
      if (this.cache.size >= this.capacity) {
        this.cache.delete(target);
        this.cache.set(target, cached);
      }
      return cached;
    }
    const table = distanceTable(this.layout, target, this.queue);
    this.builds++;
    if (this.cache.size >= this.capacity) {
      const oldest = this.cache.keys().next().value as number;
      this.cache.delete(oldest);
    }
    this.cache.set(target, table);
    return table;
  }

  /**
   * Compact per-goal fields (sim/distance-field.ts), for callers that only compare
   * neighbouring cells (PIBT's move order, the engine's progress watch): with thousands of
   * live goals they fit where one table per goal does not. Created on first use.
   */
  get fields(): DistanceFields {
    if (this.fieldCache === null) this.fieldCache = new DistanceFields(this.layout);
    return this.fieldCache;
  }

  distance(from: number, to: number): number {
    return this.to(to)[from];
  }
}
