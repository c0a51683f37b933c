/**
 * The state policies read: robots (cell, task, phase), tasks (endpoints, handling ticks,
 * state) and the open-task list. Policies treat it as read-only and change it only through
 * `assign` and `unassign`; the engine moves robots and advances phases. Parallel typed
 * arrays throughout; task arrays grow by doubling.
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
} as const;
export type Phase = (typeof Phase)[keyof typeof Phase];

export const TaskState = {
  /** Released, waiting for a robot (in the open list). */
  Open: 0,
  /** Released, but its shelf is away serving another task (round trips only). */
  Held: 1,
  Assigned: 2,
  PickedUp: 3,
  Delivered: 4,
} as const;

export function isHandling(phase: number): boolean {
  return phase === Phase.HandlingPickup || phase === Phase.HandlingDrop || phase === Phase.HandlingReturn;
}

/** True while the robot carries a load (parcel or shelf). */
export function isLoaded(phase: number): boolean {
  return phase >= Phase.ToDrop;
}

export class World {
  readonly robotCount: number;
  readonly robotCell: Int32Array;
  readonly robotTask: Int32Array;
  readonly robotPhase: Uint8Array;
  /** Tick at which the current handling ends (valid while handling). */
  readonly robotHandlingUntil: Int32Array;
  /** Robot standing on each cell, or -1. */
  readonly occupant: Int32Array;

  taskCount = 0;
  taskRelease = new Int32Array(256);
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
  /** Called by assign() so the engine can react (saturated demand refills, round trips). */
  onAssign: ((task: number, robot: number) => void) | null = null;
  /** Called by assign() when the robot already stands on the pickup. */
  onArrive: ((robot: number) => void) | null = null;

  currentTick = 0;

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
  }

  /** The cell robot r is heading for in its task, or -1 when idle or handling. */
  goalOf(robot: number): number {
    const task = this.robotTask[robot];
    switch (this.robotPhase[robot]) {
      case Phase.ToPickup:
        return this.taskPickup[task];
      case Phase.ToDrop:
        return this.taskDrop[task];
      case Phase.ToReturn:
        return this.taskReturn[task];
      default:
        return -1;
    }
  }

  /** Gives an open task to an idle robot (policy action). */
  assign(robot: number, task: number): void {
    if (this.robotPhase[robot] !== Phase.Idle || this.robotTask[robot] !== -1) {
      throw new RunError(`policy assigned task ${task} to robot ${robot}, which is not idle`);
    }
    if (this.taskState[task] !== TaskState.Open) {
      throw new RunError(`policy assigned task ${task}, which is not open`);
    }
    const index = this.openTasks.indexOf(task);
    if (index >= 0) this.openTasks.splice(index, 1);
    this.taskState[task] = TaskState.Assigned;
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
    this.taskState[task] = TaskState.Open;
    this.taskRobot[task] = -1;
    this.robotTask[robot] = -1;
    this.robotPhase[robot] = Phase.Idle;
    insertByRelease(this, task);
    this.version++;
    return task;
  }

  /** Appends a released task; returns its id. */
  addTask(releaseTick: number, pickup: number, drop: number, returnCell: number, pickupTicks: number, dropTicks: number, returnTicks: number, state: number): number {
    if (this.taskCount === this.taskRelease.length) this.growTasks();
    const id = this.taskCount++;
    this.taskRelease[id] = releaseTick;
    this.taskPickup[id] = pickup;
    this.taskDrop[id] = drop;
    this.taskReturn[id] = returnCell;
    this.taskPickupTicks[id] = pickupTicks;
    this.taskDropTicks[id] = dropTicks;
    this.taskReturnTicks[id] = returnTicks;
    this.taskState[id] = state;
    this.taskRobot[id] = -1;
    this.taskAssignedTick[id] = -1;
    this.taskPickedTick[id] = -1;
    this.taskDeliveredTick[id] = -1;
    if (state === TaskState.Open) {
      this.openTasks.push(id);
      this.version++;
    }
    return id;
  }

  private growTasks(): void {
    const n = this.taskRelease.length * 2;
    const i32 = (a: Int32Array) => {
      const b = new Int32Array(n);
      b.set(a);
      return b;
    };
    this.taskRelease = i32(this.taskRelease);
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

/** Puts a task back into the open list at its release-order position. */
export function insertByRelease(world: World, task: number): void {
  const open = world.openTasks;
  let i = open.length;
  while (i > 0 && (world.taskRelease[open[i - 1]] > world.taskRelease[task] || (world.taskRelease[open[i - 1]] === world.taskRelease[task] && open[i - 1] > task))) i--;
  open.splice(i, 0, task);
}
