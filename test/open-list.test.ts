/**
 * The world's open list (sim/world.ts): `assign` finds the task by a search from the end
 * and removes it by a short loop or a splice, `unassign` and `releaseHeld` put tasks back
 * in release order. After any sequence of releases, assignments (of any open task, near
 * the end or the front of a deep pool), hand-backs, deliveries (slots reused) and held
 * releases, the list must equal a plain array kept the obvious way: push on release,
 * indexOf + splice on assignment, sort by release serial on return; and the world's open
 * tasks per pickup cell must equal a count of that array.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { parseLayout } from '../sim/layout.ts';
import { Phase, TaskState, World } from '../sim/world.ts';

const layout = parseLayout(['########', '#P.D..H#', '#P..D.H#', '#P...DH#', '########'].join('\n'));

describe('World open list', () => {
  it('matches a plain array, and its per-pickup counts a count of it, under random releases, assignments, hand-backs and deliveries (fast-check)', () => {
    const op = fc.oneof(
      // Several tasks at once, so the pool gets deep enough for both removal paths (tails over 32).
      fc.record({ kind: fc.constant('release' as const), count: fc.integer({ min: 1, max: 40 }), held: fc.boolean() }),
      // `fromEnd`: pick the task counted from the end (token passing mostly takes late ones) or from the front.
      fc.record({ kind: fc.constant('assign' as const), which: fc.nat(5000), fromEnd: fc.boolean(), robot: fc.nat(3) }),
      fc.record({ kind: fc.constant('unassign' as const), robot: fc.nat(3) }),
      fc.record({ kind: fc.constant('deliver' as const), robot: fc.nat(3) }),
      fc.record({ kind: fc.constant('releaseHeld' as const), which: fc.nat(1000) }),
    );
    fc.assert(
      fc.property(fc.array(op, { maxLength: 150, size: 'medium' }), (ops) => {
        const world = new World(layout, 4);
        const expected: number[] = [];
        const held: number[] = [];
        const bySerial = () => expected.sort((a, b) => world.taskSerial[a] - world.taskSerial[b]);
        let tick = 0;
        for (const o of ops) {
          if (o.kind === 'release') {
            for (let k = 0; k < o.count; k++) {
              const task = world.addTask(tick++, layout.pickups[k % 3], layout.drops[(k * 7) % 3], -1, 1, 1, 0, o.held ? TaskState.Held : TaskState.Open);
              if (o.held) held.push(task);
              else expected.push(task);
            }
          } else if (o.kind === 'assign') {
            if (world.robotTask[o.robot] >= 0 || expected.length === 0) continue;
            const at = o.fromEnd ? expected.length - 1 - (o.which % expected.length) : o.which % expected.length;
            const task = expected[at];
            expected.splice(expected.indexOf(task), 1);
            world.assign(o.robot, task);
          } else if (o.kind === 'unassign') {
            if (world.robotTask[o.robot] < 0) continue;
            expected.push(world.unassign(o.robot));
            bySerial();
          } else if (o.kind === 'deliver') {
            const task = world.robotTask[o.robot];
            if (task < 0) continue;
            world.markPickedUp(task, tick);
            world.markDelivered(task, tick);
            world.retire(task);
            world.robotTask[o.robot] = -1;
            world.robotPhase[o.robot] = Phase.Idle;
          } else if (held.length > 0) {
            const task = held.splice(o.which % held.length, 1)[0];
            world.releaseHeld(task);
            expected.push(task);
            bySerial();
          }
          expect(world.openTasks).toEqual(expected);
          // The per-pickup open counts, against a count of the plain array.
          const counted = new Int32Array(layout.cellCount);
          for (const task of expected) counted[world.taskPickup[task]]++;
          expect(world.openAtPickup).toEqual(counted);
        }
      }),
      { numRuns: 300, seed: 20261202 },
    );
  });
});
