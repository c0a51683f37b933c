/**
 * Deadlocks as closed wait-for sets, livelocks, fleet gridlock, and queue time at stations.
 *
 * Wait-for graph (Holt, "Some Deadlock Properties of Computer Systems", ACM Computing
 * Surveys 4(3), 1972; Coffman, Elphick & Shoshani, "System Deadlocks", ACM Computing Surveys
 * 3(2), 1971): per tick, a robot that holds a goal, stands still and needs a cell held by
 * another robot waits on that robot. The engine does not know which cell a policy wanted
 * (policies write only where each robot will be), so the wish is read from the policy's
 * optional `wantedCells` channel (sim/policy.ts) when it fills it, and otherwise inferred:
 * the robot wants any neighbour one step closer to its goal (read from the goal's compact
 * distance field, sim/distance-field.ts, so no full table per goal is needed), and waits on
 * robots only when every such neighbour is taken at the next tick (if one is free, the robot
 * waits on its policy, not on a robot). A robot may wait on up to
 * four robots and can go on when any one of them moves (the OR model of the wait-for graph:
 * a deadlock is a knot, not merely a cycle; Holt 1972).
 *
 * Each tick every robot is one of: in service (handling, turning in place, or held back by
 * an execution delay: it goes on by itself), moving, free (standing with a way
 * open), blocked (waiting on robots), or idle and still (no task, not moving: it goes on
 * only when its policy moves it). Sinks through which a blocked robot can go on are robots
 * in service, moving or free. Blocked robots that reach such a sink through the graph are in
 * a queue: behind a robot in service at a station it is queue time at that station (the
 * station where the head of the chain is served), otherwise it is traffic. Blocked robots
 * that reach no sink wait only on each other and on idle robots that stand still: a closed
 * set. When one of them has stood in a closed set for `deadlockTicks`, the set is a
 * deadlock episode; its members are the closed set's robots, idle blockers included, and
 * robots that later join it by waiting on a member.
 *
 * Livelock: a robot holding a goal that made no progress (no phase change, no new closest
 * distance to its goal) for `deadlockTicks` while it kept moving in place: it moved in at
 * least a quarter of the ticks since its last progress, and within an area so small that it
 * must have come back to the same cells (the bounding box of its cells since then has at
 * most half as many cells as it made moves, so every cell was entered twice on average: a
 * livelock repeats states, a detour or a robot pushed along does not). It stands in no
 * closed set, and its goal served no robot in that time: a robot kept circling near a goal
 * that serves others (a reactive policy pushing a robot about at a busy induct) is queueing
 * for that station. Neighbouring livelocked robots form one episode.
 *
 * Gridlock: the fleet delivers nothing for `deadlockTicks` while released tasks are open
 * and some robot has no task. Its members are the robots without a task when it is found.
 *
 * Robot-ticks lost: for deadlock and livelock members holding a task, from the tick they
 * stalled (stood in the closed set; last progress for a livelock) until they progress again
 * or are cleared; idle members lose nothing (they had no work). For a gridlock, its
 * members' ticks from the fleet's stall to its end.
 *
 * Behind robots fixed for long: with charging or breakdowns (`onBehindFixed` set), blocked
 * robots that reach sinks only through robots broken down or charging on a charger (every
 * way on ends at such a robot) are counted: a line behind a robot that stands for minutes,
 * which is neither a station's queue nor a deadlock, and would otherwise be unexplained
 * waiting.
 *
 * Cost: O(robots) per evaluated tick (up to four neighbour checks per standing robot, a
 * reverse breadth-first pass over the wait edges only when some robot is blocked), typed
 * arrays sized once. Distances come from compact per-goal fields, never a full table per
 * robot, so thousands of live goals fit (sim/distance-field.ts).
 */
import type { DistanceTables } from './distance-table.ts';
import type { DistanceField, DistanceFields } from './distance-field.ts';
import { GoalProgress } from './goal-progress.ts';
import type { Layout } from './layout.ts';
import type { DeadlockEpisode, EpisodeKind } from './metrics.ts';
import { isHandling, type World } from './world.ts';

/**
 * The world's phases (Phase, sim/world.ts) as a const enum, so that the per-robot loops (here
 * and the engine's motion step) compare with numbers written into the code: an imported
 * binding is a getter under the TypeScript loader, and a module-level copy is still a load
 * per comparison. test/deadlock-detector.test.ts checks that `detectorPhases` equals Phase.
 */
export const enum PhaseCode {
  Idle = 0,
  ToPickup = 1,
  HandlingPickup = 2,
  ToDrop = 3,
  HandlingDrop = 4,
  ToReturn = 5,
  HandlingReturn = 6,
  ToCharger = 7,
  Charging = 8,
  WaitingForCharger = 9,
}
/** The detector's copy of the phases, for the test that it equals Phase. */
export const detectorPhases = {
  Idle: PhaseCode.Idle,
  ToPickup: PhaseCode.ToPickup,
  HandlingPickup: PhaseCode.HandlingPickup,
  ToDrop: PhaseCode.ToDrop,
  HandlingDrop: PhaseCode.HandlingDrop,
  ToReturn: PhaseCode.ToReturn,
  HandlingReturn: PhaseCode.HandlingReturn,
  ToCharger: PhaseCode.ToCharger,
  Charging: PhaseCode.Charging,
  WaitingForCharger: PhaseCode.WaitingForCharger,
} as const;
const handlingPhase = isHandling;

/**
 * Slots of a robot's block in the detector's packed per-robot state (`robotState`). A const
 * enum: the compiler writes the numbers into the code (a module-level constant would be a
 * load per access in the per-robot loop).
 */
const enum Slot {
  Stride = 10,
  LastCell = 0,
  Moves = 1,
  BoxMinX = 2,
  BoxMaxX = 3,
  BoxMinY = 4,
  BoxMaxY = 5,
  GoalSeen = 6,
  LastProgress = 7,
  /** Column and row of LastCell (valid while LastCell >= 0). */
  LastX = 8,
  LastY = 9,
}

/** What each robot did over the evaluated step (W: the same numbers, written into the code). */
const enum W {
  Handling = 0,
  Moving = 1,
  Free = 2,
  Blocked = 3,
  IdleStill = 4,
}
export const WaitStatus = {
  Handling: W.Handling,
  Moving: W.Moving,
  /** Holds a goal, stands still although a cell it wants is free (it waits on its policy). */
  Free: W.Free,
  /** Holds a goal, stands still, and every cell it wants is taken. */
  Blocked: W.Blocked,
  /** No task and not moving. */
  IdleStill: W.IdleStill,
} as const;

export interface DetectorEpisode extends DeadlockEpisode {
  /** Robots currently in the episode. */
  active: Set<number>;
}

export interface EvaluationResult {
  /**
   * Episodes found at this tick that the modelled operator may clear (deadlocks and
   * livelocks). The detector refills the same object at every evaluation: read it before the next.
   */
  clearable: number[];
}

export class DeadlockDetector {
  readonly status: Uint8Array;
  /**
   * Column and row of every cell, side by side, for robots that did not come by one step (a
   * moving robot's are followed in its state block).
   */
  private readonly cellXY: Int32Array;
  /** Station (index into the station list) whose queue the robot stands in, or -1. */
  readonly queueStation: Int32Array;
  readonly episodes: DetectorEpisode[] = [];

  private readonly robots: number;
  /**
   * The per-robot state the detector reads at every evaluation, one block of `Slot.Stride`
   * numbers per robot (Slot, above): the last cell seen with its column and row, moves and
   * bounding box of the cells stood on since the last progress (BoxMinX -1: not started), the
   * goal last seen and the tick of the last progress (GoalProgress keeps its own numbers in a
   * block per robot of its own: only moving robots read them). The detector runs right after
   * the policy's step has filled the caches with its own data: a robot's block (40 bytes) is
   * one or two lines to fetch, read in robot order, where an array per number is a line per
   * number.
   */
  private readonly robotState: Int32Array;
  /** New closest distance to the goal, followed step by step (sim/goal-progress.ts). */
  private readonly goalProgress: GoalProgress;
  private readonly fields: DistanceFields;
  /** Each robot's field for the goal it last needed one for. */
  private readonly fieldOf: (DistanceField | null)[];
  private readonly fieldGoal: Int32Array;
  private readonly stuckSince: Int32Array;
  /**
   * The episode each robot is in (-1: none). Its own array, not a slot of `robotState`: the
   * passes over every robot while some episode is open (membersLeave) read only this.
   */
  private readonly episodeOf: Int32Array;
  private readonly memberSince: Int32Array;
  /** Wait edges: up to four robots per blocked robot. */
  private readonly waitsOn: Int32Array;
  private readonly waitCount: Uint8Array;
  /** Reversed wait edges of the last classification: first edge per robot waited on (-1: none), then the waiting robot and the next edge. */
  private readonly predecessorHead: Int32Array;
  private readonly edgeRobot: Int32Array;
  private readonly edgeNext: Int32Array;
  /** Robots waited on at the last classification. */
  private readonly targets: Int32Array;
  private targetCount = 0;
  /** Robots standing with a goal at this evaluation, blocked robots now and at the last evaluation (ascending). */
  private readonly standing: Int32Array;
  private readonly blockedList: Int32Array;
  private readonly previousBlocked: Int32Array;
  private previousBlockedCount = 0;
  private readonly reached: Uint8Array;
  private readonly bfs: Int32Array;
  /**
   * Per cell, the last robot found to take it at tick + 1 in an evaluation that wrote the
   * table. An entry is current when that robot's `nextOf` is still the cell: every robot
   * writes its next cell in such an evaluation, in robot order, so a cell some robot takes
   * names the highest-numbered of them, and an entry left from an earlier evaluation names a
   * robot that now goes elsewhere. No stamp, so one 4-byte write per robot and tick.
   */
  private readonly nextCell: Int32Array;
  /** The cell each robot takes at tick + 1 (its own when fixed). */
  private readonly nextOf: Int32Array;
  /** Cell offsets of the directions of `Layout.openDirections` (north, east, south, west). */
  private readonly dirOffset: Int32Array;
  private readonly queuedNow: Int32Array;
  private touchedStations: number[] = [];
  /** The other of two lists that take turns as `touchedStations` (no list per evaluation). */
  private touchedSpare: number[] = [];
  /** Per cell: the last tick a robot was in service there (handling ended or still going on). */
  private readonly lastServed: Int32Array;
  /** Robots that made no progress for deadlockTicks at this evaluation (a prefix of the array). */
  private readonly livelockCandidates: Int32Array;
  private readonly result: EvaluationResult = { clearable: [] };
  /** Robots stuck (in a closed set) at the last evaluation, and robots in an episode now. */
  private stuckCount = 0;
  private members = 0;
  private gridlockSince = -1;
  private gridlockEpisode = -1;
  /**
   * Receives the number of blocked robots whose every way on ends at a robot fixed for long
   * (broken down, charging) whenever it may have changed; null: not counted (no upkeep).
   */
  onBehindFixed: ((tick: number, robots: number) => void) | null = null;
  private behindFixedNow = 0;
  private reachedElse = new Uint8Array(0);

  constructor(
    private readonly layout: Layout,
    distances: DistanceTables,
    robots: number,
    private readonly deadlockTicks: number,
    /** Station index per cell, or -1. */
    private readonly stationOf: Int32Array,
    stationCount: number,
    /** Receives the number of robots queued at a station whenever it may have changed. */
    private readonly onQueue: (station: number, tick: number, robots: number) => void = () => {},
  ) {
    this.robots = robots;
    this.status = new Uint8Array(robots);
    this.cellXY = new Int32Array(layout.cellCount * 2);
    for (let c = 0; c < layout.cellCount; c++) {
      this.cellXY[c * 2] = c % layout.width;
      this.cellXY[c * 2 + 1] = Math.floor(c / layout.width);
    }
    this.queueStation = new Int32Array(robots).fill(-1);
    this.robotState = new Int32Array(robots * Slot.Stride);
    for (let r = 0; r < robots; r++) {
      this.robotState[r * Slot.Stride + Slot.GoalSeen] = -2;
      this.robotState[r * Slot.Stride + Slot.LastCell] = -1;
      this.robotState[r * Slot.Stride + Slot.BoxMinX] = -1;
    }
    this.episodeOf = new Int32Array(robots).fill(-1);
    this.fields = distances.fields;
    this.goalProgress = new GoalProgress(robots, this.fields);
    this.fieldOf = new Array<DistanceField | null>(robots).fill(null);
    this.fieldGoal = new Int32Array(robots).fill(-1);
    this.stuckSince = new Int32Array(robots).fill(-1);
    this.memberSince = new Int32Array(robots);
    this.waitsOn = new Int32Array(robots * 4);
    this.waitCount = new Uint8Array(robots);
    this.predecessorHead = new Int32Array(robots).fill(-1);
    this.edgeRobot = new Int32Array(robots * 4);
    this.edgeNext = new Int32Array(robots * 4);
    this.targets = new Int32Array(robots);
    this.standing = new Int32Array(robots);
    this.blockedList = new Int32Array(robots);
    this.previousBlocked = new Int32Array(robots);
    this.reached = new Uint8Array(robots);
    this.bfs = new Int32Array(robots);
    this.nextCell = new Int32Array(layout.cellCount).fill(-1);
    this.nextOf = new Int32Array(robots);
    this.dirOffset = Int32Array.of(-layout.width, 1, layout.width, -1);
    this.livelockCandidates = new Int32Array(robots);
    this.queuedNow = new Int32Array(stationCount);
    this.lastServed = new Int32Array(layout.cellCount).fill(-1);
  }

  /** The engine: a handling at `cell` ended at `tick`. */
  served(cell: number, tick: number): void {
    this.lastServed[cell] = tick;
  }

  /** The episode robot r is in (deadlock or livelock), or -1. */
  episodeOfRobot(robot: number): number {
    return this.episodeOf[robot];
  }

  /**
   * The robot made progress outside the detector's view (a breakdown or its repair, a charge
   * begun or done: sim/upkeep.ts): its stall clock restarts.
   */
  restart(robot: number, tick: number): void {
    this.progress(robot, tick);
  }

  /** The operator moved the robot: it leaves its episode, cleared, and starts afresh. */
  relocated(robot: number, tick: number): void {
    if (this.episodeOf[robot] >= 0) this.leave(robot, tick, true);
    this.resetProgress(robot, tick);
    this.robotState[robot * Slot.Stride + Slot.LastCell] = -1;
    this.stuckSince[robot] = -1;
  }

  /**
   * Evaluates the step [tick, tick + 1): `world` holds positions and phases at `tick`,
   * `next[r]` the cell robot r occupies at tick + 1 (its current cell when it stays or is
   * handling). `wanted[r]`, when the policy fills it, is the cell r wanted to enter next
   * (its own cell: it wants to stay; -1: no wish given, infer it).
   */
  evaluate(tick: number, world: World, next: Int32Array, wanted: Int32Array | null, delivered: boolean): EvaluationResult {
    const robots = this.robots;
    const cells = world.robotCell;
    const phases = world.robotPhase;
    const robotTask = world.robotTask;
    const broken = world.robotBroken;
    const stopPending = world.robotStopPending;
    const turnUntil = world.robotTurnUntil;
    const heldUntil = world.robotHeldUntil;
    const now = world.currentTick;
    const taskPickup = world.taskPickup;
    const taskDrop = world.taskDrop;
    const taskReturn = world.taskReturn;
    const robotCharger = world.robotCharger;
    const status = this.status;
    const state = this.robotState;
    const episodeOf = this.episodeOf;
    const cellXY = this.cellXY;
    const width = this.layout.width;
    const waitCount = this.waitCount;
    const goalProgress = this.goalProgress;
    const deadlockTicks = this.deadlockTicks;
    const nextOf = this.nextOf;
    // Turns and held-back moves exist only when the scenario has them (their arrays stay -1 otherwise).
    const turning = world.turnTicks > 0;
    const holding = world.movesMayBeHeld;
    const standing = this.standing;
    let standingCount = 0;
    let idle = 0;
    const candidates = this.livelockCandidates;
    let candidateCount = 0;

    // One pass over the robots, reading the world's arrays (world.isFixed, goalOf and
    // mayTakeTask inlined: this runs per robot per tick): the cell each takes at tick + 1,
    // progress since the last evaluation, and the status of every robot but those that
    // stand with a goal, whose wishes are looked at once every cell of tick + 1 is known.
    // A robot moving or in service costs its progress watch only; fields are looked at only
    // for robots that moved (progress) or stand with a goal (their wishes).
    for (let r = 0; r < robots; r++) {
      const cell = cells[r];
      const phase = phases[r];
      const base = r * Slot.Stride;
      const fixed =
        phase === PhaseCode.HandlingPickup ||
        phase === PhaseCode.HandlingDrop ||
        phase === PhaseCode.HandlingReturn ||
        phase === PhaseCode.Charging ||
        broken[r] === 1 ||
        (turning && turnUntil[r] > now) ||
        (holding && heldUntil[r] > now);
      const to = fixed ? cell : next[r];
      nextOf[r] = to;

      const before = state[base + Slot.LastCell];
      const moved = before >= 0 && before !== cell;
      // The cell's column and row: a step changes one of them by one (a difference of one
      // row's width is the same column a row down), anything else is looked up.
      let x = state[base + Slot.LastX];
      let y = state[base + Slot.LastY];
      if (before !== cell) {
        const delta = cell - before;
        if (before < 0) {
          x = cellXY[cell * 2];
          y = cellXY[cell * 2 + 1];
        } else if (delta === width) y++;
        else if (delta === -width) y--;
        else if (delta === 1 && x + 1 < width) x++;
        else if (delta === -1 && x > 0) x--;
        else {
          x = cellXY[cell * 2];
          y = cellXY[cell * 2 + 1];
        }
        state[base + Slot.LastCell] = cell;
        state[base + Slot.LastX] = x;
        state[base + Slot.LastY] = y;
      }
      // The box of cells since the last progress changes only when the robot moved (or starts afresh).
      if (moved || state[base + Slot.BoxMinX] < 0) {
        if (moved) state[base + Slot.Moves]++;
        if (state[base + Slot.BoxMinX] < 0) {
          state[base + Slot.BoxMinX] = state[base + Slot.BoxMaxX] = x;
          state[base + Slot.BoxMinY] = state[base + Slot.BoxMaxY] = y;
        } else {
          if (x < state[base + Slot.BoxMinX]) state[base + Slot.BoxMinX] = x;
          else if (x > state[base + Slot.BoxMaxX]) state[base + Slot.BoxMaxX] = x;
          if (y < state[base + Slot.BoxMinY]) state[base + Slot.BoxMinY] = y;
          else if (y > state[base + Slot.BoxMaxY]) state[base + Slot.BoxMaxY] = y;
        }
      }
      const goal =
        phase === PhaseCode.ToPickup
          ? taskPickup[robotTask[r]]
          : phase === PhaseCode.ToDrop
            ? taskDrop[robotTask[r]]
            : phase === PhaseCode.ToReturn
              ? taskReturn[robotTask[r]]
              : phase === PhaseCode.ToCharger
                ? robotCharger[r]
                : -1;
      if (goal !== state[base + Slot.GoalSeen]) {
        state[base + Slot.GoalSeen] = goal;
        this.progress(r, tick);
        if (goal >= 0) goalProgress.observe(r, goal, cell, x, y); // starts following the new goal
      } else if (goal < 0 || broken[r] === 1) {
        // No goal (idle, handling, charging) or broken down: nothing to progress towards; keep the clock fresh.
        state[base + Slot.LastProgress] = tick;
        state[base + Slot.Moves] = 0;
      } else if (moved && goalProgress.observe(r, goal, cell, x, y)) {
        // this.progress(r, tick), written out: most moving robots progress at every step.
        state[base + Slot.LastProgress] = tick;
        state[base + Slot.Moves] = 0;
        state[base + Slot.BoxMinX] = -1;
        if (episodeOf[r] >= 0) this.leave(r, tick, false);
      }

      waitCount[r] = 0;
      if (phase === PhaseCode.Idle && robotTask[r] < 0 && broken[r] === 0 && stopPending[r] === 0) idle++;
      // Handling, charging, broken down, turning or held back by a delay: in service, a robot others queue behind.
      if (fixed) {
        status[r] = W.Handling;
        continue;
      }
      if (goal >= 0 && episodeOf[r] < 0 && tick - state[base + Slot.LastProgress] >= deadlockTicks) candidates[candidateCount++] = r;
      if (to !== cell) {
        status[r] = W.Moving;
        continue;
      }
      if (phase === PhaseCode.Idle || goal < 0) {
        // Idle, or queued for a charger: it goes on only when its policy moves it.
        status[r] = W.IdleStill;
        continue;
      }
      standing[standingCount++] = r;
    }

    // Robots standing with a goal: free (a cell they want is free at tick + 1) or blocked
    // (waiting on the robots that hold every such cell).
    // Neighbours from one byte of open directions per cell and the four offsets (the layout's
    // 16-byte neighbour entries are a cache line per four cells on a big hall).
    const openDirs = this.layout.openDirections;
    const offsets = this.dirOffset;
    const waitsOn = this.waitsOn;
    const blockedList = this.blockedList;
    let blocked = 0;
    // Who takes a cell at tick + 1: with a few robots standing, a scan of the robots' next
    // cells for each cell they want (no write per robot into a per-cell table, whose lines
    // the policy's step has evicted); with more, the per-cell table.
    const useTable = standingCount > 4;
    if (useTable) {
      const nextCell = this.nextCell;
      for (let r = 0; r < robots; r++) nextCell[nextOf[r]] = r;
    }
    for (let i = 0; i < standingCount; i++) {
      const r = standing[i];
      const cell = cells[r];
      const wish = wanted === null ? -1 : wanted[r];
      if (wish >= 0) {
        const owner = wish === cell ? -1 : this.ownerAt(wish, useTable);
        if (owner < 0 || owner === r) status[r] = W.Free;
        else {
          status[r] = W.Blocked;
          waitsOn[r * 4] = owner;
          waitCount[r] = 1;
          blockedList[blocked++] = r;
        }
        continue;
      }
      // Neighbours one step closer: clear bits of the field's ranking (-1: the goal is cut off).
      const goal = state[r * Slot.Stride + Slot.GoalSeen];
      let field = this.fieldGoal[r] === goal ? this.fieldOf[r] : null;
      let rank = field === null ? -2 : field.rankAround(cell);
      if (rank === -2) {
        field = this.fields.to(goal, cell);
        this.fieldOf[r] = field;
        this.fieldGoal[r] = goal;
        rank = field.rankAround(cell);
      }
      let closer = 0;
      let free = false;
      let count = 0;
      const open = rank >= 0 ? openDirs[cell] & ~rank : 0;
      for (let d = 0; d < 4; d++) {
        if (((open >> d) & 1) === 0) continue;
        const n = cell + offsets[d];
        closer++;
        const owner = this.ownerAt(n, useTable);
        if (owner < 0 || owner === r) {
          free = true;
          break;
        }
        let seen = false;
        for (let k = 0; k < count; k++) if (waitsOn[r * 4 + k] === owner) seen = true;
        if (!seen) waitsOn[r * 4 + count++] = owner;
      }
      if (free || closer === 0) status[r] = W.Free;
      else {
        status[r] = W.Blocked;
        waitCount[r] = count;
        blockedList[blocked++] = r;
      }
    }

    if (blocked > 0) this.classifyBlocked(tick, world, blocked);
    else this.noneBlocked(tick);

    // One result object, refilled at every evaluation (the engine reads it at once).
    const result = this.result;
    const clearable = result.clearable;
    // Setting an array's length calls into the runtime: only when there is something to drop.
    if (clearable.length > 0) clearable.length = 0;
    if (this.members > 0) this.membersLeave(tick, world);
    // Called at every evaluation, though they return at once with nobody stuck and no
    // candidate: a call site first reached late in a run (the first robot stuck) would cost
    // this whole function a deoptimisation and a second optimising compile.
    this.findDeadlocks(tick, world, clearable);
    this.findLivelocks(tick, world, clearable, candidateCount);
    this.findGridlock(tick, world, delivered, idle);
    return result;
  }

  /** The robot that takes `cell` at tick + 1 (the highest-numbered if several do), or -1. */
  private ownerAt(cell: number, useTable: boolean): number {
    const nextOf = this.nextOf;
    if (useTable) {
      const owner = this.nextCell[cell];
      return owner >= 0 && nextOf[owner] === cell ? owner : -1;
    }
    for (let r = this.robots - 1; r >= 0; r--) if (nextOf[r] === cell) return r;
    return -1;
  }

  /**
   * Some robot is blocked: reverse the wait edges, search back from the sinks (robots in
   * service first, so a chain that reaches one is that station's queue; then moving and free
   * robots: traffic), charge queue time to stations, and mark the rest stuck. Only the
   * blocked robots (`blockedList`, ascending) and the robots they wait on are visited: a
   * sink nobody waits on adds nothing to either search.
   */
  private classifyBlocked(tick: number, world: World, blocked: number): void {
    const status = this.status;
    const cells = world.robotCell;
    const blockedList = this.blockedList;
    const waitsOn = this.waitsOn;
    const waitCount = this.waitCount;
    const reached = this.reached;
    const queueStation = this.queueStation;
    this.forgetBlocked();

    // Reversed edges: per robot waited on, the robots waiting on it in ascending order
    // (linked lists filled from the highest waiter down), and the robots waited on.
    const head = this.predecessorHead;
    const edgeRobot = this.edgeRobot;
    const edgeNext = this.edgeNext;
    const targets = this.targets;
    let targetCount = 0;
    let edges = 0;
    for (let i = blocked - 1; i >= 0; i--) {
      const r = blockedList[i];
      for (let k = 0; k < waitCount[r]; k++) {
        const x = waitsOn[r * 4 + k];
        if (head[x] < 0) targets[targetCount++] = x;
        edgeRobot[edges] = r;
        edgeNext[edges] = head[x];
        head[x] = edges++;
      }
    }
    this.targetCount = targetCount;
    // Sinks are searched from in robot order, as a pass over every robot would (insertion
    // sort for a handful of robots, with no view allocated per call; the library sort for more).
    if (targetCount > 16) targets.subarray(0, targetCount).sort();
    else {
      for (let i = 1; i < targetCount; i++) {
        const x = targets[i];
        let j = i - 1;
        while (j >= 0 && targets[j] > x) {
          targets[j + 1] = targets[j];
          j--;
        }
        targets[j + 1] = x;
      }
    }
    for (let i = 0; i < blocked; i++) reached[blockedList[i]] = 0;

    const queue = this.bfs;
    for (let pass = 0; pass < 2; pass++) {
      let first = 0;
      let tail = 0;
      for (let i = 0; i < targetCount; i++) {
        const r = targets[i];
        const s = status[r];
        const sink = pass === 0 ? s === W.Handling : s === W.Moving || s === W.Free;
        if (!sink) continue;
        queueStation[r] = pass === 0 ? this.stationOf[cells[r]] : -1;
        queue[tail++] = r;
      }
      while (first < tail) {
        const x = queue[first++];
        for (let e = head[x]; e >= 0; e = edgeNext[e]) {
          const p = edgeRobot[e];
          if (reached[p] || status[p] !== W.Blocked) continue;
          reached[p] = 1;
          queueStation[p] = queueStation[x];
          queue[tail++] = p;
        }
      }
    }
    // Only blocked robots keep a station mark.
    for (let i = 0; i < targetCount; i++) if (status[targets[i]] !== W.Blocked) queueStation[targets[i]] = -1;
    for (let i = 0; i < blocked; i++) if (!reached[blockedList[i]]) queueStation[blockedList[i]] = -1;

    // Queue time per station (robots queued behind the robot in service there).
    for (const s of this.touchedStations) this.queuedNow[s] = 0;
    const touched = this.touchedSpare;
    if (touched.length > 0) touched.length = 0;
    for (let i = 0; i < blocked; i++) {
      const s = queueStation[blockedList[i]];
      if (s < 0) continue;
      if (this.queuedNow[s] === 0) touched.push(s);
      this.queuedNow[s]++;
    }
    for (const s of this.touchedStations) if (this.queuedNow[s] === 0) this.onQueue(s, tick, 0);
    for (const s of touched) this.onQueue(s, tick, this.queuedNow[s]);
    this.touchedSpare = this.touchedStations;
    this.touchedStations = touched;

    if (this.onBehindFixed !== null) this.countBehindFixed(tick, world, blocked);

    // Stuck robots: blocked and reaching no sink. Only robots blocked at the last
    // evaluation can have been stuck.
    const stuckSince = this.stuckSince;
    const previous = this.previousBlocked;
    for (let i = 0; i < this.previousBlockedCount; i++) if (status[previous[i]] !== W.Blocked) stuckSince[previous[i]] = -1;
    let stuckCount = 0;
    for (let i = 0; i < blocked; i++) {
      const r = blockedList[i];
      if (reached[r]) stuckSince[r] = -1;
      else {
        stuckCount++;
        if (stuckSince[r] < 0) stuckSince[r] = tick;
      }
    }
    this.stuckCount = stuckCount;
    previous.set(blockedList.subarray(0, blocked));
    this.previousBlockedCount = blocked;
  }

  /** Clears the reversed edges and station marks of the last classification. */
  private forgetBlocked(): void {
    const head = this.predecessorHead;
    for (let i = 0; i < this.targetCount; i++) head[this.targets[i]] = -1;
    this.targetCount = 0;
    const queueStation = this.queueStation;
    for (let i = 0; i < this.previousBlockedCount; i++) queueStation[this.previousBlocked[i]] = -1;
  }

  /**
   * Blocked robots that reach a sink (`reached`) but none through a sink other than a robot
   * fixed for long: a search back from the other sinks marks who can go on without them.
   * Sinks nobody waits on reach nobody, so only the robots waited on are searched from.
   */
  private countBehindFixed(tick: number, world: World, blocked: number): void {
    const status = this.status;
    const targets = this.targets;
    const targetCount = this.targetCount;
    const longFixed = (r: number) => world.robotBroken[r] === 1 || world.robotPhase[r] === PhaseCode.Charging;
    let any = false;
    for (let i = 0; i < targetCount && !any; i++) if (status[targets[i]] === W.Handling && longFixed(targets[i])) any = true;
    let count = 0;
    if (any) {
      if (this.reachedElse.length < this.robots) this.reachedElse = new Uint8Array(this.robots);
      const other = this.reachedElse;
      const blockedList = this.blockedList;
      for (let i = 0; i < blocked; i++) other[blockedList[i]] = 0;
      const queue = this.bfs;
      let first = 0;
      let tail = 0;
      for (let i = 0; i < targetCount; i++) {
        const r = targets[i];
        const s = status[r];
        if ((s === W.Handling && !longFixed(r)) || s === W.Moving || s === W.Free) queue[tail++] = r;
      }
      const head = this.predecessorHead;
      while (first < tail) {
        const x = queue[first++];
        for (let e = head[x]; e >= 0; e = this.edgeNext[e]) {
          const p = this.edgeRobot[e];
          if (other[p] || status[p] !== W.Blocked) continue;
          other[p] = 1;
          queue[tail++] = p;
        }
      }
      for (let i = 0; i < blocked; i++) {
        const r = blockedList[i];
        if (this.reached[r] && !other[r]) count++;
      }
    }
    if (count !== this.behindFixedNow) {
      this.behindFixedNow = count;
      this.onBehindFixed!(tick, count);
    }
  }

  /** Nobody is blocked: no queue, nobody stuck. */
  private noneBlocked(tick: number): void {
    if (this.behindFixedNow !== 0) {
      this.behindFixedNow = 0;
      this.onBehindFixed?.(tick, 0);
    }
    for (const s of this.touchedStations) {
      this.queuedNow[s] = 0;
      this.onQueue(s, tick, 0);
    }
    if (this.touchedStations.length > 0) this.touchedStations.length = 0;
    if (this.stuckCount > 0) {
      this.stuckSince.fill(-1);
      this.stuckCount = 0;
    }
    this.forgetBlocked();
    this.previousBlockedCount = 0;
  }

  /** Earliest tick at which a new episode could be found if nothing moves, or Infinity. */
  nextCheckTick(world: World): number {
    let earliest = Infinity;
    for (let r = 0; r < this.robots; r++) {
      if (this.episodeOf[r] >= 0) continue;
      if (this.stuckSince[r] >= 0) earliest = Math.min(earliest, this.stuckSince[r] + this.deadlockTicks);
      else if (world.goalOf(r) >= 0) earliest = Math.min(earliest, this.robotState[r * Slot.Stride + Slot.LastProgress] + this.deadlockTicks);
    }
    if (this.gridlockSince >= 0 && this.gridlockEpisode < 0) earliest = Math.min(earliest, this.gridlockSince + this.deadlockTicks);
    return earliest;
  }

  /** Robots currently in an episode. */
  activeMembers(episode: number): number[] {
    return [...this.episodes[episode].active].sort((a, b) => a - b);
  }

  /** Closes every open episode at the end of the run; returns them without the bookkeeping. */
  finish(endTick: number): DeadlockEpisode[] {
    for (let r = 0; r < this.robots; r++) if (this.episodeOf[r] >= 0) this.leave(r, endTick, false);
    if (this.gridlockEpisode >= 0) this.endGridlock(endTick);
    return this.episodes.map(({ active: _active, ...plain }) => ({ ...plain, endTick: plain.endTick < 0 ? endTick : plain.endTick }));
  }

  // Internals ---------------------------------------------------------------------------

  private resetProgress(robot: number, tick: number): void {
    this.robotState[robot * Slot.Stride + Slot.LastProgress] = tick;
    this.robotState[robot * Slot.Stride + Slot.Moves] = 0;
    this.robotState[robot * Slot.Stride + Slot.BoxMinX] = -1;
    this.goalProgress.reset(robot);
    this.robotState[robot * Slot.Stride + Slot.GoalSeen] = -2;
  }

  private progress(robot: number, tick: number): void {
    this.robotState[robot * Slot.Stride + Slot.LastProgress] = tick;
    this.robotState[robot * Slot.Stride + Slot.Moves] = 0;
    this.robotState[robot * Slot.Stride + Slot.BoxMinX] = -1;
    if (this.episodeOf[robot] >= 0) this.leave(robot, tick, false);
  }

  private leave(robot: number, tick: number, cleared: boolean): void {
    const episode = this.episodes[this.episodeOf[robot]];
    this.episodeOf[robot] = -1;
    this.members--;
    episode.active.delete(robot);
    if (this.memberSince[robot] >= 0) episode.lostTicks += tick - this.memberSince[robot];
    if (cleared) episode.cleared = true;
    // Idle blockers stay only as long as some member holding a task does.
    let holders = 0;
    for (const r of episode.active) if (this.memberSince[r] >= 0) holders++;
    if (holders === 0) {
      for (const r of episode.active) this.episodeOf[r] = -1;
      this.members -= episode.active.size;
      episode.active.clear();
      episode.endTick = tick;
    }
  }

  private join(episodeId: number, robot: number, since: number): void {
    const episode = this.episodes[episodeId];
    this.episodeOf[robot] = episodeId;
    this.members++;
    this.memberSince[robot] = since;
    episode.active.add(robot);
    episode.members.push(robot);
    episode.robots++;
    if (since >= 0) episode.stallTick = Math.min(episode.stallTick, since);
  }

  private open(kind: EpisodeKind, tick: number, stallTick: number): number {
    this.episodes.push({ kind, stallTick, detectTick: tick, endTick: -1, robots: 0, members: [], lostTicks: 0, cleared: false, active: new Set() });
    return this.episodes.length - 1;
  }

  /** Idle members that moved or got a task leave their deadlock. */
  private membersLeave(tick: number, world: World): void {
    for (let r = 0; r < this.robots; r++) {
      if (this.episodeOf[r] < 0 || this.memberSince[r] >= 0) continue;
      if (this.status[r] !== W.IdleStill || world.robotPhase[r] !== PhaseCode.Idle) this.leave(r, tick, false);
    }
  }

  private findDeadlocks(tick: number, world: World, clearable: number[]): void {
    if (this.stuckCount === 0) return;
    const robots = this.robots;
    const stuck = (r: number) => this.stuckSince[r] >= 0;
    // New closed sets that have stood for deadlockTicks.
    for (let r = 0; r < robots; r++) {
      if (!stuck(r) || this.episodeOf[r] >= 0 || tick - this.stuckSince[r] < this.deadlockTicks) continue;
      if (this.waitsOnDeadlock(r) >= 0) continue; // joins below
      const id = this.open('deadlock', tick, this.stuckSince[r]);
      clearable.push(id);
      // The closed set: stuck robots and idle blockers connected to r by wait edges.
      const component = this.bfs;
      let head = 0;
      let tail = 0;
      component[tail++] = r;
      this.join(id, r, this.stuckSince[r]);
      while (head < tail) {
        const x = component[head++];
        for (let k = 0; k < this.waitCount[x]; k++) {
          const y = this.waitsOn[x * 4 + k];
          if (this.episodeOf[y] >= 0) continue;
          if (stuck(y)) this.join(id, y, this.stuckSince[y]);
          else if (this.status[y] === W.IdleStill && world.robotPhase[y] === PhaseCode.Idle) this.join(id, y, -1);
          else continue;
          component[tail++] = y;
        }
        for (let e = this.predecessorHead[x]; e >= 0; e = this.edgeNext[e]) {
          const p = this.edgeRobot[e];
          if (this.episodeOf[p] >= 0 || !stuck(p)) continue;
          this.join(id, p, this.stuckSince[p]);
          component[tail++] = p;
        }
      }
    }
    // Stuck robots that wait on a deadlock's member are in it too (repeat for chains).
    let changed = true;
    while (changed) {
      changed = false;
      for (let r = 0; r < robots; r++) {
        if (!stuck(r) || this.episodeOf[r] >= 0) continue;
        const id = this.waitsOnDeadlock(r);
        if (id < 0) continue;
        this.join(id, r, this.stuckSince[r]);
        changed = true;
      }
    }
  }

  /** The deadlock episode of a robot r waits on, or -1. */
  private waitsOnDeadlock(r: number): number {
    for (let k = 0; k < this.waitCount[r]; k++) {
      const id = this.episodeOf[this.waitsOn[r * 4 + k]];
      if (id >= 0 && this.episodes[id].kind === 'deadlock' && this.episodes[id].endTick < 0) return id;
    }
    return -1;
  }

  private findLivelocks(tick: number, world: World, clearable: number[], candidates: number): void {
    const neighbors = this.layout.neighbors;
    for (let i = 0; i < candidates; i++) {
      const r = this.livelockCandidates[i];
      if (this.episodeOf[r] >= 0 || this.stuckSince[r] >= 0 || world.goalOf(r) < 0) continue;
      const since = this.robotState[r * Slot.Stride + Slot.LastProgress];
      const elapsed = tick - since;
      const moves = this.robotState[r * Slot.Stride + Slot.Moves];
      if (elapsed < this.deadlockTicks || moves * 4 < elapsed) continue;
      // Moving in place: at least two moves per cell of the area it kept to.
      const area = (this.robotState[r * Slot.Stride + Slot.BoxMaxX] - this.robotState[r * Slot.Stride + Slot.BoxMinX] + 1) * (this.robotState[r * Slot.Stride + Slot.BoxMaxY] - this.robotState[r * Slot.Stride + Slot.BoxMinY] + 1);
      if (this.robotState[r * Slot.Stride + Slot.BoxMinX] < 0 || 2 * area > moves) continue;
      // A goal that served a robot since (or serves one now) is a busy station, not a livelock.
      const goal = world.goalOf(r);
      const atGoal = world.occupant[goal];
      if (this.lastServed[goal] >= since || (atGoal >= 0 && handlingPhase(world.robotPhase[atGoal]))) continue;
      // Join a neighbouring livelock, else start one.
      let id = -1;
      const cell = world.robotCell[r];
      for (let d = 0; d < 4 && id < 0; d++) {
        const n = neighbors[cell * 4 + d];
        if (n < 0) continue;
        const other = world.occupant[n];
        if (other < 0) continue;
        const e = this.episodeOf[other];
        if (e >= 0 && this.episodes[e].kind === 'livelock') id = e;
      }
      if (id < 0) {
        id = this.open('livelock', tick, since);
        clearable.push(id);
      }
      this.join(id, r, since);
    }
  }

  private findGridlock(tick: number, world: World, delivered: boolean, idle: number): void {
    const condition = world.openTasks.length > 0 && idle > 0;
    if (!condition || delivered) {
      if (this.gridlockEpisode >= 0) this.endGridlock(tick);
      this.gridlockSince = condition ? tick : -1;
      return;
    }
    if (this.gridlockSince < 0) this.gridlockSince = tick;
    if (this.gridlockEpisode >= 0 || tick - this.gridlockSince < this.deadlockTicks) return;
    const id = this.open('gridlock', tick, this.gridlockSince);
    const episode = this.episodes[id];
    for (let r = 0; r < this.robots; r++) {
      if (world.robotPhase[r] !== PhaseCode.Idle) continue;
      episode.members.push(r);
      episode.active.add(r);
    }
    episode.robots = episode.members.length;
    this.gridlockEpisode = id;
  }

  private endGridlock(tick: number): void {
    const episode = this.episodes[this.gridlockEpisode];
    episode.endTick = tick;
    episode.lostTicks = episode.robots * (tick - episode.stallTick);
    episode.active.clear();
    this.gridlockEpisode = -1;
  }
}
