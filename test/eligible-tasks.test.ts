/**
 * EligibleTasks (policies/token-passing/eligible-tasks.ts), followed incrementally through the
 * route index's change log, against a scan of the world's open list after every random
 * sequence of releases, assignments and path ends that move (the rule of Ma et al., AAMAS
 * 2017: a robot may not take a task an endpoint of which ends another robot's path):
 *  - the candidates are, in release order, the first open task of each pickup whose pickup
 *    and drop end no path, and the held count is the number of open tasks that fail that;
 *  - a robot resting on a drop or a pickup gets the open task a scan in release order gives
 *    (nearest pickup, ties to the earlier), its own resting cell not counting against it.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { parseLayout } from '../sim/layout.ts';
import { TaskState, World } from '../sim/world.ts';
import { OpenTasksByRoute } from '../policies/token-passing/open-tasks-by-route.ts';
import { EligibleTasks } from '../policies/token-passing/eligible-tasks.ts';

const layout = parseLayout(['#########', '#P.D..D.#', '#P..D...#', '#P...D..#', '#########'].join('\n'));
const endpoints = [...layout.pickups, ...layout.drops];
const robots = 3;

function restsOther(endRobot: Int32Array, cell: number, robot: number): boolean {
  return endRobot[cell] >= 0 && endRobot[cell] !== robot;
}

const distanceTable = fc.array(fc.nat(3), { minLength: layout.cellCount, maxLength: layout.cellCount });

describe('EligibleTasks', () => {
  it('follows releases, assignments and path ends as a scan of the open list would (fast-check)', () => {
    const op = fc.oneof(
      fc.record({ kind: fc.constant('release' as const), pickup: fc.nat(2), drop: fc.nat(3) }),
      fc.record({ kind: fc.constant('take' as const), which: fc.nat(1000) }),
      fc.record({ kind: fc.constant('end' as const), robot: fc.nat(robots - 1), cell: fc.integer({ min: -1, max: endpoints.length - 1 }) }),
      // `table` >= 0: one of a few distance tables kept for the whole sequence (the same
      // object again, as the policy passes the distance table of the robot's cell), else `distances`.
      fc.record({ kind: fc.constant('check' as const), robot: fc.nat(robots - 1), distances: distanceTable, table: fc.integer({ min: -1, max: 2 }) }),
    );
    fc.assert(
      fc.property(fc.array(op, { maxLength: 150, size: 'medium' }), fc.array(distanceTable, { minLength: 3, maxLength: 3 }), (ops, tables) => {
        const world = new World(layout, 1);
        const index = new OpenTasksByRoute(layout.cellCount);
        const eligible = new EligibleTasks(index);
        const endRobot = new Int32Array(layout.cellCount).fill(-1);
        const endOf = new Int32Array(robots).fill(-1);
        let endsMoved = true;
        let tick = 0;
        const update = () => {
          expect(index.sync(world)).toBe(true);
          eligible.update(endRobot, world.taskSerial, !endsMoved);
          endsMoved = false;
        };
        for (const o of ops) {
          if (o.kind === 'release') {
            world.addTask(tick++, layout.pickups[o.pickup], layout.drops[o.drop], -1, 1, 1, 0, TaskState.Open);
          } else if (o.kind === 'take') {
            if (world.openTasks.length === 0) continue;
            index.sync(world);
            const task = world.openTasks[o.which % world.openTasks.length];
            index.remove(world, task);
            // Taken off the open list (the robot and the rest of its life do not matter here).
            world.openTasks.splice(world.openTasks.indexOf(task), 1);
          } else if (o.kind === 'end') {
            // A robot's path now ends at another cell (or at none): at most one robot per cell.
            const cell = o.cell < 0 ? -1 : endpoints[o.cell];
            if (cell >= 0 && endRobot[cell] >= 0) continue;
            if (endOf[o.robot] >= 0) endRobot[endOf[o.robot]] = -1;
            endOf[o.robot] = cell;
            if (cell >= 0) endRobot[cell] = o.robot;
            endsMoved = true;
          } else {
            update();
            // The shared list against a scan in release order.
            const seen = new Set<number>();
            const expected: number[] = [];
            let held = 0;
            for (const t of world.openTasks) {
              if (endRobot[world.taskPickup[t]] >= 0 || endRobot[world.taskDrop[t]] >= 0) {
                held++;
                continue;
              }
              if (seen.has(world.taskPickup[t])) continue;
              seen.add(world.taskPickup[t]);
              expected.push(t);
            }
            expect(Array.from(eligible.candidates.subarray(0, eligible.count))).toEqual(expected);
            expect(eligible.held).toBe(held);
            // A robot resting on an endpoint.
            const cell = endOf[o.robot];
            if (cell < 0) continue;
            const distances = o.table >= 0 ? tables[o.table] : o.distances;
            let best = -1;
            let bestDistance = Infinity;
            for (const t of world.openTasks) {
              const d = distances[world.taskPickup[t]];
              if (d >= bestDistance) continue;
              if (restsOther(endRobot, world.taskPickup[t], o.robot) || restsOther(endRobot, world.taskDrop[t], o.robot)) continue;
              best = t;
              bestDistance = d;
            }
            expect(eligible.nearestForRester(o.robot, cell, distances, endRobot, world.taskSerial)).toBe(best);
            if (best >= 0) expect(eligible.distance).toBe(bestDistance);
          }
        }
      }),
      { numRuns: 1000, seed: 20261202 },
    );
  });
});
