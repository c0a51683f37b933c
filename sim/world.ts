/**
 * The state policies read: robots (cell, task, phase), tasks (endpoints, handling ticks,
 * state) and the open-task list. Policies treat it as read-only and change it only through
 * `assign` and `unassign`; the engine moves robots and advances phases. Parallel typed
 * arrays throughout; task arrays grow by doubling and their slots are reused after delivery.
 */
import type { Layout } from './layout.ts';
import { RunError } from './errors.ts';

/** A robot's phase in its task's life cycle. */
export const Phase = {
  Idle: 0,
  ToPickup: 1,
  HandlingPickup: 2,
  ToDrop: 3,
  HandlingDrop: 4,
  ToReturn: 5,
  HandlingReturn: 6,
  /** Battery below chargeBelow, driving to the charger it was given (`world.goalOf`). */
  ToCharger: 7,
  /** On its charger until charged to chargeUpTo; cannot move. */
  Charging: 8,
  /** Needs a charge, every charger taken: rests like an idle robot, takes no task. */
  WaitingForCharger: 9,
} as const;
export type Phase = (typeof Phase)[keyof typeof Phase];

export const TaskState = {
  /** Released, waiting for a robot (in the open list). */
  Open: 0,
  /** Released, but its shelf is away serving another task (round trips only). */
  Held: 1,
  Assigned: 2,
  PickedUp: 3,
  /** Drop handling done; a round-trip task stays live while its robot returns the shelf. */
  Delivered: 4,
  /** An unused slot: the task was retired (delivered and, for round trips, its shelf returned). */
  Free: 5,
} as const;
const stateCount = 6;

export function isHandling(phase: number): boolean {
  return phase === Phase.HandlingPickup || phase === Phase.HandlingDrop || phase === Phase.HandlingReturn;
}

/** True while the robot carries a load (parcel or shelf). */
export function isLoaded(phase: number): boolean {
  return phase >= Phase.ToDrop && phase <= Phase.HandlingReturn;
}

/** True while the robot heads for, waits for, or sits on a charger. */
export function isChargingPhase(phase: number): boolean {
  return phase === Phase.ToCharger || phase === Phase.Charging || phase === Phase.WaitingForCharger;
}

/** Tasks counted by the state each live slot holds, plus the tasks already retired. */
export interface TaskStateCounts {
  open: number;
  held: number;
  assigned: number;
  pickedUp: number;
  /** Delivered tasks still live (round trips returning their shelf) plus retired ones. */
  delivered: number;
}

/**
 * Task ids are slots. A task's slot is freed when it is retired (delivered, and for a round
 * trip its shelf set down again) and reused by a later release, so memory follows the tasks
 * in the system, not the length of the run. Policies must not keep a task id past its
 * delivery; `taskSerial` numbers releases uniquely (release order) for tie-breaks.
 */
export class World {
  readonly robotCount: number;
  readonly robotCell: Int32Array;
  readonly robotTask: Int32Array;
  readonly robotPhase: Uint8Array;
  /** Tick at which the current handling ends (valid while handling). */
  readonly robotHandlingUntil: Int32Array;
  /** Robot standing on each cell, or -1. */
  readonly occupant: Int32Array;
  /** Charger cell given to each robot (ToCharger, Charging), or -1. */
  readonly robotCharger: Int32Array;
  /** 1 while the robot is broken down: it stands where it failed and blocks its cell. */
  readonly robotBroken: Uint8Array;
  /**
   * 1 while a breakdown is due but the policy cannot stop the robot yet (a planned policy
   * whose reserved path has not ended, `Policy.canStop`): give it no new work.
   */
  readonly robotStopPending: Uint8Array;
  /**
   * Heading per robot (sim/headings.ts: N, E, S, W as the layout's neighbour order), the
   * heading being turned to while a turn lasts. Kept only when `turnTicks` > 0.
   */
  readonly robotHeading: Uint8Array;
  /** Tick at which the robot's latest turn ends: it turns while the current tick is earlier, and may move from that tick to the next. Set only when `turnTicks` > 0 (-1 otherwise; hot loops skip it then). */
  readonly robotTurnUntil: Int32Array;
  /** Tick until which a held-back move (faults.delays) keeps the robot on its cell; it may move from that tick to the next. Set only when `movesMayBeHeld` (-1 otherwise; hot loops skip it then). */
  readonly robotHeldUntil: Int32Array;
  /** Ticks of a quarter turn in place; 0 when robots turn in no time (no headings). Set by the engine. */
  turnTicks = 0;
  /** True when moves may be held back (faults.delays): planned policies then follow their paths through an action dependency graph. Set by the engine. */
  movesMayBeHeld = false;

  /** Slots in use or freed (the high-water mark of live tasks); ids are below it. */
  taskCount = 0;
  taskRelease = new Int32Array(256);
  /** Release sequence number, unique over the run (slots are reused, serials are not). */
  taskSerial = new Float64Array(256);
  taskPickup = new Int32Array(256);
  taskDrop = new Int32Array(256);
  /** Cell the shelf returns to (round trips), or -1. */
  taskReturn = new Int32Array(256);
  taskPickupTicks = new Int32Array(256);
  taskDropTicks = new Int32Array(256);
  taskReturnTicks = new Int32Array(256);
  taskState = new Uint8Array(256);
  taskRobot = new Int32Array(256);
  taskAssignedTick = new Int32Array(256);
  taskPickedTick = new Int32Array(256);
  taskDeliveredTick = new Int32Array(256);

  /** Released, unassigned, ready tasks in release order. */
  readonly openTasks: number[] = [];
  /** Bumped whenever the open list or a robot's task changes; policies use it to skip work. */
  version = 0;
  /**
   * Open tasks per pickup cell (indexed by cell), kept with the open list wherever a task
   * joins or leaves it, so a policy reads a pickup's open count without scanning a deep pool.
   */
  readonly openAtPickup: Int32Array;
  /** Called by assign() so the engine can react (saturated demand refills, station counts). */
  onAssign: ((task: number, robot: number) => void) | null = null;
  /** Called by unassign() after the task went back to the open list. */
  onUnassign: ((task: number, robot: number) => void) | null = null;
  /** Called by assign() when the robot already stands on the pickup. */
  onArrive: ((robot: number) => void) | null = null;

  currentTick = 0;

  /** Live tasks per TaskState, kept at every transition (the engine recounts them from the slots). */
  readonly stateCounts = new Float64Array(stateCount);
  /** Tasks whose slot was freed after delivery. */
  retired = 0;
  private released = 0;
  private freeSlots = new Int32Array(64);
  private freeCount = 0;

  constructor(
    readonly layout: Layout,
    robots: number,
  ) {
    this.robotCount = robots;
    this.robotCell = new Int32Array(robots);
    this.robotTask = new Int32Array(robots).fill(-1);
    this.robotPhase = new Uint8Array(robots);
    this.robotHandlingUntil = new Int32Array(robots);
    this.occupant = new Int32Array(layout.cellCount).fill(-1);
    this.openAtPickup = new Int32Array(layout.cellCount);
    this.robotCharger = new Int32Array(robots).fill(-1);
    this.robotBroken = new Uint8Array(robots);
    this.robotStopPending = new Uint8Array(robots);
    this.robotHeading = new Uint8Array(robots);
    this.robotTurnUntil = new Int32Array(robots).fill(-1);
    this.robotHeldUntil = new Int32Array(robots).fill(-1);
  }

  /**
   * True while robot r cannot move at the current tick: handling, charging, broken down,
   * turning in place, or held back by an execution delay. The engine keeps handling,
   * charging, broken and held robots on their cells whatever a policy writes; a move of a
   * turning robot is an illegal step.
   */
  isFixed(robot: number): boolean {
    const phase = this.robotPhase[robot];
    const now = this.currentTick;
    return isHandling(phase) || phase === Phase.Charging || this.robotBroken[robot] === 1 || this.robotTurnUntil[robot] > now || this.robotHeldUntil[robot] > now;
  }

  /** True while robot r turns in place (its turn ends after the current tick). */
  isTurning(robot: number): boolean {
    return this.robotTurnUntil[robot] > this.currentTick;
  }

  /** True while a held-back move keeps robot r on its cell. */
  isHeld(robot: number): boolean {
    return this.robotHeldUntil[robot] > this.currentTick;
  }

  /** True when a policy may give robot r a task: idle, working, and no breakdown pending. */
  mayTakeTask(robot: number): boolean {
    return this.robotPhase[robot] === Phase.Idle && this.robotTask[robot] < 0 && this.robotBroken[robot] === 0 && this.robotStopPending[robot] === 0;
  }

  /** True when robot r has nothing to do but rest (idle, or waiting for a charger) and can move to a rest place. */
  restsLikeIdle(robot: number): boolean {
    const phase = this.robotPhase[robot];
    return (phase === Phase.Idle || phase === Phase.WaitingForCharger) && this.robotTask[robot] < 0 && this.robotBroken[robot] === 0;
  }

  /** The cell robot r is heading for (its task's next stop, or its charger), or -1 when it has none (idle, handling, charging, waiting for a charger). */
  goalOf(robot: number): number {
    const task = this.robotTask[robot];
    switch (this.robotPhase[robot]) {
      case Phase.ToPickup:
        return this.taskPickup[task];
      case Phase.ToDrop:
        return this.taskDrop[task];
      case Phase.ToReturn:
        return this.taskReturn[task];
      case Phase.ToCharger:
        return this.robotCharger[robot];
      default:
        return -1;
    }
  }

  /** Gives an open task to an idle robot (policy action). */
  assign(robot: number, task: number): void {
    if (this.robotPhase[robot] !== Phase.Idle || this.robotTask[robot] !== -1) {
      throw new RunError(`policy assigned task ${task} to robot ${robot}, which is not idle`);
    }
    if (task < 0 || task >= this.taskCount || this.taskState[task] !== TaskState.Open) {
      throw new RunError(`policy assigned task ${task}, which is not open`);
    }
    const index = openListIndex(this, task);
    if (index >= 0) {
      removeAt(this.openTasks, index);
      this.openAtPickup[this.taskPickup[task]]--;
    }
    this.setState(task, TaskState.Assigned);
    this.taskRobot[task] = robot;
    this.taskAssignedTick[task] = this.currentTick;
    this.robotTask[robot] = task;
    this.robotPhase[robot] = Phase.ToPickup;
    this.version++;
    this.onAssign?.(task, robot);
    if (this.robotCell[robot] === this.taskPickup[task]) this.onArrive?.(robot);
  }

  /** Takes back a task that is assigned but not yet picked up (policy action, e.g. a swap). */
  unassign(robot: number): number {
    const task = this.robotTask[robot];
    if (task < 0 || this.robotPhase[robot] !== Phase.ToPickup) {
      throw new RunError(`policy unassigned robot ${robot}, which holds no task before pickup`);
    }
    this.setState(task, TaskState.Open);
    this.taskRobot[task] = -1;
    this.robotTask[robot] = -1;
    this.robotPhase[robot] = Phase.Idle;
    insertByRelease(this, task);
    this.openAtPickup[this.taskPickup[task]]++;
    this.version++;
    this.onUnassign?.(task, robot);
    return task;
  }

  /** Appends a released task in a free slot; returns its id. */
  addTask(releaseTick: number, pickup: number, drop: number, returnCell: number, pickupTicks: number, dropTicks: number, returnTicks: number, state: number): number {
    let id: number;
    if (this.freeCount > 0) {
      id = this.freeSlots[--this.freeCount];
      if (this.taskState[id] !== TaskState.Free) throw new RunError(`conservation broken: free task slot ${id} holds a task in state ${this.taskState[id]}`);
      this.stateCounts[TaskState.Free]--;
    } else {
      if (this.taskCount === this.taskRelease.length) this.growTasks();
      id = this.taskCount++;
    }
    this.taskRelease[id] = releaseTick;
    this.taskSerial[id] = this.released++;
    this.taskPickup[id] = pickup;
    this.taskDrop[id] = drop;
    this.taskReturn[id] = returnCell;
    this.taskPickupTicks[id] = pickupTicks;
    this.taskDropTicks[id] = dropTicks;
    this.taskReturnTicks[id] = returnTicks;
    this.taskState[id] = state;
    this.stateCounts[state]++;
    this.taskRobot[id] = -1;
    this.taskAssignedTick[id] = -1;
    this.taskPickedTick[id] = -1;
    this.taskDeliveredTick[id] = -1;
    if (state === TaskState.Open) {
      this.openTasks.push(id);
      this.openAtPickup[pickup]++;
      this.version++;
    }
    return id;
  }

  /** Engine: pickup handling done. */
  markPickedUp(task: number, tick: number): void {
    this.setState(task, TaskState.PickedUp);
    this.taskPickedTick[task] = tick;
  }

  /** Engine: drop handling done. */
  markDelivered(task: number, tick: number): void {
    this.setState(task, TaskState.Delivered);
    this.taskDeliveredTick[task] = tick;
  }

  /** Engine: a held task's shelf is back; the task joins the open list in release order. */
  releaseHeld(task: number): void {
    this.setState(task, TaskState.Open);
    insertByRelease(this, task);
    this.openAtPickup[this.taskPickup[task]]++;
    this.version++;
  }

  /** Engine: a delivered task leaves the world; its slot is reused by a later release. */
  retire(task: number): void {
    if (this.taskState[task] !== TaskState.Delivered) throw new RunError(`task ${task} retired in state ${this.taskState[task]}, expected delivered`);
    this.setState(task, TaskState.Free);
    this.retired++;
    this.taskRobot[task] = -1;
    if (this.freeCount === this.freeSlots.length) {
      const grown = new Int32Array(this.freeSlots.length * 2);
      grown.set(this.freeSlots);
      this.freeSlots = grown;
    }
    this.freeSlots[this.freeCount++] = task;
  }

  /** Live tasks (released and not retired). */
  get liveTasks(): number {
    return this.taskCount - this.freeCount;
  }

  /**
   * Tasks counted by the state stored in every slot (a full scan, O(slots)), plus retired
   * ones. Independent of `stateCounts`: the engine compares the two.
   */
  countTasksByState(): TaskStateCounts {
    const counts = new Float64Array(stateCount);
    for (let id = 0; id < this.taskCount; id++) counts[this.taskState[id]]++;
    return {
      open: counts[TaskState.Open],
      held: counts[TaskState.Held],
      assigned: counts[TaskState.Assigned],
      pickedUp: counts[TaskState.PickedUp],
      delivered: counts[TaskState.Delivered] + this.retired,
    };
  }

  private setState(task: number, state: number): void {
    this.stateCounts[this.taskState[task]]--;
    this.taskState[task] = state;
    this.stateCounts[state]++;
  }

  private growTasks(): void {
    const n = this.taskRelease.length * 2;
    const i32 = (a: Int32Array) => {
      const b = new Int32Array(n);
      b.set(a);
      return b;
    };
    this.taskRelease = i32(this.taskRelease);
    const serial = new Float64Array(n);
    serial.set(this.taskSerial);
    this.taskSerial = serial;
    this.taskPickup = i32(this.taskPickup);
    this.taskDrop = i32(this.taskDrop);
    this.taskReturn = i32(this.taskReturn);
    this.taskPickupTicks = i32(this.taskPickupTicks);
    this.taskDropTicks = i32(this.taskDropTicks);
    this.taskReturnTicks = i32(this.taskReturnTicks);
    this.taskRobot = i32(this.taskRobot);
    this.taskAssignedTick = i32(this.taskAssignedTick);
    this.taskPickedTick = i32(this.taskPickedTick);
    this.taskDeliveredTick = i32(this.taskDeliveredTick);
    const state = new Uint8Array(n);
    state.set(this.taskState);
    this.taskState = state;
  }
}

/** Puts a task back into the open list at its release-order position (release serial). */
export function insertByRelease(world: World, task: number): void {
  const open = world.openTasks;
  const serial = world.taskSerial;
  let i = open.length;
  while (i > 0 && serial[open[i - 1]] > serial[task]) i--;
  open.splice(i, 0, task);
}

/**
 * Removes entry `index` of `list`. Under saturated demand the open list is a pool of
 * thousands of tasks and a taken task is mostly among its last few (median: 23 from the end
 * on the demo hall at 40 robots): those move by a loop, without the call and the removed-
 * element array of `splice`, which stays for long tails.
 */
function removeAt(list: number[], index: number): void {
  const last = list.length - 1;
  if (last - index > 32) {
    list.splice(index, 1);
    return;
  }
  for (let k = index; k < last; k++) list[k] = list[k + 1];
  list.pop();
}

/**
 * Where `task` sits in the open list, or -1. The list is in release order, so a search by
 * serial finds it (a deep capacity pool holds thousands of open tasks); a linear scan
 * answers if the order were ever broken. The search gallops from the end (the taken task
 * is mostly near it, see `removeAt`), then bisects: the first entry whose serial is not
 * below the task's, as a bisection of the whole list finds it.
 */
function openListIndex(world: World, task: number): number {
  const open = world.openTasks;
  const serial = world.taskSerial;
  const key = serial[task];
  // Entries from `hi` on have serials >= key; entry `lo` (if lo > 0) has one below it.
  let hi = open.length;
  let lo = hi - 1;
  for (let step = 1; lo > 0 && serial[open[lo]] >= key; step *= 2) {
    hi = lo;
    lo = hi - step;
  }
  if (lo < 0) lo = 0;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (serial[open[mid]] < key) lo = mid + 1;
    else hi = mid;
  }
  return lo < open.length && open[lo] === task ? lo : open.indexOf(task);
}
