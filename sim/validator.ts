/**
 * Independent collision validator. It keeps its own copy of every robot's previous cell
 * and, for each executed tick, counts vertex collisions (two robots in one cell) and swap
 * (edge) collisions (two robots exchanging cells), the standard MAPF definitions (Stern et
 * al., "Multi-Agent Pathfinding: Definitions, Variants, and Benchmarks", SoCS 2019), and
 * illegal steps (a jump to a non-adjacent cell). Following into a cell vacated in the same
 * tick is allowed. O(robots) per tick with stamp arrays; it trusts nothing a policy says.
 *
 * Forward-only robots (`units.turnSeconds` > 0, sim/headings.ts): it also keeps each robot's
 * heading from the turns the engine carried out and counts as illegal a step against the
 * heading (sideways or backwards) or one made before the robot's turn ended, and any action
 * the engine refused (a turn while handling, moving or held back).
 */
import type { Layout } from './layout.ts';
import { stepHeading } from './headings.ts';

const headingNames = ['north', 'east', 'south', 'west'];


export class CollisionValidator {
  vertexCollisions = 0;
  swapCollisions = 0;
  illegalSteps = 0;
  /** First few collisions, for the error report: "tick t: robots a and b at x:y". */
  readonly examples: string[] = [];
  private readonly previous: Int32Array;
  private readonly previousHolder: Int32Array;
  private readonly stamp: Int32Array;
  private readonly stampHolder: Int32Array;
  private stampId = 0;
  /** Forward-only robots: heading per robot and the tick its last turn ends; null when robots turn in no time. */
  private heading: Uint8Array | null = null;
  private turnEnd: Int32Array | null = null;

  constructor(
    private readonly layout: Layout,
    initialCells: Int32Array,
  ) {
    this.previous = Int32Array.from(initialCells);
    this.previousHolder = new Int32Array(layout.cellCount).fill(-1);
    for (let r = 0; r < initialCells.length; r++) this.previousHolder[initialCells[r]] = r;
    this.stamp = new Int32Array(layout.cellCount);
    this.stampHolder = new Int32Array(layout.cellCount);
  }

  /** Robots drive forward only and all start facing `initialHeading`. */
  enableHeadings(initialHeading: number): void {
    this.heading = new Uint8Array(this.previous.length).fill(initialHeading);
    this.turnEnd = new Int32Array(this.previous.length).fill(-1);
  }

  /** The engine turned robot r to `heading`; the turn holds it on its cell through `untilTick`. */
  turned(robot: number, heading: number, untilTick: number): void {
    this.heading![robot] = heading;
    this.turnEnd![robot] = untilTick;
  }

  /** An action the engine refused to carry out (e.g. a turn during handling): an illegal step. */
  refused(robot: number, tick: number, what: string): void {
    this.illegalSteps++;
    this.note(`tick ${tick}: robot ${robot} ${what}`);
  }

  get collisions(): number {
    return this.vertexCollisions + this.swapCollisions;
  }

  /** Checks the step from the previous cells to `cells` (positions at `tick`). */
  check(cells: Int32Array, tick: number): void {
    const id = ++this.stampId;
    const previous = this.previous;
    const previousHolder = this.previousHolder;
    const stamp = this.stamp;
    const neighbors = this.layout.neighbors;
    const robots = cells.length;
    for (let r = 0; r < robots; r++) {
      const to = cells[r];
      const from = previous[r];
      if (from !== to) {
        // A legal step goes to one of the four neighbours (layout.isLegalStep, read from the array).
        const base = from * 4;
        if (neighbors[base] !== to && neighbors[base + 1] !== to && neighbors[base + 2] !== to && neighbors[base + 3] !== to) {
          this.illegalSteps++;
          this.note(`tick ${tick}: robot ${r} jumped from cell ${from} to ${to}`);
        } else if (this.heading !== null) {
          const direction = stepHeading(this.layout, from, to);
          if (direction !== this.heading[r]) {
            this.illegalSteps++;
            this.note(`tick ${tick}: robot ${r} moved ${headingNames[direction]} from cell ${from} while facing ${headingNames[this.heading[r]]}`);
          } else if (this.turnEnd![r] >= tick) {
            this.illegalSteps++;
            this.note(`tick ${tick}: robot ${r} moved from cell ${from} before its turn ended (tick ${this.turnEnd![r]})`);
          }
        }
      }
      if (stamp[to] === id) {
        this.vertexCollisions++;
        this.note(`tick ${tick}: robots ${this.stampHolder[to]} and ${r} in cell ${to}`);
      } else {
        stamp[to] = id;
        this.stampHolder[to] = r;
      }
      if (from !== to) {
        const other = previousHolder[to];
        // Count each exchanged pair once, from its lower-numbered robot.
        if (other > r && previous[other] === to && cells[other] === from) {
          this.swapCollisions++;
          this.note(`tick ${tick}: robots ${r} and ${other} swapped cells ${from} and ${to}`);
        }
      }
    }
    // The new positions become the previous ones: a robot that left a cell it held frees it,
    // and every robot marks its cell (in robot order, so the highest-numbered robot of a cell
    // holds it, as a pass that first frees every cell and then marks them would leave it).
    for (let r = 0; r < robots; r++) {
      const to = cells[r];
      const from = previous[r];
      if (from !== to && previousHolder[from] === r) previousHolder[from] = -1;
      previous[r] = to;
      previousHolder[to] = r;
    }
  }

  /** The engine moved robot r off the floor to `cell` (operator intervention); not a step. */
  relocate(robot: number, cell: number): void {
    const from = this.previous[robot];
    if (this.previousHolder[from] === robot) this.previousHolder[from] = -1;
    this.previous[robot] = cell;
    this.previousHolder[cell] = robot;
  }

  private note(text: string): void {
    if (this.examples.length < 5) this.examples.push(text);
  }
}
