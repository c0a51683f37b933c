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
 * Each route keeps its tasks in release order in an array with a head index: taking the
 * earliest is O(1); taking another one (rare) is a splice.
 */
import type { World } from '../../sim/world.ts';

export class OpenTasksByRoute {
  private readonly routeOf = new Map<number, number>();
  /** Per route: pickup and drop cell, its open tasks in release order from `head`. */
  readonly pickup: number[] = [];
  readonly drop: number[] = [];
  private readonly tasks: number[][] = [];
  private readonly head: number[] = [];
  /** Serials below this are indexed (or were never open). */
  private nextSerial = 0;
  /** Set once a task with a return cell is seen; from then on the index is not used. */
  private roundTrips = false;

  constructor(private readonly cellCount: number) {}

  get routeCount(): number {
    return this.pickup.length;
  }

  /** Open tasks on route `r`. */
  count(r: number): number {
    return this.tasks[r].length - this.head[r];
  }

  /** The earliest open task on route `r` (count(r) > 0). */
  first(r: number): number {
    return this.tasks[r][this.head[r]];
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
      const key = world.taskPickup[task] * this.cellCount + world.taskDrop[task];
      let route = this.routeOf.get(key);
      if (route === undefined) {
        route = this.pickup.length;
        this.routeOf.set(key, route);
        this.pickup.push(world.taskPickup[task]);
        this.drop.push(world.taskDrop[task]);
        this.tasks.push([]);
        this.head.push(0);
      }
      this.tasks[route].push(task);
      this.nextSerial = serial[task] + 1;
    }
    return true;
  }

  /** The policy took an open task (World.assign). */
  remove(world: World, task: number): void {
    if (this.roundTrips) return;
    const route = this.routeOf.get(world.taskPickup[task] * this.cellCount + world.taskDrop[task]);
    if (route === undefined) return;
    const list = this.tasks[route];
    let head = this.head[route];
    if (list[head] === task) {
      head++;
    } else {
      const at = list.indexOf(task, head);
      if (at < 0) return;
      list.splice(at, 1);
    }
    // Drop the taken prefix now and then, so the arrays do not grow with the run.
    if (head >= 64 && 2 * head >= list.length) {
      list.splice(0, head);
      head = 0;
    }
    this.head[route] = head;
  }
}
