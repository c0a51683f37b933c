/**
 * Robot batteries as a linear charge model, the one a planner's availability sheet uses
 * (Groover, Automation, Production Systems, and Computer-Integrated Manufacturing, ch. 10:
 * vehicle availability after battery changes or charging; common practice for opportunity
 * charging).
 *
 * A robot's charge is a fraction in [0, 1]. It falls at one rate whatever the robot does
 * (driving, handling, waiting, parked, broken: `1 / runTicks` per tick, a full charge lasts
 * `runHours`) and rises while it charges (`1 / chargeTicks` per tick, `chargeHours` from
 * empty to full); there is no drain while charging. Between two changes of rate the charge
 * is a straight line, so each robot keeps only (charge, since, charging) and every crossing
 * of a threshold is computed, not stepped: idle stretches cost nothing.
 *
 * Starting charges: robot r of n starts at chargeBelow + (1 - chargeBelow) (r + 1) / n
 * (one robot: full), spread evenly as in a fleet in mid-shift, so that the robots do not
 * all need a charger in the same hour; the warm-up cut removes the start.
 */
import type { BatterySpec } from './model.ts';

/** Tolerance of threshold comparisons in ticks, so that a crossing computed as 2880.0000000001 is tick 2880. */
const epsilon = 1e-6;

export class BatteryBank {
  readonly drainPerTick: number;
  readonly chargePerTick: number;
  private readonly charge: Float64Array;
  private readonly since: Float64Array;
  private readonly charging: Uint8Array;

  constructor(
    readonly spec: BatterySpec,
    tickSeconds: number,
    readonly robots: number,
  ) {
    this.drainPerTick = tickSeconds / (spec.runHours * 3600);
    this.chargePerTick = tickSeconds / (spec.chargeHours * 3600);
    this.charge = new Float64Array(robots);
    this.since = new Float64Array(robots);
    this.charging = new Uint8Array(robots);
    for (let r = 0; r < robots; r++) this.charge[r] = spec.chargeBelow + ((1 - spec.chargeBelow) * (r + 1)) / robots;
  }

  /** Charge of robot r at tick t (>= its last change), clipped to [0, 1]. */
  levelAt(robot: number, tick: number): number {
    const elapsed = tick - this.since[robot];
    const level = this.charging[robot] ? this.charge[robot] + elapsed * this.chargePerTick : this.charge[robot] - elapsed * this.drainPerTick;
    return Math.min(1, Math.max(0, level));
  }

  isCharging(robot: number): boolean {
    return this.charging[robot] === 1;
  }

  /** Robot r is plugged in at tick t. */
  startCharging(robot: number, tick: number): void {
    this.settle(robot, tick);
    this.charging[robot] = 1;
  }

  /**
   * Robot r is unplugged at tick t. With `level`, the charger stopped at that set point (the
   * whole tick it reached it in rounds the time up, not the charge).
   */
  stopCharging(robot: number, tick: number, level?: number): void {
    this.settle(robot, tick);
    if (level !== undefined) this.charge[robot] = Math.min(this.charge[robot], level);
    this.charging[robot] = 0;
  }

  /**
   * First tick >= `tick` at which robot r, draining, is at or below `level` (Infinity while
   * it charges). Used for chargeBelow (go and charge) and 0 (ran flat).
   */
  tickAtOrBelow(robot: number, tick: number, level: number): number {
    if (this.charging[robot]) return Infinity;
    const ticks = (this.levelAt(robot, tick) - level) / this.drainPerTick;
    return ticks <= epsilon ? tick : tick + Math.ceil(ticks - epsilon);
  }

  /** First tick >= `tick` at which robot r, charging, is at or above `level` (Infinity while it drains). */
  tickAtOrAbove(robot: number, tick: number, level: number): number {
    if (!this.charging[robot]) return Infinity;
    const ticks = (level - this.levelAt(robot, tick)) / this.chargePerTick;
    return ticks <= epsilon ? tick : tick + Math.ceil(ticks - epsilon);
  }

  private settle(robot: number, tick: number): void {
    this.charge[robot] = this.levelAt(robot, tick);
    this.since[robot] = tick;
  }
}
