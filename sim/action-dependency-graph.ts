/**
 * The order in which planned paths pass each cell: the type-2 edges of an action dependency
 * graph (Hönig, Kiesel, Tinka, Durham & Ayanian, "Persistent and Robust Execution of MAPF
 * Schedules in Warehouses", IEEE RA-L 4(2), 2019). A visit is one robot's stay on one cell
 * in its path (a run of ticks on it), with the tick it is expected to be entered and the
 * fewest ticks the robot must stay (`dwell`: one tick to pass, plus handling and turning).
 * Each cell keeps its visits not yet left in passing order; a robot enters a cell after the
 * robot of the visit before has left it (or in the same tick: robots may follow into a cell
 * vacated in that tick). The robots' own paths are the type-1 edges (each robot takes its
 * visits in order): sim/plan-execution.ts keeps those and the expected ticks.
 *
 * The order is fixed when a visit is added, by its expected entry tick (a plan is made
 * against the schedule, so a new visit slots in where the reservation table had the cell
 * free); later the expected ticks only grow (delays), and plan-execution.ts pushes the
 * visits behind a delayed one so that every list stays in entry order and every dependency
 * goes from an event to one at the same or a later expected tick. A cycle could then only
 * be made of same-tick following, robots rotating through each other's cells, which can
 * all move together (two robots exchanging cells would be a swap, which no plan contains),
 * so the graph never waits in a circle.
 *
 * Storage: one pool of parallel typed arrays (robot, cell, entry tick, dwell, next in the
 * cell's list) with a free list, and the head of each cell's list; lists are short (the
 * visits planned ahead through one cell), so insertion walks from the head. Memory follows
 * the planned paths, not the run's length.
 */
import { RunError } from './errors.ts';

const none = -1;

export class ActionDependencyGraph {
  private readonly head: Int32Array;
  private robotOf = new Int32Array(1024);
  private cellOf = new Int32Array(1024);
  private entryOf = new Int32Array(1024);
  private dwellOf = new Int32Array(1024);
  private nextOf = new Int32Array(1024);
  private freeHead = none;
  private used = 0;
  /** Visits held now (added and not removed). */
  live = 0;

  constructor(cells: number) {
    this.head = new Int32Array(cells).fill(none);
  }

  /**
   * Adds robot r's visit of `cell`, expected to be entered at `entryTick` and held at least
   * `dwell` ticks, behind every visit of the cell expected no later; returns its id.
   */
  add(robot: number, cell: number, entryTick: number, dwell: number): number {
    const visit = this.allocate();
    this.robotOf[visit] = robot;
    this.cellOf[visit] = cell;
    this.entryOf[visit] = entryTick;
    this.dwellOf[visit] = dwell;
    let previous = none;
    let e = this.head[cell];
    while (e !== none && this.entryOf[e] <= entryTick) {
      previous = e;
      e = this.nextOf[e];
    }
    this.nextOf[visit] = e;
    if (previous === none) this.head[cell] = visit;
    else this.nextOf[previous] = visit;
    this.live++;
    return visit;
  }

  /** Removes a visit (its robot left the cell, or its path was replaced). */
  remove(visit: number): void {
    const cell = this.cellOf[visit];
    let previous = none;
    for (let e = this.head[cell]; e !== none; e = this.nextOf[e]) {
      if (e === visit) {
        if (previous === none) this.head[cell] = this.nextOf[e];
        else this.nextOf[previous] = this.nextOf[e];
        this.nextOf[visit] = this.freeHead;
        this.freeHead = visit;
        this.live--;
        return;
      }
      previous = e;
    }
    throw new RunError(`visit ${visit} of cell ${cell} is not in the cell's passing order`);
  }

  /** The first visit of `cell` not yet left (its robot is there, or is the next to come), or -1. */
  first(cell: number): number {
    return this.head[cell];
  }

  /** The visit after `visit` in its cell's order, or -1. */
  next(visit: number): number {
    return this.nextOf[visit];
  }

  robot(visit: number): number {
    return this.robotOf[visit];
  }

  cell(visit: number): number {
    return this.cellOf[visit];
  }

  /** Tick at which the visit's robot is expected to enter its cell. */
  entryTick(visit: number): number {
    return this.entryOf[visit];
  }

  /** Delays the expected entry (the caller keeps the cell's order: it pushes the visits behind). */
  delayEntry(visit: number, entryTick: number): void {
    this.entryOf[visit] = entryTick;
  }

  /** The fewest ticks the robot stays on the cell once there (one to pass, plus handling and turning). */
  dwell(visit: number): number {
    return this.dwellOf[visit];
  }

  /** Bytes held in typed arrays (for benchmarks). */
  memoryBytes(): number {
    return this.head.byteLength + this.robotOf.byteLength + this.cellOf.byteLength + this.entryOf.byteLength + this.dwellOf.byteLength + this.nextOf.byteLength;
  }

  private allocate(): number {
    if (this.freeHead !== none) {
      const visit = this.freeHead;
      this.freeHead = this.nextOf[visit];
      return visit;
    }
    if (this.used === this.robotOf.length) {
      const capacity = 2 * this.used;
      const grow = (a: Int32Array) => {
        const b = new Int32Array(capacity);
        b.set(a);
        return b;
      };
      this.robotOf = grow(this.robotOf);
      this.cellOf = grow(this.cellOf);
      this.entryOf = grow(this.entryOf);
      this.dwellOf = grow(this.dwellOf);
      this.nextOf = grow(this.nextOf);
    }
    return this.used++;
  }
}
