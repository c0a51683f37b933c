/**
 * Token passing's eligible-task list on a delivery floor: for each pickup, its earliest open
 * task (release order) none of whose endpoints ends a robot's path, and the count of open
 * tasks held back by that rule (Ma, Li, Kumar, Koenig, AAMAS 2017: no endpoint of a task a
 * robot takes may be the end of another robot's path).
 *
 * Why incremental: under saturated demand the open list changes at almost every step (a
 * task taken, a task released), while the path ends change less often. Between two changes
 * of a path end, whether a route is held back is fixed, so the list follows the index's
 * change log (open-tasks-by-route.ts): a task released adds to the held count or, on a
 * pickup without a candidate, becomes its candidate (it is the newest task, so it never
 * displaces one); a task taken subtracts from the held count or, when it was its pickup's
 * candidate, that pickup alone is looked at again. A change of a path end rebuilds the
 * list from the index (one look per pickup, then per route of it). Both give the list a
 * scan of every open task would give (test/eligible-tasks.test.ts).
 */
import type { OpenTasksByRoute } from './open-tasks-by-route.ts';

const none = -1;

interface PickupRow {
  source: ArrayLike<number>;
  groups: number;
  distances: Float64Array;
}

export class EligibleTasks {
  /** The candidates in release order (`count` of them). */
  candidates = new Int32Array(16);
  count = 0;
  /** Open tasks held back: an endpoint ends a robot's path. */
  held = 0;
  /** Candidate of each pickup group, or -1. */
  private candidateOf = new Int32Array(16).fill(none);

  constructor(private readonly routes: OpenTasksByRoute) {}

  /**
   * Brings the list up to date with the index and `endRobot` (robot resting at each cell, or
   * -1). `endsUnchanged`: no path end moved since the last update, so the index's change log
   * is enough. Clears the log.
   */
  update(endRobot: Int32Array, serial: Float64Array, endsUnchanged: boolean): void {
    const routes = this.routes;
    if (this.candidateOf.length < routes.groupCount) {
      const grown = new Int32Array(Math.max(2 * this.candidateOf.length, routes.groupCount)).fill(none);
      grown.set(this.candidateOf);
      this.candidateOf = grown;
    }
    if (endsUnchanged && !routes.logOverflowed) this.replay(endRobot, serial);
    else this.rebuild(endRobot, serial);
    routes.clearLog();
  }

  private rebuild(endRobot: Int32Array, serial: Float64Array): void {
    const routes = this.routes;
    const routeOpen = routes.routeOpen;
    const routeDrop = routes.drop;
    let held = 0;
    for (let g = 0; g < routes.groupCount; g++) {
      const open = routes.groupOpen[g];
      this.candidateOf[g] = none;
      if (open === 0) continue;
      if (endRobot[routes.groupPickup[g]] >= 0) {
        held += open;
        continue;
      }
      let best = none;
      let bestSerial = Infinity;
      const routesOfPickup = routes.openRoutes(g);
      for (let i = 0; i < routesOfPickup.length; i++) {
        const r = routesOfPickup[i];
        const tasks = routeOpen[r];
        if (endRobot[routeDrop[r]] >= 0) {
          held += tasks;
          continue;
        }
        const task = routes.first(r);
        if (serial[task] < bestSerial) {
          best = task;
          bestSerial = serial[task];
        }
      }
      this.candidateOf[g] = best;
    }
    this.held = held;
    this.collect(serial);
  }

  /** Applies the index's changes since the last update (path ends unchanged). */
  private replay(endRobot: Int32Array, serial: Float64Array): void {
    const routes = this.routes;
    const logRoute = routes.logRoute;
    const logTask = routes.logTask;
    let changed = false;
    for (let i = 0; i < routes.logLength; i++) {
      const route = logRoute[i];
      const entry = logTask[i];
      const g = routes.groupOfRoute[route];
      const heldBack = endRobot[routes.groupPickup[g]] >= 0 || endRobot[routes.drop[route]] >= 0;
      if (entry >= 0) {
        // Released: the newest task, so it is a candidate only where its pickup had none.
        if (heldBack) this.held++;
        else if (this.candidateOf[g] < 0) {
          this.candidateOf[g] = entry;
          changed = true;
        }
      } else if (heldBack) {
        this.held--;
      } else if (this.candidateOf[g] === -1 - entry) {
        // Its pickup's candidate was taken: look at that pickup's routes again (as they are now).
        this.candidateOf[g] = this.earliestEligible(g, endRobot, serial);
        changed = true;
      }
    }
    if (changed) this.collect(serial);
  }

  /** The earliest open task of group g on a route whose drop ends no path (its pickup ends none), or -1. */
  private earliestEligible(g: number, endRobot: Int32Array, serial: Float64Array): number {
    const routes = this.routes;
    let best = none;
    let bestSerial = Infinity;
    const open = routes.openRoutes(g);
    for (let i = 0; i < open.length; i++) {
      const r = open[i];
      if (endRobot[routes.drop[r]] >= 0) continue;
      const task = routes.first(r);
      if (serial[task] < bestSerial) {
        best = task;
        bestSerial = serial[task];
      }
    }
    return best;
  }

  /** The candidates of all groups, in release order (a few entries: insertion sort). */
  private collect(serial: Float64Array): void {
    const groups = this.routes.groupCount;
    if (this.candidates.length < groups) this.candidates = new Int32Array(Math.max(2 * this.candidates.length, groups));
    const candidates = this.candidates;
    let count = 0;
    for (let g = 0; g < groups; g++) {
      const task = this.candidateOf[g];
      if (task < 0) continue;
      let j = count++;
      while (j > 0 && serial[candidates[j - 1]] > serial[task]) {
        candidates[j] = candidates[j - 1];
        j--;
      }
      candidates[j] = task;
    }
    this.count = count;
  }

  /**
   * The task a robot resting at `cell` (a task endpoint: `endRobot[cell] === robot`) may take
   * with the nearest pickup, ties to the earlier release, or -1; `distance` gets its pickup
   * distance. Tasks whose drop is `cell` are open to it alone (they are held back for
   * everyone else), and so is a pickup it rests on; the list must be up to date.
   */
  nearestForRester(robot: number, cell: number, toRobot: ArrayLike<number>, endRobot: Int32Array, serial: Float64Array): number {
    const routes = this.routes;
    let best = none;
    let bestDistance = Infinity;
    // The routes to the robot's own cell, by group (looked up once, not per pickup).
    const toCell = routes.routesToDrop(cell);
    const distances = this.pickupDistances(cell, toRobot);
    for (let g = 0; g < routes.groupCount; g++) {
      if (routes.groupOpen[g] === 0) continue;
      const pickup = routes.groupPickup[g];
      const d = distances[g];
      if (d > bestDistance) continue;
      const rester = endRobot[pickup];
      if (rester >= 0 && rester !== robot) continue;
      let task: number;
      if (rester === robot) {
        // It rests on this pickup (the shared list holds the pickup back): every route whose drop ends no path.
        task = this.earliestEligible(g, endRobot, serial);
      } else {
        // The pickup's shared candidate, or the earliest task to the robot's own cell.
        task = this.candidateOf[g];
        const own = toCell !== null && g < toCell.length ? toCell[g] : none;
        if (own >= 0 && routes.routeOpen[own] > 0) {
          const ownTask = routes.first(own);
          if (task < 0 || serial[ownTask] < serial[task]) task = ownTask;
        }
      }
      if (task < 0) continue;
      if (d === bestDistance && serial[task] > serial[best]) continue;
      best = task;
      bestDistance = d;
    }
    this.distance = bestDistance;
    return best;
  }

  /** Pickup distance of the task `nearestForRester` returned. */
  distance = Infinity;

  /**
   * Per rester cell: `toRobot` at each group's pickup, copied from the table it was last
   * given, for the groups there were then. A robot rests on a drop after every delivery and
   * asks from there; the pickups' entries of that cell's distance table lie one row of the
   * floor apart each, so the copy reads one cache line where the table reads one per pickup.
   * Same values: a new table (another object) or a new group copies again.
   */
  private readonly pickupRows = new Map<number, PickupRow>();

  private pickupDistances(cell: number, toRobot: ArrayLike<number>): Float64Array {
    const routes = this.routes;
    const groups = routes.groupCount;
    let row = this.pickupRows.get(cell);
    if (row !== undefined && row.source === toRobot && row.groups === groups) return row.distances;
    if (row === undefined || row.distances.length < groups) {
      row = { source: toRobot, groups, distances: new Float64Array(Math.max(8, 2 * groups)) };
      this.pickupRows.set(cell, row);
    }
    row.source = toRobot;
    row.groups = groups;
    const distances = row.distances;
    for (let g = 0; g < groups; g++) distances[g] = toRobot[routes.groupPickup[g]];
    return distances;
  }
}
