/**
 * Robot breakdowns as an alternating renewal process per robot: up for a time to failure
 * (mean MTBF, counted in calendar time from the end of the last repair, whatever the robot
 * does), then down for a repair time (mean MTTR), and so on. Its steady-state availability
 * is MTBF / (MTBF + MTTR) for any distributions of the two (alternating renewal theorem;
 * e.g. Ross, Introduction to Probability Models, ch. 7; IEC 60050-192 for the terms).
 *
 * Random streams: one per robot (`rngFor(robot)`, the engine derives it from (seed,
 * replication, "breakdowns/<robot>")), drawn alternately for failure and repair times in
 * the robot's own order. A robot's failure times depend on nothing a policy does, so two
 * policies on one seed see the same breakdowns (common random numbers), and adding robots
 * to a fleet does not move the breakdowns of the others.
 */
import type { BreakdownSpec } from './model.ts';
import { makeHandlingSampler, type Rng } from './demand.ts';
import { meanHandlingSeconds } from './station-handling.ts';

export class BreakdownClock {
  private readonly timeToFailure: (rng: Rng) => number;
  private readonly repair: (rng: Rng) => number;
  private readonly streams: Rng[];

  constructor(spec: BreakdownSpec, tickSeconds: number, robots: number, rngFor: (robot: number) => Rng) {
    // Durations in whole ticks (rounded), as handling times are.
    this.timeToFailure = makeHandlingSampler(spec.timeToFailure, tickSeconds);
    this.repair = makeHandlingSampler(spec.repair, tickSeconds);
    this.streams = [];
    for (let r = 0; r < robots; r++) this.streams.push(rngFor(r));
  }

  /** Tick of robot r's next failure after it came up (started, or was repaired) at `upTick`. */
  nextFailure(robot: number, upTick: number): number {
    return upTick + this.timeToFailure(this.streams[robot]);
  }

  /** Ticks robot r's repair takes (drawn when it fails). */
  repairTicks(robot: number): number {
    return this.repair(this.streams[robot]);
  }
}

/** Steady-state availability MTBF / (MTBF + MTTR) of the spec (alternating renewal process). */
export function steadyStateAvailability(spec: BreakdownSpec): number {
  const up = meanHandlingSeconds(spec.timeToFailure);
  const down = meanHandlingSeconds(spec.repair);
  return up / (up + down);
}
