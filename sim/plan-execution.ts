/**
 * How planned (decoupled) policies drive their robots along the paths they reserved: token
 * passing, token passing with swaps, flow-batch. A policy calls `beginStep` at the start of
 * its step, plans, then calls `step`, which writes the moves and turns.
 *
 * Without execution delays the robots keep the planned timing exactly: a robot is where its
 * path says at every tick (`table.positionAt(r, tick + 1)`), as before this module existed.
 *
 * With execution delays (`world.movesMayBeHeld`, sim/move-delays.ts) the plans are executed
 * through an action dependency graph (Hönig, Kiesel, Tinka, Durham & Ayanian, "Persistent
 * and Robust Execution of MAPF Schedules in Warehouses", IEEE RA-L 4(2), 2019;
 * sim/action-dependency-graph.ts): every robot takes the cells of its path in order (type-1
 * edges) and enters a cell only after every robot planned to pass it before has left it
 * (type-2 edges: the cell's planned passing order). Routes and passing orders never change
 * (no re-planning); only the timing does. The schedule is kept as the earliest times the
 * graph allows from what has happened (the longest-path times of the graph): when a robot
 * cannot make a move at its expected tick (its move was held back, it is still handling or
 * turning), its next visit is expected later, and so is every visit that depends on it,
 * along its own path (each visit held at least its dwell: one tick, plus handling and
 * turning) and along the passing orders (a robot behind it enters a cell only once it has
 * left it); a planned wait absorbs a delay that fits in it. The re-timed paths are written
 * back into the reservation table, so the table shows where robots will really be (as far
 * as is known), and robots follow it as in the planned timing above: delays cause no
 * collision, and no robot waits for one that is far away and late.
 *
 * Planned time versus physical time: plans are made against the reservation table, in the
 * expected times, which move with the robots. A robot whose path ends in the table is at
 * its end cell; a robot delayed on its way has a later end there. So a policy re-plans a
 * robot only once it has driven its path (token passing: the path end in the table has
 * come), from the cell where it stands, and a new path slots into each cell's order where
 * the table had the cell free. Planning from the end of a path not yet driven is not done:
 * a task is given to a robot only when it is idle, which it is only once there, and its
 * plan would start from a time and place the robot has not reached.
 *
 * Turning (`world.turnTicks` > 0, sim/headings.ts): a robot standing on a cell of its path
 * turns, as soon as it is neither handling, turning nor held, towards the direction of its
 * next move, which is when the heading-aware search planned the turn; a half turn is one
 * command of two quarter turns.
 *
 * Counts: `dependencyWaits` (times a robot's next visit was pushed later because a robot
 * before it in that cell's passing order was late) and `dependencyWaitTicks` (the ticks
 * those pushes added: the waits the graph imposed on robots that were not delayed
 * themselves, before any later planned wait absorbed them).
 */
import type { Layout } from './layout.ts';
import type { ReservationTable } from './reservation-table.ts';
import { Phase, isHandling, type World } from './world.ts';
import { ActionDependencyGraph } from './action-dependency-graph.ts';
import { quarterTurns, stepHeading } from './headings.ts';
import { RunError } from './errors.ts';

const none = -1;

export class PlanExecution {
  /** Times a robot's next visit was pushed later because a robot before it in the cell's passing order was late. */
  dependencyWaits = 0;
  /** Ticks those pushes added. */
  dependencyWaitTicks = 0;

  private readonly graph: ActionDependencyGraph | null;
  private readonly robots: number;
  /** Per robot, with the graph: the path it follows (the table's object when last seen or written). */
  private readonly pathOf: (Int32Array | null)[];
  /** Per robot: its visits, `visits[r][cursor[r]]` the one it stands in, later ones after it. */
  private readonly visits: number[][];
  private readonly cursor: Int32Array;
  /** Position of each visit in its robot's list (by visit id). */
  private indexOfVisit = new Int32Array(1024);
  private readonly worklist: number[] = [];
  private readonly retimed: Uint8Array;
  /** Robots whose new path was followed in this sync (their order is checked once all are in). */
  private readonly followed: Uint8Array;
  private readonly retimedList: number[] = [];
  private readonly stopCells = new Int32Array(3);
  private readonly stopHolds = new Int32Array(3);
  // The index of each robot's next move in its path (cached per path), for turning.
  private readonly nextMovePath: (Int32Array | null)[];
  private readonly nextMoveIndex: Int32Array;

  constructor(
    private readonly world: World,
    private readonly layout: Layout,
    private readonly table: ReservationTable,
  ) {
    const robots = world.robotCount;
    this.robots = robots;
    this.graph = world.movesMayBeHeld ? new ActionDependencyGraph(layout.cellCount) : null;
    this.pathOf = new Array<Int32Array | null>(robots).fill(null);
    this.visits = Array.from({ length: robots }, () => []);
    this.cursor = new Int32Array(robots);
    this.retimed = new Uint8Array(robots);
    this.followed = new Uint8Array(robots);
    this.nextMovePath = new Array<Int32Array | null>(robots).fill(null);
    this.nextMoveIndex = new Int32Array(robots);
  }

  /** True when plans run through the action dependency graph (moves may be held back). */
  get dependent(): boolean {
    return this.graph !== null;
  }

  /** Notes who has moved on and which paths changed since the last step; call before planning at `tick`. */
  beginStep(tick: number): void {
    if (this.graph !== null) this.sync(tick);
  }

  /** Tick at which robot r's reserved path ends (with delays: when it is expected to get there). */
  pathEnd(robot: number): number {
    const path = this.table.paths[robot];
    return path === null ? -1 : this.table.pathStart[robot] + path.length - 1;
  }

  /**
   * Writes, for the step from `tick` to tick + 1, the cell of every robot following its
   * reserved path into `moves` and the turns it starts into `turns`. Returns true while some
   * robot's path goes on after `tick` (the policy then needs the next tick).
   */
  step(tick: number, moves: Int32Array, turns: Int8Array | undefined): boolean {
    if (this.graph !== null) {
      this.sync(tick);
      this.retime(tick);
    }
    const table = this.table;
    const turning = this.world.turnTicks > 0 && turns !== undefined;
    let following = false;
    for (let r = 0; r < this.robots; r++) {
      const path = table.paths[r];
      if (path === null || table.pathStart[r] + path.length - 1 <= tick) continue;
      moves[r] = table.positionAt(r, tick + 1);
      following = true;
      if (turning) this.turnTowardsNextMove(r, path, tick, turns);
    }
    return following;
  }

  /** Turns robot r towards its next move, if it is free to turn and faces elsewhere. */
  private turnTowardsNextMove(robot: number, path: Int32Array, tick: number, turns: Int8Array): void {
    const world = this.world;
    if (world.isFixed(robot)) return;
    const at = tick - this.table.pathStart[robot];
    let next = this.nextMoveIndex[robot];
    if (this.nextMovePath[robot] !== path || next <= at) {
      next = at + 1;
      while (next < path.length && path[next] === path[next - 1]) next++;
      this.nextMovePath[robot] = path;
      this.nextMoveIndex[robot] = next;
    }
    if (next >= path.length) return;
    const heading = stepHeading(this.layout, path[next - 1], path[next]);
    if (heading >= 0 && heading !== world.robotHeading[robot]) turns[robot] = heading;
  }

  // With delays: the action dependency graph ------------------------------------------------

  /**
   * Notes robots that entered their next visit's cell (their old visit ends), then follows
   * the paths the policy replaced: first every replaced path's later visits go, then the new
   * paths' visits come (a robot that took over another one's task plans the cells the other
   * would have passed).
   */
  private sync(tick: number): void {
    const robots = this.robots;
    this.worklist.length = 0;
    let changed = false;
    for (let r = 0; r < robots; r++) {
      this.observe(r, tick);
      if (this.table.paths[r] !== this.pathOf[r]) {
        this.leavePath(r);
        changed = true;
      }
    }
    if (!changed) return;
    // All new visits first, then the checks against the order (a visit's neighbours in a
    // cell's order may belong to a path followed later in this loop).
    for (let r = 0; r < robots; r++) if (this.table.paths[r] !== this.pathOf[r]) this.follow(r, tick);
    for (let r = 0; r < robots; r++) {
      if (!this.followed[r]) continue;
      this.followed[r] = 0;
      this.enforceOrder(r);
    }
    this.propagate();
  }

  /** Robot r entered the cell of its next visit: its visit of the old cell ends. */
  private observe(robot: number, tick: number): void {
    const list = this.visits[robot];
    const at = this.cursor[robot];
    if (at + 1 >= list.length) return;
    const graph = this.graph!;
    const next = list[at + 1];
    if (this.world.robotCell[robot] !== graph.cell(next)) return;
    if (graph.entryTick(next) !== tick) throw new RunError(`robot ${robot} entered cell ${graph.cell(next)} at tick ${tick}, its schedule said tick ${graph.entryTick(next)}`);
    graph.remove(list[at]);
    this.cursor[robot] = at + 1;
  }

  /** The policy replaced robot r's path: the visits of the old path after the current one go. */
  private leavePath(robot: number): void {
    const list = this.visits[robot];
    if (list.length === 0) return;
    if (this.table.paths[robot] === null) throw new RunError(`policy dropped the path of robot ${robot}; a planned robot always holds a path or a rest`);
    const at = this.cursor[robot];
    for (let i = at + 1; i < list.length; i++) this.graph!.remove(list[i]);
    const current = list[at];
    list.length = 0;
    list.push(current);
    this.cursor[robot] = 0;
    this.setIndex(current, 0);
    this.pathOf[robot] = null;
  }

  /**
   * Robot r follows the path the policy reserved for it: the path must have it where it
   * stands at `tick`; the visits of its later runs join the cells' passing orders at their
   * planned ticks, with their dwell (one tick, plus the handling at the task's stops and the
   * turn to the next move).
   */
  private follow(robot: number, tick: number): void {
    const graph = this.graph!;
    const world = this.world;
    const path = this.table.paths[robot]!;
    const list = this.visits[robot];
    const cell = world.robotCell[robot];
    const start = this.table.pathStart[robot];
    const at = Math.min(Math.max(0, tick - start), path.length - 1);
    if (path[at] !== cell) throw new RunError(`policy gave robot ${robot} a path that has it at cell ${path[at]} at tick ${tick}, but it stands on cell ${cell}`);
    let runEnd = at;
    while (runEnd + 1 < path.length && path[runEnd + 1] === cell) runEnd++;
    // Its first path: the visit of the cell it stands on opens here.
    if (list.length === 0) {
      const visit = graph.add(robot, cell, tick, 1);
      this.setIndex(visit, 0);
      list.push(visit);
    }
    this.cursor[robot] = 0;
    // The task's stops still ahead, in order (the path enters a stop only to handle there).
    const stops = this.stopsAhead(robot);
    let stop = 0;
    let heading = world.turnTicks > 0 ? world.robotHeading[robot] : 0;
    const turnTicks = world.turnTicks;
    for (let i = runEnd + 1; i < path.length; ) {
      let j = i;
      while (j + 1 < path.length && path[j + 1] === path[i]) j++;
      const arrival = stepHeading(this.layout, path[i - 1], path[i]);
      heading = arrival;
      let dwell = 1;
      if (stop < stops && path[i] === this.stopCells[stop]) dwell += this.stopHolds[stop++];
      if (turnTicks > 0 && j + 1 < path.length) dwell += turnTicks * quarterTurns(heading, stepHeading(this.layout, path[j], path[j + 1]));
      const visit = graph.add(robot, path[i], start + i, dwell);
      this.setIndex(visit, list.length);
      list.push(visit);
      i = j + 1;
    }
    this.pathOf[robot] = path;
    this.followed[robot] = 1;
  }

  /**
   * A plan made against the schedule fits it; should it not, the graph's order wins: no
   * visit of robot r before the robot ahead of it has left, none behind before r has.
   */
  private enforceOrder(robot: number): void {
    const graph = this.graph!;
    const list = this.visits[robot];
    for (let i = 0; i < list.length; i++) {
      if (i > 0) this.enforce(list[i]);
      const behind = graph.next(list[i]);
      if (behind !== none) this.raise(behind, this.exitTick(list[i]), graph.robot(behind) !== robot);
    }
  }

  /** The task stops robot r has still to reach, into stopCells/stopHolds; returns how many. */
  private stopsAhead(robot: number): number {
    const world = this.world;
    const task = world.robotTask[robot];
    if (task < 0) return 0;
    const phase = world.robotPhase[robot];
    let count = 0;
    // Phases in order: to the pickup, its handling, to the drop, its handling, to the return.
    if (phase === Phase.ToPickup) count = this.addStop(count, world.taskPickup[task], world.taskPickupTicks[task]);
    if (phase <= Phase.ToDrop) count = this.addStop(count, world.taskDrop[task], world.taskDropTicks[task]);
    if (phase <= Phase.ToReturn) count = this.addStop(count, world.taskReturn[task], world.taskReturnTicks[task]);
    return count;
  }

  private addStop(count: number, cell: number, hold: number): number {
    if (cell < 0) return count;
    this.stopCells[count] = cell;
    this.stopHolds[count] = hold;
    return count + 1;
  }

  /**
   * Robots that cannot make their next move at its expected tick (held back, still handling
   * or turning, or facing elsewhere) are expected to make it as soon as they can; whatever
   * depends on that move is pushed later with it, and the re-timed paths go to the table.
   */
  private retime(tick: number): void {
    // Paths followed in sync() may have pushed robots already: their paths go back below.
    const graph = this.graph!;
    const world = this.world;
    const turnTicks = world.turnTicks;
    for (let r = 0; r < this.robots; r++) {
      const list = this.visits[r];
      const at = this.cursor[r];
      if (at + 1 >= list.length) continue;
      const next = list[at + 1];
      const expected = graph.entryTick(next);
      if (expected > tick + 1) continue;
      // The earliest tick the robot can enter its next cell.
      let ready = tick;
      if (world.robotHeldUntil[r] > ready) ready = world.robotHeldUntil[r];
      if (world.robotTurnUntil[r] > ready) ready = world.robotTurnUntil[r];
      if (isHandling(world.robotPhase[r]) && world.robotHandlingUntil[r] > ready) ready = world.robotHandlingUntil[r];
      if (turnTicks > 0) ready += turnTicks * quarterTurns(world.robotHeading[r], stepHeading(this.layout, graph.cell(list[at]), graph.cell(next)));
      if (ready + 1 > expected) this.raise(next, ready + 1, false);
    }
    this.propagate();
    for (const r of this.retimedList) {
      this.retimed[r] = 0;
      this.writeBack(r, tick);
    }
    this.retimedList.length = 0;
  }

  /** Makes sure visit v is not expected before the robot ahead of it in the cell's order has left. */
  private enforce(visit: number): void {
    const graph = this.graph!;
    const cell = graph.cell(visit);
    let before = none;
    for (let e = graph.first(cell); e !== visit && e !== none; e = graph.next(e)) before = e;
    if (before === none) return;
    const leaves = this.exitTick(before);
    if (leaves > graph.entryTick(visit)) this.raise(visit, leaves, true);
  }

  /** Tick at which the robot of `visit` is expected to leave its cell (enter its next one); Infinity for its last visit. */
  private exitTick(visit: number): number {
    const graph = this.graph!;
    const robot = graph.robot(visit);
    const list = this.visits[robot];
    const i = this.indexOfVisit[visit];
    return i + 1 < list.length ? graph.entryTick(list[i + 1]) : Infinity;
  }

  /** Expects `visit` no earlier than `tick`; `byOrder`: because of another robot ahead of it in the cell's order (a wait the graph imposed). */
  private raise(visit: number, tick: number, byOrder: boolean): void {
    const graph = this.graph!;
    const current = graph.entryTick(visit);
    if (tick <= current) return;
    const robot = graph.robot(visit);
    if (this.indexOfVisit[visit] <= this.cursor[robot]) throw new RunError(`robot ${robot} is already on cell ${graph.cell(visit)}, but its schedule has another robot leave it later`);
    if (!Number.isFinite(tick)) throw new RunError(`robot ${graph.robot(visit)} would wait for ever to enter cell ${graph.cell(visit)}: the robot before it there never leaves`);
    if (byOrder) {
      this.dependencyWaits++;
      this.dependencyWaitTicks += tick - current;
    }
    graph.delayEntry(visit, tick);
    if (!this.retimed[robot]) {
      this.retimed[robot] = 1;
      this.retimedList.push(robot);
    }
    this.worklist.push(visit);
  }

  /**
   * Longest-path update: a visit expected later delays the robot's next visit (by its dwell)
   * and the visit behind the one its robot leaves to enter it (in that cell's order).
   */
  private propagate(): void {
    const graph = this.graph!;
    const worklist = this.worklist;
    while (worklist.length > 0) {
      const visit = worklist.pop()!;
      const robot = graph.robot(visit);
      const list = this.visits[robot];
      const i = this.indexOfVisit[visit];
      const entry = graph.entryTick(visit);
      if (i + 1 < list.length) this.raise(list[i + 1], entry + graph.dwell(visit), false);
      if (i > this.cursor[robot]) {
        const behind = graph.next(list[i - 1]);
        if (behind !== none) this.raise(behind, entry, graph.robot(behind) !== robot);
      }
    }
  }

  /** Writes robot r's re-timed path into the table (from `tick` on) and follows it. */
  private writeBack(robot: number, tick: number): void {
    const graph = this.graph!;
    const list = this.visits[robot];
    const at = this.cursor[robot];
    const last = list[list.length - 1];
    const end = Math.max(tick, graph.entryTick(last));
    const path = new Int32Array(end - tick + 1);
    let from = 0;
    for (let i = at; i < list.length; i++) {
      const to = i + 1 < list.length ? graph.entryTick(list[i + 1]) - tick : path.length;
      path.fill(graph.cell(list[i]), from, to);
      from = to;
    }
    this.table.reserve(robot, path, tick);
    this.pathOf[robot] = path;
  }

  private setIndex(visit: number, index: number): void {
    if (visit >= this.indexOfVisit.length) {
      let capacity = this.indexOfVisit.length;
      while (capacity <= visit) capacity *= 2;
      const grown = new Int32Array(capacity);
      grown.set(this.indexOfVisit);
      this.indexOfVisit = grown;
    }
    this.indexOfVisit[visit] = index;
  }

  /** Visits held in the graph (for tests and benchmarks). */
  get visitsHeld(): number {
    return this.graph?.live ?? 0;
  }
}
