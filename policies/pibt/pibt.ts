/**
 * PIBT, Priority Inheritance with Backtracking (Okumura, Machida, Défago, Tamura, "Priority
 * Inheritance with Backtracking for Iterative Multi-agent Path Finding", IJCAI 2019; AIJ
 * 2022), applied to lifelong pickup and delivery. Reactive: it decides one move per robot
 * per tick and reserves nothing beyond t + 1.
 *
 * Goals. A robot holding a task heads for its task goal (world.goalOf). Open tasks go to
 * idle robots whenever the open list or a robot's task changes (world.version), by the rule
 * of dispatch.ts: with few open tasks each takes the nearest idle robot; under a backlog
 * the idle robots take the oldest tasks of the pickup stations by the lowest cost of
 * distance, queued handling and an ageing credit (as in flow-batch's epoch assignment),
 * cheapest robot-station pair first, so every station keeps being served. An idle robot
 * claims the nearest unclaimed parking spot (breadth-first search from its cell) and heads
 * there; with no spot free it rests where it stands.
 *
 * Priorities (paper, §3): ticks elapsed since the robot's goal last changed plus a unique
 * fraction in [0, 1) drawn once from the policy's random stream; a robot whose goal
 * changes (it reached the old one) drops back. Robots holding a task outrank idle robots
 * heading for parking, which outrank resting robots; resting robots have no goal and are
 * only moved when pushed. Handling robots cannot move: their cells are reserved first.
 * Because a goal change always sets the newest start tick, the order by priority is kept
 * incrementally (robots whose goal changed move to the back), O(robots) per tick.
 *
 * One tick (paper, Algorithm 1): for every undecided robot in priority order call
 * PIBT(a, none). PIBT(a, b) orders a's neighbours and its own cell by distance to a's goal
 * (ties: cells empty now first, then a seeded hash of tick, robot and cell), skips cells
 * reserved for t + 1 and the cell of the parent b (no swap), reserves the first other one,
 * and, when a lower-priority robot c without a decided move stands there, lets c inherit
 * a's priority by calling PIBT(c, a); if that fails a tries its next cell, and if every
 * cell fails a stays and reports failure to its own parent. No two robots reserve one
 * cell and no robot enters the cell of a robot entering its own, so every tick is free of
 * vertex and swap collisions by construction (the engine's validator checks anyway).
 *
 * Distances to goals come from compact per-goal fields (sim/distance-field.ts: exact
 * distances over a window, mostly one bit per cell), fetched once per goal change and kept
 * per robot: with thousands of robots heading for thousands of different drops, one full
 * table per goal neither fits in memory nor in a bounded cache.
 *
 * Inheritance chains are walked with an explicit stack, not recursion: a chain can hold
 * every robot (one frame each), so recursion depth would grow with the fleet. Each robot
 * is on the stack at most once per tick and tries at most 5 cells, so a tick is O(robots * 5)
 * plus the assignment work. Memory: parallel typed arrays by robot and by cell.
 *
 * Forward-only robots (`world.turnTicks` > 0): PIBT plans the tick as above, ranking cells
 * equally close to the goal by the quarter turns they need (ahead first: measured on the demo
 * hall at 24 robots with 1 s turns, 5 x 4 h, capacity 1,389 ± 7/h against 1,078 ± 14/h
 * without that rank, with 442 instead of 982 quarter turns per robot-hour); then a move
 * that is not to the cell ahead becomes a turn in place towards it and the robots that were
 * to follow into that cell stay (policies/shared/turn-in-place.ts), so the turn is paid as
 * waiting. A robot that turns, handles or is held back by an execution delay is fixed: its
 * cell is reserved before anyone plans, so nobody pushes it or enters it; its goal and
 * priority stay.
 *
 * Robots fixed for long (broken down, or charging on a charger). The static distances above
 * know walls, not robots, and a robot standing for 20 minutes is a wall to everyone else. So:
 * (1) a robot whose static gradient runs into such a cell follows its goal's detour field,
 * the distance with those cells closed (detour-fields.ts), until its goal changes; (2) a
 * robot whose goal such a robot holds (a broken robot on a chute or a charger), or whose
 * charger the robot charged there has not left yet, plans after every other moving robot
 * (band GoalTaken), so it gives way instead of holding the aisle with its ever older
 * priority; (3) dispatch holds back tasks whose pickup or drop a broken robot holds
 * (dispatch.ts). Measured on the demo shift hall (24 robots, 900 tasks/h, breakdowns MTBF
 * 8 h / MTTR 20 min, battery and chargers, two slow inducts; 3 x 4 h): 658 ± 371 tasks/h,
 * unstable, with up to 22 of 24 robots standing in lines either side of one broken robot,
 * became 909 ± 14/h, stable, lead time 69 s (token passing 906 ± 23/h, 115 s); breakdowns
 * alone 756 ± 189 -> 913 ± 0.
 * Without breakdowns or charging nothing is closed and every choice is as before.
 *
 * PIBT is complete for the highest-priority robot only on graphs where every two
 * neighbouring cells lie on a cycle; elsewhere robots can livelock or stall. The policy
 * does not hide that: it allows the engine's modelled recovery (allowsRecovery) and the
 * engine's detector reports the episodes.
 */
import { z } from 'zod';
import type { Policy, PolicyContext, PolicyOptionDoc } from '../../sim/policy.ts';
import { Dispatcher } from './dispatch.ts';
import type { DistanceField } from '../../sim/distance-field.ts';
import { TurnInPlace } from '../shared/turn-in-place.ts';
import { quarterTurns } from '../../sim/headings.ts';
import { Phase } from '../../sim/world.ts';
import { DetourFields } from './detour-fields.ts';

// Read once: imported bindings are getters under the TypeScript loader.
const phaseCharging = Phase.Charging;
const phaseToCharger = Phase.ToCharger;

export const pibtOptions = z
  .object({
    ageWeight: z.number().nonnegative().finite().default(0.1),
    queueWeight: z.number().nonnegative().finite().default(1),
    maxStations: z.number().int().positive().default(1024),
  })
  .strict();
export type PibtOptions = z.infer<typeof pibtOptions>;
export const pibtOptionDocs: PolicyOptionDoc[] = [
  { name: 'ageWeight', default: 0.1, unit: 'cells/s', description: "under a backlog: cost credit per second a station's oldest open task has waited, so no station starves; 0 = nearest station" },
  { name: 'queueWeight', default: 1, unit: 'ratio', description: 'under a backlog: cost of a second of pickup handling already queued at a station, relative to a second of driving; 0 ignores queues' },
  { name: 'maxStations', default: 1024, unit: 'stations', description: 'under a backlog: at most this many pickup stations (those with the oldest open tasks) compared per dispatch pass; the default compares every station of any hall up to 1,024 pickups' },
];

/**
 * Scheduling classes; handling (and turning or held) robots are fixed before anyone plans,
 * then Task, ToParking and GoalTaken robots plan in that order; resting robots move only when pushed.
 */
const Band = { Task: 0, ToParking: 1, Resting: 2, Handling: 3, Fixed: 4, GoalTaken: 5 } as const;

/** Candidate cells per robot: four neighbours and its own cell. */
const slots = 5;

export class Pibt implements Policy {
  private readonly robots: number;
  /** Cell each robot occupies at t + 1, or -1 while undecided. */
  private readonly next: Int32Array;
  /**
   * Cells reserved for t + 1: `reserved[cell] === reserveStamp` (one byte per cell, so the
   * table stays in a core's cache on a 120,000-cell hall; nothing is cleared per step: the
   * stamp moves on, and the table is zeroed once every 255 steps when it wraps).
   */
  private readonly reserved: Uint8Array;
  private reserveStamp = 0;
  private readonly parent: Int32Array;
  /** Each robot's candidate moves, best first: 0 to stay, d + 1 for the neighbour in direction d (one byte each, so the per-robot block stays small on big fleets). */
  private readonly candidates: Uint8Array;
  private readonly candidateCount: Uint8Array;
  private readonly cursor: Uint8Array;
  private readonly stack: Int32Array;
  private readonly sortKey: Int32Array;
  /** The world's and layout's arrays read in the inner loop (their identity never changes). */
  private readonly robotCell: Int32Array;
  private readonly occupant: Int32Array;
  private readonly neighbors: Int32Array;
  /** Per cell, bit d set when the neighbour in direction d is floor (Layout.openDirections: a table that stays in cache on big halls). */
  private readonly openDirs: Uint8Array;
  /** Cell offsets of the four directions (north, east, south, west). */
  private readonly dirOffset: Int32Array;
  private readonly floorWidth: number;

  /**
   * Per robot, the cell it stood on at its last push and that cell's column and row, side by
   * side (`robot * 3`): a push follows a step with one addition instead of a cell-to-column
   * table lookup (a cache miss per robot on big halls).
   */
  private readonly robotXY: Int32Array;
  /** The goal each robot pursued at the last step (task goal or parking claim), -1 for none. */
  private readonly goal: Int32Array;
  /** Distance field of each robot's goal, fetched on first use (skips the cache lookup in the hot loop). */
  private readonly goalField: (DistanceField | null)[];
  /** 1 while the robot follows its goal's detour field (detour-fields.ts), until its goal changes. */
  private readonly onDetour: Uint8Array;
  /** The detour version the robot's detour field was fetched under. */
  private readonly detourVersion: Int32Array;
  /** The closed-set version under which the robot's static gradient was last followed to its goal (-1: not yet for this goal). */
  private readonly walkedVersion: Int32Array;
  /** Created at the first long-fixed robot (broken down or charging); null before. */
  private detours: DetourFields | null = null;
  private readonly band: Uint8Array;
  /** The unique fractional part of each robot's priority. */
  private readonly tieBreak: Float64Array;
  /**
   * Robots by priority within any band: by the tick their goal last changed, oldest first,
   * then by tie-breaker, highest first; the same order as elapsed ticks + tie-breaker.
   */
  private byAge: Int32Array;
  private byAgeSpare: Int32Array;
  private readonly changed: number[] = [];
  private readonly changedMark: Uint8Array;

  private readonly parkingOf: Int32Array;
  private readonly parkingOwner: Int32Array;
  /** Unclaimed parking spots; a robot searches only while there are some. */
  private freeParking: number;
  /** Bumped when a parking claim is released; a robot whose search failed retries only then. */
  private parkingRevision = 0;
  private readonly parkingTriedAt: Float64Array;
  private readonly searchQueue: Int32Array;
  private readonly searchStamp: Int32Array;
  private searchId = 0;
  private readonly isParking: Uint8Array;

  private readonly idle: number[] = [];
  /** Robots in the task and to-parking bands at this tick (updateGoals). */
  private withTask = 0;
  private toParking = 0;
  private goalTaken = 0;
  private readonly dispatcher: Dispatcher;
  private assignedVersion = -1;
  private readonly hashSeed: number;

  private readonly turning: TurnInPlace;
  private inheritances = 0;
  private failedCalls = 0;
  private assignments = 0;
  private parkingClaims = 0;
  private relocations = 0;

  constructor(
    private readonly context: PolicyContext,
    options: PibtOptions,
  ) {
    const { world, layout } = context;
    this.dispatcher = new Dispatcher(world, context.distances, context.tickSeconds, options);
    this.turning = new TurnInPlace(world, layout);
    const robots = world.robotCount;
    this.robots = robots;
    this.next = new Int32Array(robots).fill(-1);
    this.reserved = new Uint8Array(layout.cellCount);
    this.parent = new Int32Array(robots).fill(-1);
    this.candidates = new Uint8Array(robots * slots);
    this.candidateCount = new Uint8Array(robots);
    this.cursor = new Uint8Array(robots);
    this.stack = new Int32Array(robots);
    this.sortKey = new Int32Array(slots);
    this.robotCell = world.robotCell;
    this.occupant = world.occupant;
    this.neighbors = layout.neighbors;
    this.openDirs = layout.openDirections;
    this.dirOffset = Int32Array.of(-layout.width, 1, layout.width, -1);
    this.floorWidth = layout.width;
    this.robotXY = new Int32Array(robots * 3);
    for (let r = 0; r < robots; r++) {
      const cell = world.robotCell[r];
      this.robotXY[r * 3] = cell;
      this.robotXY[r * 3 + 1] = cell % layout.width;
      this.robotXY[r * 3 + 2] = Math.floor(cell / layout.width);
    }
    this.goal = new Int32Array(robots).fill(-1);
    this.goalField = new Array<DistanceField | null>(robots).fill(null);
    this.onDetour = new Uint8Array(robots);
    this.detourVersion = new Int32Array(robots);
    this.walkedVersion = new Int32Array(robots).fill(-1);
    this.band = new Uint8Array(robots);
    this.changedMark = new Uint8Array(robots);
    this.parkingOf = new Int32Array(robots).fill(-1);
    this.parkingOwner = new Int32Array(layout.cellCount).fill(-1);
    this.parkingTriedAt = new Float64Array(robots).fill(-1);
    this.searchQueue = new Int32Array(layout.cellCount);
    this.searchStamp = new Int32Array(layout.cellCount);
    this.isParking = new Uint8Array(layout.cellCount);
    for (const c of layout.parking) this.isParking[c] = 1;
    this.freeParking = layout.parking.length;

    // Unique tie-breakers: a seeded random permutation of 0..robots-1, scaled into [0, 1).
    const permutation = new Int32Array(robots);
    for (let r = 0; r < robots; r++) permutation[r] = r;
    for (let i = robots - 1; i > 0; i--) {
      const j = Math.floor(context.random() * (i + 1));
      const swap = permutation[i];
      permutation[i] = permutation[j];
      permutation[j] = swap;
    }
    this.tieBreak = new Float64Array(robots);
    for (let r = 0; r < robots; r++) this.tieBreak[r] = permutation[r] / robots;
    this.hashSeed = Math.floor(context.random() * 0x7fffffff);

    // Start order: all goals "changed" at tick 0, higher tie-breaker first.
    this.byAge = new Int32Array(robots);
    for (let r = 0; r < robots; r++) this.byAge[robots - 1 - permutation[r]] = r;
    this.byAgeSpare = new Int32Array(robots);

    // Robots that start on parking keep that spot.
    for (let r = 0; r < robots; r++) {
      const cell = world.robotCell[r];
      if (this.isParking[cell] && this.parkingOwner[cell] < 0) {
        this.parkingOwner[cell] = r;
        this.parkingOf[r] = cell;
        this.freeParking--;
        this.goal[r] = cell;
      }
    }
  }

  step(tick: number, moves: Int32Array, turns?: Int8Array): number {
    const { world } = this.context;
    const robots = this.robots;
    if (world.version !== this.assignedVersion) {
      this.assignOpenTasks(tick);
      this.assignedVersion = world.version;
    }
    this.updateGoals();
    let anyFixed = false;
    if (world.turnTicks > 0 || world.movesMayBeHeld) {
      // Turning and held robots cannot move: reserved first, like handling ones.
      for (let r = 0; r < robots; r++) {
        if (this.band[r] !== Band.Handling && world.isFixed(r)) {
          this.band[r] = Band.Fixed;
          anyFixed = true;
        }
      }
    }

    // A new stamp drops last tick's reservations, then the handling robots are fixed on their cells.
    const next = this.next;
    const reserved = this.reserved;
    if (this.reserveStamp === 255) {
      reserved.fill(0);
      this.reserveStamp = 0;
    }
    const stamp = ++this.reserveStamp;
    const cells = world.robotCell;
    const band = this.band;
    next.fill(-1);
    for (let r = 0; r < robots; r++) {
      if (band[r] === Band.Handling || band[r] === Band.Fixed) {
        next[r] = cells[r];
        reserved[cells[r]] = stamp;
      }
    }
    const order = this.byAge;
    for (let i = 0; i < robots; i++) {
      const r = order[i];
      if (band[r] === Band.Task && next[r] < 0) this.plan(r, tick);
    }
    if (this.toParking > 0) {
      for (let i = 0; i < robots; i++) {
        const r = order[i];
        if (band[r] === Band.ToParking && next[r] < 0) this.plan(r, tick);
      }
    }
    if (this.goalTaken > 0) {
      for (let i = 0; i < robots; i++) {
        const r = order[i];
        if (band[r] === Band.GoalTaken && next[r] < 0) this.plan(r, tick);
      }
    }
    // Resting robots not pushed by now stay: staying is their first choice and always free,
    // since a robot that wanted the cell would have pushed them.
    let busy = anyFixed || this.toParking > 0 || this.withTask > 0;
    for (let r = 0; r < robots; r++) {
      if (next[r] < 0) {
        next[r] = cells[r];
        reserved[cells[r]] = stamp;
      } else if (next[r] !== cells[r]) busy = true;
      moves[r] = next[r];
    }
    if (world.turnTicks > 0 && turns !== undefined) this.turning.apply(moves, turns);
    return busy ? tick + 1 : Infinity;
  }

  onRelocated(_robot: number, _tick: number): void {
    // The robot keeps its task, goal and priority; it only stands somewhere else now.
    this.relocations++;
  }

  counters(): Record<string, number> {
    return {
      priorityInheritances: this.inheritances,
      failedCalls: this.failedCalls,
      assignments: this.assignments,
      parkingClaims: this.parkingClaims,
      relocations: this.relocations,
      ...(this.detours !== null ? { detourSwitches: this.detours.switches, detourFieldBuilds: this.detours.builds, closedSetChanges: this.detours.changes } : {}),
      ...(this.context.world.turnTicks > 0 ? { turnsInPlace: this.turning.turnsStarted, followersHeldByTurns: this.turning.followersHeld } : {}),
    };
  }

  // Assignment ---------------------------------------------------------------------------

  /** Hands open tasks to idle robots by the rule of dispatch.ts. */
  private assignOpenTasks(tick: number): void {
    const { world } = this.context;
    if (world.openTasks.length === 0) return;
    const idle = this.idle;
    idle.length = 0;
    for (let r = 0; r < this.robots; r++) if (world.mayTakeTask(r)) idle.push(r);
    this.dispatcher.dispatch(idle, tick, this.giveTask);
  }

  private readonly giveTask = (robot: number, task: number): void => this.give(robot, task);

  private give(robot: number, task: number): void {
    this.releaseParking(robot);
    this.context.world.assign(robot, task);
    this.assignments++;
  }

  private releaseParking(robot: number): void {
    const spot = this.parkingOf[robot];
    if (spot < 0) return;
    this.parkingOwner[spot] = -1;
    this.parkingOf[robot] = -1;
    this.freeParking++;
    this.parkingRevision++;
  }

  /** Nearest unclaimed parking spot by breadth-first search from `from`, or -1. */
  private nearestFreeParking(from: number): number {
    const { layout } = this.context;
    const neighbors = layout.neighbors;
    const queue = this.searchQueue;
    const stamp = this.searchStamp;
    const id = ++this.searchId;
    let head = 0;
    let tail = 0;
    queue[tail++] = from;
    stamp[from] = id;
    while (head < tail) {
      const c = queue[head++];
      if (this.isParking[c] && this.parkingOwner[c] < 0) return c;
      for (let d = 0; d < 4; d++) {
        const n = neighbors[c * 4 + d];
        if (n >= 0 && stamp[n] !== id) {
          stamp[n] = id;
          queue[tail++] = n;
        }
      }
    }
    return -1;
  }

  // Goals and priorities -----------------------------------------------------------------

  private updateGoals(): void {
    const { world } = this.context;
    const robots = this.robots;
    const changed = this.changed;
    changed.length = 0;
    let withTask = 0;
    let toParking = 0;
    let detours = this.detours;
    detours?.begin();
    let goalTaken = 0;
    for (let r = 0; r < robots; r++) {
      let goal: number;
      // Handling, charging or broken down robots are fixed; idle robots and robots queued for a
      // charger rest. A robot that only pauses (turning in place, a move held back) keeps its goal.
      if (world.isFixed(r) && !world.isTurning(r) && !world.isHeld(r)) {
        this.band[r] = Band.Handling;
        goal = -1;
        // Broken down or charging: fixed for many minutes, an obstacle for detour fields.
        if (world.robotBroken[r] === 1 || world.robotPhase[r] === phaseCharging) {
          if (detours === null) {
            detours = this.detours = new DetourFields(this.context.layout, robots);
            detours.begin();
          }
          detours.add(world.robotCell[r]);
        }
      } else if (!world.restsLikeIdle(r)) {
        if (this.parkingOf[r] >= 0) this.releaseParking(r);
        withTask++;
        goal = world.goalOf(r);
        // A goal on which a robot stands broken down (or charging) cannot be reached for many
        // minutes: the robot heading there plans after every other moving robot, so it gives
        // way (is pushed) instead of holding its aisle with its ever older priority. So does a
        // robot sent to a charger that the robot charged there has not left yet: chargers
        // often sit in dead ends, where the two cannot pass unless the newcomer backs off
        // (PIBT needs every pair of neighbouring cells on a cycle; a dead end has none).
        const taken =
          (detours !== null && detours.closed[goal] === 1) ||
          (world.robotPhase[r] === phaseToCharger && world.occupant[goal] >= 0 && world.occupant[goal] !== r);
        this.band[r] = taken ? Band.GoalTaken : Band.Task;
        if (this.band[r] === Band.GoalTaken) goalTaken++;
      } else {
        if (this.parkingOf[r] < 0 && this.freeParking > 0 && this.parkingTriedAt[r] !== this.parkingRevision) {
          const spot = this.nearestFreeParking(world.robotCell[r]);
          if (spot >= 0) {
            this.parkingOwner[spot] = r;
            this.parkingOf[r] = spot;
            this.freeParking--;
            this.parkingClaims++;
          } else {
            this.parkingTriedAt[r] = this.parkingRevision;
          }
        }
        goal = this.parkingOf[r];
        if (goal >= 0 && goal !== world.robotCell[r]) {
          this.band[r] = Band.ToParking;
          toParking++;
        } else this.band[r] = Band.Resting;
      }
      if (goal !== this.goal[r]) {
        this.goal[r] = goal;
        this.goalField[r] = null;
        this.onDetour[r] = 0;
        this.walkedVersion[r] = -1;
        changed.push(r);
      }
    }
    detours?.commit();
    this.withTask = withTask;
    this.toParking = toParking;
    this.goalTaken = goalTaken;
    if (changed.length === 0) return;
    // Robots whose goal changed now have the newest start tick: keep the others in order
    // and append these, higher tie-breaker first.
    const tieBreak = this.tieBreak;
    changed.sort((a, b) => tieBreak[b] - tieBreak[a]);
    const mark = this.changedMark;
    for (const r of changed) mark[r] = 1;
    const order = this.byAge;
    const spare = this.byAgeSpare;
    let k = 0;
    for (let i = 0; i < robots; i++) {
      const r = order[i];
      if (!mark[r]) spare[k++] = r;
    }
    for (const r of changed) {
      spare[k++] = r;
      mark[r] = 0;
    }
    this.byAgeSpare = order;
    this.byAge = spare;
  }

  // PIBT ---------------------------------------------------------------------------------

  /**
   * PIBT(root, none) with an explicit stack. Frame = a robot; its parent, candidate list and
   * cursor live in per-robot arrays. `result` carries a finished child's answer to its parent.
   */
  private plan(root: number, tick: number): void {
    const cells = this.context.world.robotCell;
    const occupant = this.context.world.occupant;
    const next = this.next;
    const reserved = this.reserved;
    const stamp = this.reserveStamp;
    const parent = this.parent;
    const candidates = this.candidates;
    const offsets = this.dirOffset;
    const candidateCount = this.candidateCount;
    const cursor = this.cursor;
    const stack = this.stack;
    let depth = 0;
    this.push(root, -1, tick);
    stack[depth++] = root;
    // 0: no answer pending; 1: the child moved; 2: the child could not move.
    let result = 0;
    while (depth > 0) {
      const a = stack[depth - 1];
      if (result === 1) {
        depth--;
        continue;
      }
      if (result === 2) {
        cursor[a]++;
        result = 0;
      }
      const p = parent[a];
      const parentCell = p >= 0 ? cells[p] : -1;
      let descended = false;
      let moved = false;
      while (cursor[a] < candidateCount[a]) {
        const move = candidates[a * slots + cursor[a]];
        const v = move === 0 ? cells[a] : cells[a] + offsets[move - 1];
        if (reserved[v] === stamp || v === parentCell) {
          cursor[a]++;
          continue;
        }
        next[a] = v;
        reserved[v] = stamp;
        const c = occupant[v];
        if (c >= 0 && c !== a && next[c] < 0) {
          // c inherits a's priority.
          this.inheritances++;
          this.push(c, a, tick);
          stack[depth++] = c;
          descended = true;
        } else {
          moved = true;
        }
        break;
      }
      if (descended) continue;
      depth--;
      if (moved) {
        result = 1;
      } else {
        // Every cell failed: stay. The own cell is free for a root (anyone wanting it would
        // have pushed this robot) and held only by the parent otherwise, which moves on.
        next[a] = cells[a];
        reserved[cells[a]] = stamp;
        this.failedCalls++;
        result = 2;
      }
    }
  }

  /**
   * Follows one path down robot r's static gradient from `cell` to its goal; true when it
   * steps onto a closed cell. A path through a closed cell may have a twin that avoids it
   * (open floor): the detour field then gives the same distances, so switching costs only
   * its search. Stops where the field's window ends (the neighbour check still applies).
   */
  private gradientMeetsClosed(r: number, goal: number, cell: number): boolean {
    const detours = this.detours!;
    this.walkedVersion[r] = detours.version;
    const field = this.goalField[r]!;
    const closed = detours.closed;
    const neighbors = this.neighbors;
    let c = cell;
    for (let steps = 0; c !== goal && steps < this.context.layout.cellCount; steps++) {
      const rank = field.rankAround(c);
      if (rank < 0) return false;
      let n = -1;
      for (let d = 0; d < 4 && n < 0; d++) {
        const v = neighbors[c * 4 + d];
        if (v >= 0 && ((rank >> d) & 1) === 0) n = v;
      }
      if (n < 0) return false;
      if (closed[n] === 1) return true;
      c = n;
    }
    return false;
  }

  /** True when a neighbour of `cell` that `farther` ranks closer is closed (a long-fixed robot stands there). */
  private closerIsClosed(cell: number, farther: number): boolean {
    const closed = this.detours!.closed;
    const neighbors = this.neighbors;
    for (let d = 0; d < 4; d++) {
      if ((farther >> d) & 1) continue;
      const n = neighbors[cell * 4 + d];
      if (n >= 0 && closed[n] === 1) return true;
    }
    return false;
  }

  /**
   * The ranking of robot r's neighbours by its goal's detour field. A detour field from an
   * older closed set is fetched again; with no cell closed any more the robot goes back to
   * the static field. A robot cut off from its goal by closed cells ranks by the static
   * field (it waits at the obstacle, as before, rather than stand without a goal).
   */
  private detourRank(r: number, goal: number, cell: number): number {
    const detours = this.detours!;
    if (detours.count === 0) {
      this.onDetour[r] = 0;
      this.goalField[r] = null;
      return (this.goalField[r] = this.context.distances.fields.to(goal, cell)).rankAround(cell);
    }
    let field = this.goalField[r];
    let rank = field === null || this.detourVersion[r] !== detours.version ? -2 : field.rankAround(cell);
    if (rank === -2) {
      field = this.goalField[r] = detours.to(goal, cell);
      this.detourVersion[r] = detours.version;
      rank = field.rankAround(cell);
    }
    if (rank === -1) rank = this.context.distances.fields.to(goal, cell).rankAround(cell);
    return rank;
  }

  /**
   * field.rankAround(cell) for robot r standing on `cell`, through r's column and row: a
   * step from the cell of its last push changes one of them by one (a difference of one
   * row's width is the same column a row down, whatever the layout); anything else is
   * looked up afresh.
   */
  private rankFrom(field: DistanceField, r: number, cell: number): number {
    const xy = this.robotXY;
    const base = r * 3;
    let x = xy[base + 1];
    let y = xy[base + 2];
    const was = xy[base];
    if (was !== cell) {
      const width = this.floorWidth;
      const delta = cell - was;
      if (delta === width) y++;
      else if (delta === -width) y--;
      else if (delta === 1 && x + 1 < width) x++;
      else if (delta === -1 && x > 0) x--;
      else {
        x = cell % width;
        y = (cell - x) / width;
      }
      xy[base] = cell;
      xy[base + 1] = x;
      xy[base + 2] = y;
    }
    return field.rankAroundXY(x, y);
  }

  /** Prepares robot r's frame: its parent and its candidate cells, best first. */
  private push(r: number, parentRobot: number, tick: number): void {
    this.parent[r] = parentRobot;
    this.cursor[r] = 0;
    const cell = this.robotCell[r];
    const goal = this.goal[r];
    // Bit d: the neighbour in direction d is farther from the goal; -1: no goal to rank by.
    let farther = -1;
    if (goal >= 0) {
      if (this.onDetour[r] === 1) farther = this.detourRank(r, goal, cell);
      else {
        const field = this.goalField[r];
        farther = field === null ? -2 : this.rankFrom(field, r, cell);
        if (farther === -2) farther = this.rankFrom((this.goalField[r] = this.context.distances.fields.to(goal, cell)), r, cell);
        // The static gradient runs into a robot fixed for long: detour. Looked at along the
        // whole gradient once per goal and closed set (so the robot turns off before it
        // drives into a dead end), and at the neighbours at every push.
        const detours = this.detours;
        if (farther >= 0 && detours !== null && detours.count > 0 && (this.closerIsClosed(cell, farther) || (this.walkedVersion[r] !== detours.version && this.gradientMeetsClosed(r, goal, cell)))) {
          this.onDetour[r] = 1;
          detours.switches++;
          this.goalField[r] = null;
          farther = this.detourRank(r, goal, cell);
        }
      }
    }
    const occupant = this.occupant;
    const candidates = this.candidates;
    const base = r * slots;
    const keys = this.sortKey;
    // Neighbours differ from the own cell's distance by exactly one, so the distance part of
    // the key is 0 (closer), 1 (stay) or 2 (farther); without a goal staying comes first.
    let mix = this.hashSeed ^ Math.imul(tick, 0x9e3779b1);
    mix = Math.imul(mix ^ r, 0x85ebca6b);
    // Forward-only robots: among cells equally close, the one needing fewer quarter turns first.
    const world = this.context.world;
    const heading = world.turnTicks > 0 ? world.robotHeading[r] : -1;
    let count = 0;
    const open = this.openDirs[cell];
    const offset = this.dirOffset;
    for (let d = -1; d < 4; d++) {
      const v = d < 0 ? cell : (open >> d) & 1 ? cell + offset[d] : -1;
      if (v < 0) continue;
      // Distance first, then (forward-only) turns, then cells empty now, then a seeded hash of (tick, robot, cell).
      const step = v === cell ? 1 : farther < 0 ? 2 : (farther >> d) & 1 ? 2 : 0;
      const turn = heading < 0 || v === cell ? 0 : quarterTurns(heading, d);
      const busy = v !== cell && occupant[v] >= 0 ? 1 : 0;
      let h = Math.imul(mix ^ (mix >>> 13) ^ v, 0xc2b2ae35);
      h ^= h >>> 16;
      const key = step * 16384 + turn * 4096 + busy * 2048 + (h & 2047);
      // Insertion into the sorted prefix (at most 5 entries).
      let i = count++;
      while (i > 0 && keys[i - 1] > key) {
        keys[i] = keys[i - 1];
        candidates[base + i] = candidates[base + i - 1];
        i--;
      }
      keys[i] = key;
      candidates[base + i] = d + 1;
    }
    this.candidateCount[r] = count;
  }
}
