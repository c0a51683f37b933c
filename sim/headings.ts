/**
 * Headings of forward-only robots that turn in place (`units.turnSeconds`).
 *
 * A robot faces one of the four grid directions, numbered like the layout's neighbour
 * entries (N, E, S, W: `layout.neighbors[cell * 4 + heading]` is the cell in front of it).
 * It moves only forward, one cell per tick, and turns only while standing still and not
 * being loaded or unloaded: a quarter turn (90 degrees) takes `turnTicks` ticks, a half
 * turn two quarter turns. A turn decided at tick t holds the robot on its cell through tick
 * t + q x turnTicks (q quarter turns); it may move from that tick to the next, as after a
 * handling (sim/policy.ts). With forward-only motion a route's cycle time grows by exactly
 * its quarter turns x turn time (common practice: the turn time joins the travel term of
 * Groover's cycle time, Automation, Production Systems, and CIM, ch. 10).
 *
 * Ticks: a turn time that is not a whole number of ticks is rounded up (a robot is never
 * modelled turning faster than the scenario says); the run summary reports the modelled
 * seconds beside the requested ones.
 */
import type { Layout } from './layout.ts';

export const Heading = { North: 0, East: 1, South: 2, West: 3 } as const;

/** Every robot starts facing north (up the layout's rows). */
export const initialHeading: number = Heading.North;

/** Quarter turns from heading `from` to heading `to`: 0, 1 or 2. */
export function quarterTurns(from: number, to: number): number {
  const d = (to - from) & 3;
  return d === 3 ? 1 : d;
}

/** The heading of a step from `from` to the neighbouring cell `to`, or -1 when they are not neighbours (or equal). */
export function stepHeading(layout: Pick<Layout, 'neighbors'>, from: number, to: number): number {
  if (from === to) return -1;
  const base = from * 4;
  const n = layout.neighbors;
  for (let d = 0; d < 4; d++) if (n[base + d] === to) return d;
  return -1;
}

/** Ticks of one quarter turn: 0 when robots turn in no time (no headings), else turnSeconds rounded up to whole ticks. */
export function turnTicksOf(turnSeconds: number | undefined, tickSeconds: number): number {
  if (turnSeconds === undefined || !(turnSeconds > 0)) return 0;
  return Math.max(1, Math.ceil(turnSeconds / tickSeconds - 1e-9));
}

/**
 * A lower bound on the quarter turns a robot facing `heading` at `cell` needs to reach
 * `goal` on a 4-connected grid, from geometry alone: on its way it must face every
 * direction in which the goal lies (east or west, north or south), starting from its
 * heading, and each quarter turn changes the heading by one step around the compass.
 * 0 at the goal. Used by the heading-aware search as an admissible part of its heuristic.
 */
export function turnsLowerBound(width: number, cell: number, heading: number, goal: number): number {
  const dx = (goal % width) - (cell % width);
  const dy = Math.floor(goal / width) - Math.floor(cell / width);
  const horizontal = dx > 0 ? Heading.East : dx < 0 ? Heading.West : -1;
  const vertical = dy > 0 ? Heading.South : dy < 0 ? Heading.North : -1;
  if (horizontal < 0 && vertical < 0) return 0;
  if (horizontal < 0) return quarterTurns(heading, vertical);
  if (vertical < 0) return quarterTurns(heading, horizontal);
  // Both directions needed (they are neighbours on the compass): facing one of them, one
  // turn to the other; facing away from both, two (one to the nearer, one to the other).
  return heading === horizontal || heading === vertical ? 1 : 2;
}
