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
  /**
   * Per cell, four numbers side by side (one cache line holds what a step reads about a cell:
   * the check runs right after the policy's step has filled the caches with its own data):
   * the robot that held it at the previous tick (-1: none), the stamp of the last tick a
   * robot was found there, and its column and row (column -1: blocked).
   */
  private readonly cell: Int32Array;
  private readonly stampHolder: Int32Array;
  private stampId = 0;
  /** Robots that changed cells at the tick being checked. */
  private readonly movers: Int32Array;
  /**
   * True while every cell holds at most one robot (no vertex collision at the last full
   * check) and each robot's cell names it as its holder: then robots that stand still need
   * no check of their own.
   */
  private oneRobotPerCell: boolean;
  /** Forward-only robots: heading per robot and the tick its last turn ends; null when robots turn in no time. */
  private heading: Uint8Array | null = null;
  private turnEnd: Int32Array | null = null;

  constructor(
    private readonly layout: Layout,
    initialCells: Int32Array,
  ) {
    this.previous = Int32Array.from(initialCells);
    this.cell = new Int32Array(layout.cellCount * 4);
    for (let c = 0; c < layout.cellCount; c++) {
      this.cell[c * 4] = -1;
      this.cell[c * 4 + 2] = layout.passable[c] ? c % layout.width : -1;
      this.cell[c * 4 + 3] = Math.floor(c / layout.width);
    }
    for (let r = 0; r < initialCells.length; r++) this.cell[initialCells[r] * 4] = r;
    this.stampHolder = new Int32Array(layout.cellCount);
    this.movers = new Int32Array(initialCells.length);
    // The starting cells are checked like any other positions: the first tick runs the full check.
    this.oneRobotPerCell = false;
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

  /**
   * Checks the step from the previous cells to `cells` (positions at `tick`). Robots that
   * stood still cannot step illegally, and while every cell holds at most one robot they
   * can collide only with a robot that moves into their cell: so a first pass looks at the
   * moving robots only, and any sign of trouble (an illegal or mis-headed step, a moving
   * robot entering a cell another robot holds or enters, an exchange of cells) hands the
   * whole tick to the full check below, which counts and describes everything exactly.
   */
  check(cells: Int32Array, tick: number): void {
    const previous = this.previous;
    const robots = cells.length;
    const movers = this.movers;
    let moving = 0;
    for (let r = 0; r < robots; r++) if (previous[r] !== cells[r]) movers[moving++] = r;
    if (this.oneRobotPerCell && this.movesClean(cells, tick, moving)) {
      // Only moving robots change cells: a robot that left a cell it held frees it (robot order,
      // as the full pass would leave it).
      const cell = this.cell;
      for (let i = 0; i < moving; i++) {
        const r = movers[i];
        const from = previous[r];
        if (cell[from * 4] === r) cell[from * 4] = -1;
      }
      for (let i = 0; i < moving; i++) {
        const r = movers[i];
        previous[r] = cells[r];
        cell[cells[r] * 4] = r;
      }
      return;
    }
    this.fullCheck(cells, tick);
  }

  /** True when no moving robot steps illegally, enters a cell another robot holds or enters, or exchanges cells. */
  private movesClean(cells: Int32Array, tick: number, moving: number): boolean {
    const id = ++this.stampId;
    const previous = this.previous;
    const cell = this.cell;
    const movers = this.movers;
    for (let i = 0; i < moving; i++) {
      const r = movers[i];
      const to = cells[r];
      const from = previous[r];
      // A legal step goes to a floor cell next to a floor cell (as layout.isLegalStep: the
      // layout's neighbours are the four adjacent floor cells).
      const fromX = cell[from * 4 + 2];
      const toX = cell[to * 4 + 2];
      if (fromX < 0 || toX < 0 || Math.abs(toX - fromX) + Math.abs(cell[to * 4 + 3] - cell[from * 4 + 3]) !== 1) return false;
      if (this.heading !== null && (stepHeading(this.layout, from, to) !== this.heading[r] || this.turnEnd![r] >= tick)) return false;
      if (cell[to * 4 + 1] === id) return false;
      cell[to * 4 + 1] = id;
      // The robot that held the cell: still there (a vertex collision) or gone to `from` (an exchange).
      const other = cell[to * 4];
      if (other >= 0 && (cells[other] === to || cells[other] === from)) return false;
    }
    return true;
  }

  /** Every robot, in robot order: illegal steps, vertex and swap collisions, counted and described. */
  private fullCheck(cells: Int32Array, tick: number): void {
    const id = ++this.stampId;
    const previous = this.previous;
    const cell = this.cell;
    const neighbors = this.layout.neighbors;
    const robots = cells.length;
    const vertexBefore = this.vertexCollisions;
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
      if (cell[to * 4 + 1] === id) {
        this.vertexCollisions++;
        this.note(`tick ${tick}: robots ${this.stampHolder[to]} and ${r} in cell ${to}`);
      } else {
        cell[to * 4 + 1] = id;
        this.stampHolder[to] = r;
      }
      if (from !== to) {
        const other = cell[to * 4];
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
      if (from !== to && cell[from * 4] === r) cell[from * 4] = -1;
      previous[r] = to;
      cell[to * 4] = r;
    }
    this.oneRobotPerCell = this.vertexCollisions === vertexBefore;
  }

  /** The engine moved robot r off the floor to `cell` (operator intervention); not a step. */
  relocate(robot: number, cell: number): void {
    const from = this.previous[robot];
    if (this.cell[from * 4] === robot) this.cell[from * 4] = -1;
    this.previous[robot] = cell;
    this.cell[cell * 4] = robot;
  }

  private note(text: string): void {
    if (this.examples.length < 5) this.examples.push(text);
  }
}
