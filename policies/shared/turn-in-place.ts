/**
 * Forward-only robots for reactive policies (greedy-reactive, pibt): the policy decides its
 * one-step moves as if robots could drive in any direction, then every move that is not
 * to the cell ahead becomes a turn in place towards it (the robot holds its cell, so the
 * turn is paid as waiting, `world.turnTicks` per quarter turn), and every robot that was
 * to follow into the cell of a robot that now stays stays too, back along the chain of
 * followers. Only moves are taken back, so the step stays free of vertex and swap
 * collisions if it was (a robot that stays keeps its own cell, and whoever meant to enter
 * it stays in turn). Next tick the policy decides again, with the turned robot facing its
 * way (or fixed while its turn lasts, `world.isFixed`).
 *
 * O(robots) per call, with an explicit queue (a chain of followers can hold the fleet).
 */
import type { Layout } from '../../sim/layout.ts';
import type { World } from '../../sim/world.ts';
import { stepHeading } from '../../sim/headings.ts';

export class TurnInPlace {
  /** Robot moving into each cell at the next tick, stamped by call. */
  private readonly enteringRobot: Int32Array;
  private readonly enteringStamp: Int32Array;
  private readonly queue: Int32Array;
  private stamp = 0;
  /** Moves turned into turns, and moves taken back because the robot ahead stayed. */
  turnsStarted = 0;
  followersHeld = 0;

  constructor(
    private readonly world: World,
    private readonly layout: Layout,
  ) {
    this.enteringRobot = new Int32Array(layout.cellCount);
    this.enteringStamp = new Int32Array(layout.cellCount);
    this.queue = new Int32Array(world.robotCount);
  }

  /** Rewrites `moves` and fills `turns` for forward-only robots (see the header). */
  apply(moves: Int32Array, turns: Int8Array): void {
    const world = this.world;
    const cells = world.robotCell;
    const robots = world.robotCount;
    const stamp = ++this.stamp;
    const entering = this.enteringRobot;
    const enteringStamp = this.enteringStamp;
    const queue = this.queue;
    let tail = 0;
    for (let r = 0; r < robots; r++) {
      const to = moves[r];
      if (to === cells[r]) continue;
      entering[to] = r;
      enteringStamp[to] = stamp;
    }
    for (let r = 0; r < robots; r++) {
      const from = cells[r];
      const to = moves[r];
      if (to === from) continue;
      const heading = stepHeading(this.layout, from, to);
      if (heading < 0 || heading === world.robotHeading[r] || world.isFixed(r)) continue;
      turns[r] = heading;
      moves[r] = from;
      this.turnsStarted++;
      queue[tail++] = r;
    }
    // Whoever meant to enter the cell of a robot that stays, stays.
    for (let head = 0; head < tail; head++) {
      const cell = cells[queue[head]];
      if (enteringStamp[cell] !== stamp) continue;
      const follower = entering[cell];
      enteringStamp[cell] = 0;
      if (moves[follower] !== cell) continue;
      moves[follower] = cells[follower];
      this.followersHeld++;
      queue[tail++] = follower;
    }
  }
}
