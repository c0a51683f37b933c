/**
 * OpenTasksByRoute (policies/token-passing/open-tasks-by-route.ts): after any sequence of
 * releases and assignments, each route's count and earliest task equal what a scan of the
 * world's open list gives (the list token passing used to scan on every request), and each
 * pickup group lists exactly that pickup's routes with open tasks, with its open count.
 * Tasks are taken anywhere on their route (not only the earliest), and some are delivered
 * at once so that their slots come back as new tasks (the routes' lists are threaded
 * through task ids).
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { parseLayout } from '../sim/layout.ts';
import { Phase, TaskState, World } from '../sim/world.ts';
import { OpenTasksByRoute } from '../policies/token-passing/open-tasks-by-route.ts';

const layout = parseLayout(['########', '#P.D..H#', '#P..D.H#', '#P...DH#', '########'].join('\n'));

describe('OpenTasksByRoute', () => {
  it('matches a scan of the open list after random releases and assignments (fast-check)', () => {
    const op = fc.oneof(
      fc.record({ kind: fc.constant('release' as const), pickup: fc.nat(2), drop: fc.nat(2) }),
      // `deliver`: the task is delivered and retired at once, so later releases reuse its slot (task ids are slots).
      fc.record({ kind: fc.constant('assign' as const), which: fc.nat(1000), deliver: fc.boolean() }),
      fc.record({ kind: fc.constant('check' as const) }),
    );
    fc.assert(
      fc.property(fc.array(op, { maxLength: 200, size: 'medium' }), (ops) => {
        const world = new World(layout, 1);
        const index = new OpenTasksByRoute(layout.cellCount);
        let tick = 0;
        const check = () => {
          expect(index.sync(world)).toBe(true);
          const seen = new Set<string>();
          for (let r = 0; r < index.routeCount; r++) {
            const key = `${index.pickup[r]}-${index.drop[r]}`;
            expect(seen.has(key)).toBe(false);
            seen.add(key);
            const onRoute = world.openTasks.filter((t) => world.taskPickup[t] === index.pickup[r] && world.taskDrop[t] === index.drop[r]);
            expect(index.count(r)).toBe(onRoute.length);
            // The whole route in release order (the open list's order), not only its earliest task.
            expect(index.tasksOn(r)).toEqual(onRoute);
            if (onRoute.length > 0) {
              const earliest = onRoute.reduce((a, b) => (world.taskSerial[b] < world.taskSerial[a] ? b : a));
              expect(index.first(r)).toBe(earliest);
            }
          }
          // Every open route is indexed.
          for (const t of world.openTasks) expect(seen.has(`${world.taskPickup[t]}-${world.taskDrop[t]}`)).toBe(true);
          // Pickup groups: each route with open tasks listed once, in its pickup's group, and
          // no other route; each group's open count is the open list's count from that pickup.
          const listed = new Set<number>();
          for (let g = 0; g < index.groupCount; g++) {
            const pickup = index.groupPickup[g];
            for (const r of index.openRoutes(g)) {
              expect(listed.has(r)).toBe(false);
              listed.add(r);
              expect(index.pickup[r]).toBe(pickup);
            }
            expect(index.groupOpen[g]).toBe(world.openTasks.filter((t) => world.taskPickup[t] === pickup).length);
          }
          const withOpen = new Set<number>();
          for (let r = 0; r < index.routeCount; r++) if (index.count(r) > 0) withOpen.add(r);
          expect([...listed].sort((a, b) => a - b)).toEqual([...withOpen].sort((a, b) => a - b));
        };
        for (const o of ops) {
          if (o.kind === 'release') {
            world.addTask(tick++, layout.pickups[o.pickup], layout.drops[o.drop], -1, 1, 1, 0, TaskState.Open);
          } else if (o.kind === 'assign') {
            if (world.openTasks.length === 0) continue;
            index.sync(world);
            const task = world.openTasks[o.which % world.openTasks.length];
            index.remove(world, task);
            world.assign(0, task);
            if (o.deliver) {
              world.markPickedUp(task, tick);
              world.markDelivered(task, tick);
              world.retire(task);
            }
            // Hand the robot back at once (the test is about the open list only).
            world.robotTask[0] = -1;
            world.robotPhase[0] = Phase.Idle;
          } else {
            check();
          }
        }
        check();
      }),
      { numRuns: 300, seed: 20261201 },
    );
  });

  it('declines to index round trips (tasks with a return cell)', () => {
    const world = new World(layout, 1);
    const index = new OpenTasksByRoute(layout.cellCount);
    world.addTask(0, layout.pickups[0], layout.drops[0], -1, 1, 1, 0, TaskState.Open);
    expect(index.sync(world)).toBe(true);
    world.addTask(1, layout.pickups[1], layout.drops[1], layout.pickups[1], 1, 1, 1, TaskState.Open);
    expect(index.sync(world)).toBe(false);
  });
});
