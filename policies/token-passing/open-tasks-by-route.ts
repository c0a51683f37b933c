/**
 * The open tasks of a delivery floor grouped by route (pickup, drop), kept up to date as
 * tasks are released and taken, for token passing's requests.
 *
 * Why: whether a robot may take a task depends only on its endpoints (Ma et al. AAMAS 2017:
 * no endpoint may end another robot's path), so every task of one route is eligible or not
 * together, and the only one a nearest-pickup request can choose is the route's earliest
 * (release order breaks ties between equal pickups). A request then looks at one task per
 * route (at most pickups x drops) instead of at every open task: under saturated demand the
 * pool holds thousands of tasks (sim/engine.ts deepens it while robots stand idle).
 *
 * Tasks are released at the end of the open list in release order (World.addTask), and only
 * the policy takes them (assign) or gives them back (unassign), so `sync` indexes the tail
 * of the list with serials not seen yet, and the policy reports what it takes. Round trips
 * (tasks with a return cell, whose held tasks rejoin the list in the middle) are not
 * indexed: `sync` returns false and the caller scans the open list instead.
 *
 * Each route keeps its tasks in release order as a singly linked list threaded through the
 * task ids (`next`, first and last per route): releasing and taking the earliest are O(1)
 * and allocate nothing; taking another one (rare) walks the route. Routes are grouped by pickup
 * (counts in typed arrays, and per pickup the list of its routes that have open tasks, in no
 * particular order), so a request looks at a pickup once: all its routes share its distance
 * and its endpoint test, and routes without open tasks (most of them under light demand)
 * are never visited. Every change (a task indexed or
 * taken) is also written to a log that the eligible-task list (eligible-tasks.ts) replays
 * instead of rebuilding; it is cleared by the reader, and a log that fills up says so.
 */
import type { World } from '../../sim/world.ts';

const none = -1;
const logCapacity = 1024;

export class OpenTasksByRoute {
  /**
   * Per drop cell (null: no route to it yet), the route to it from each pickup group (-1:
   * none): a route is looked up at every release, every take and, for a robot resting on a
   * drop, once per pickup (`routeBetween`), by two array reads instead of a hash.
   */
  private readonly routesTo: (Int32Array | null)[];
  /** Per route: pickup and drop cell (indexes below `routeCount`). */
  pickup = new Int32Array(64);
  drop = new Int32Array(64);
  /** Per route: open tasks on it, and its place in its group's list of routes with open tasks (-1: not there). */
  routeOpen = new Int32Array(64);
  private activeAt = new Int32Array(64);
  /** Per route: its earliest and its latest open task (-1: none); per task id: the next open task on its route (-1: none). */
  private head = new Int32Array(64);
  private tail = new Int32Array(64);
  private next = new Int32Array(256);
  private routes = 0;
  /** Per pickup group (first-seen order): its cell, its open tasks on all routes, its routes with open tasks. */
  groupPickup = new Int32Array(16);
  groupOpen = new Int32Array(16);
  private readonly groupRoutes: number[][] = [];
  private groups = 0;
  /** Group of each pickup cell, or -1; group of each route. */
  private readonly groupOf: Int32Array;
  groupOfRoute = new Int32Array(64);
  /** Changes since the reader last cleared the log: route and task of each (taken: task as -1 - task). */
  readonly logRoute = new Int32Array(logCapacity);
  readonly logTask = new Int32Array(logCapacity);
  logLength = 0;
  /** More changes than the log holds were made since it was cleared (the reader rebuilds). */
  logOverflowed = false;
  /** Serials below this are indexed (or were never open). */
  private nextSerial = 0;
  /** Set once a task with a return cell is seen; from then on the index is not used. */
  private roundTrips = false;

  constructor(cellCount: number) {
    this.groupOf = new Int32Array(cellCount).fill(none);
    this.routesTo = new Array<Int32Array | null>(cellCount).fill(null);
  }

  get routeCount(): number {
    return this.routes;
  }

  get groupCount(): number {
    return this.groups;
  }

  /** Open tasks on route `r`. */
  count(r: number): number {
    return this.routeOpen[r];
  }

  /** The open tasks on route `r`, earliest first (a copy, for tests). */
  tasksOn(r: number): number[] {
    const out: number[] = [];
    for (let task = this.head[r]; task >= 0; task = this.next[task]) out.push(task);
    return out;
  }

  /** The earliest open task on route `r` (count(r) > 0). */
  first(r: number): number {
    return this.head[r];
  }

  /** Indexes the tasks released since the last call; false when the floor has round trips (no index). */
  sync(world: World): boolean {
    if (this.roundTrips) return false;
    const open = world.openTasks;
    const serial = world.taskSerial;
    let i = open.length;
    while (i > 0 && serial[open[i - 1]] >= this.nextSerial) i--;
    for (; i < open.length; i++) {
      const task = open[i];
      if (world.taskReturn[task] >= 0) {
        this.roundTrips = true;
        return false;
      }
      const pickup = world.taskPickup[task];
      let route = this.routeBetween(pickup, world.taskDrop[task]);
      if (route < 0) route = this.addRoute(pickup, world.taskDrop[task]);
      this.append(route, task);
      if (this.routeOpen[route]++ === 0) this.activate(route);
      this.groupOpen[this.groupOf[pickup]]++;
      this.nextSerial = serial[task] + 1;
      this.log(route, task);
    }
    return true;
  }

  private addRoute(pickup: number, drop: number): number {
    const route = this.routes++;
    if (route === this.pickup.length) {
      this.pickup = grown(this.pickup);
      this.drop = grown(this.drop);
      this.routeOpen = grown(this.routeOpen);
      this.activeAt = grown(this.activeAt);
      this.head = grown(this.head);
      this.tail = grown(this.tail);
      this.groupOfRoute = grown(this.groupOfRoute);
    }
    let group = this.groupOf[pickup];
    if (group < 0) {
      group = this.groups++;
      if (group === this.groupPickup.length) {
        this.groupPickup = grown(this.groupPickup);
        this.groupOpen = grown(this.groupOpen);
      }
      this.groupOf[pickup] = group;
      this.groupPickup[group] = pickup;
      this.groupRoutes.push([]);
    }
    let byGroup = this.routesTo[drop];
    if (byGroup === null || byGroup.length <= group) {
      const wider = new Int32Array(Math.max(4, 2 * (group + 1))).fill(none);
      if (byGroup !== null) wider.set(byGroup);
      byGroup = wider;
      this.routesTo[drop] = wider;
    }
    byGroup[group] = route;
    this.pickup[route] = pickup;
    this.drop[route] = drop;
    this.groupOfRoute[route] = group;
    this.activeAt[route] = none;
    this.head[route] = none;
    this.tail[route] = none;
    return route;
  }

  /** Puts a task released after every other on its route at the route's end. */
  private append(route: number, task: number): void {
    if (task >= this.next.length) {
      let capacity = this.next.length;
      while (capacity <= task) capacity *= 2;
      const next = new Int32Array(capacity);
      next.set(this.next);
      this.next = next;
    }
    this.next[task] = none;
    const last = this.tail[route];
    if (last < 0) this.head[route] = task;
    else this.next[last] = task;
    this.tail[route] = task;
  }

  /** The routes of pickup group `g` that have open tasks, in no particular order (read only). */
  openRoutes(g: number): readonly number[] {
    return this.groupRoutes[g];
  }

  private activate(route: number): void {
    const list = this.groupRoutes[this.groupOfRoute[route]];
    this.activeAt[route] = list.length;
    list.push(route);
  }

  /** Takes the route out of its group's list; the last one fills its place. */
  private deactivate(route: number): void {
    const list = this.groupRoutes[this.groupOfRoute[route]];
    const at = this.activeAt[route];
    const last = list.pop()!;
    if (last !== route) {
      list[at] = last;
      this.activeAt[last] = at;
    }
    this.activeAt[route] = none;
  }

  /** The routes to `drop` by pickup group (-1: none; groups past its length: none), or null when no task to it was ever indexed (read only). */
  routesToDrop(drop: number): Int32Array | null {
    return this.routesTo[drop];
  }

  /** The route from `pickup` to `drop`, or -1 when no task of it was ever indexed. */
  routeBetween(pickup: number, drop: number): number {
    const group = this.groupOf[pickup];
    if (group < 0) return none;
    const byGroup = this.routesTo[drop];
    return byGroup !== null && group < byGroup.length ? byGroup[group] : none;
  }

  /** Empties the change log (its reader is up to date). */
  clearLog(): void {
    this.logLength = 0;
    this.logOverflowed = false;
  }

  private log(route: number, entry: number): void {
    if (this.logLength === logCapacity) {
      this.logOverflowed = true;
      return;
    }
    this.logRoute[this.logLength] = route;
    this.logTask[this.logLength++] = entry;
  }

  /** The policy took an open task (World.assign). */
  remove(world: World, task: number): void {
    if (this.roundTrips) return;
    const pickup = world.taskPickup[task];
    const route = this.routeBetween(pickup, world.taskDrop[task]);
    if (route < 0) return;
    const next = this.next;
    const head = this.head[route];
    if (head === task) {
      this.head[route] = next[task];
      if (next[task] < 0) this.tail[route] = none;
    } else {
      // Not the earliest: find the task before it on the route (none: not indexed there).
      let before = head;
      while (before >= 0 && next[before] !== task) before = next[before];
      if (before < 0) return;
      next[before] = next[task];
      if (this.tail[route] === task) this.tail[route] = before;
    }
    if (--this.routeOpen[route] === 0) this.deactivate(route);
    this.groupOpen[this.groupOf[pickup]]--;
    this.log(route, -1 - task);
  }
}

function grown(array: Int32Array): Int32Array<ArrayBuffer> {
  const out = new Int32Array(2 * array.length);
  out.set(array);
  return out;
}
