/**
 * The random parts of demand: handling times, the choice of pickup and drop points, and
 * task arrival times. Every function is pure given an rng `() => number` uniform on [0, 1)
 * (a seedrandom stream in the engine), and each consumes a fixed number of draws per call,
 * so that two policies run on one seed see the same task stream (common random numbers)
 * whatever they do with the tasks.
 *
 * Methods are the textbook ones (Law, Simulation Modeling and Analysis, 5th ed., ch. 8):
 * inverse transform for the uniform and exponential handling times, a cumulative table
 * searched by bisection for discrete choices, and inversion of the cumulative rate for a
 * nonhomogeneous Poisson process with a piecewise-constant rate.
 */
import type { HandlingSpec, PointChoice } from './model.ts';

export type Rng = () => number;

/**
 * Returns a sampler of handling durations in integer ticks,
 * `Math.round(seconds / tickSeconds)`, never negative.
 *
 * Draws: a `fixed` spec consumes no draw; every call of a `uniform` or `exponential` one
 * consumes exactly one draw (also when min === max), so streams stay synchronized.
 */
export function makeHandlingSampler(spec: HandlingSpec, tickSeconds: number): (rng: Rng) => number {
  if (!(tickSeconds > 0) || !Number.isFinite(tickSeconds)) throw new RangeError(`tickSeconds must be a finite number > 0, got ${tickSeconds}`);
  const toTicks = (seconds: number): number => Math.max(0, Math.round(seconds / tickSeconds));
  switch (spec.dist) {
    case 'fixed': {
      const ticks = toTicks(spec.seconds);
      return () => ticks;
    }
    case 'uniform': {
      const { min, max } = spec;
      return (rng) => toTicks(min + (max - min) * rng());
    }
    case 'exponential': {
      const { mean } = spec;
      // Inverse transform; 1 - u lies in (0, 1], so the logarithm is finite.
      return (rng) => toTicks(-mean * Math.log(1 - rng()));
    }
  }
}

/**
 * Returns a chooser of one cell of `cells` per call, consuming exactly one draw.
 *
 * - `uniform`: every cell equally likely.
 * - `weights`: weight per cell index (cells missing from the map weigh 0).
 * - `zipf`: weight 1 / (i + 1)^skew for the i-th cell of `cells` (reading order for the
 *   layout's arrays); skew 0 is uniform.
 *
 * Non-uniform choices use a cumulative weight table searched by bisection: O(n) to build,
 * O(log n) per call (an alias table would be O(1) but the point lists are short).
 * Throws RangeError for an empty cell list, a weight on a cell outside `cells`, or weights
 * without a positive sum (the loader rules these out for user input).
 */
export function makePointChooser(cells: Int32Array, choice: PointChoice): (rng: Rng) => number {
  const count = cells.length;
  if (count === 0) throw new RangeError('makePointChooser needs at least one cell');
  if (choice.kind === 'uniform') {
    return (rng) => cells[Math.min(count - 1, Math.floor(rng() * count))];
  }
  const weights = new Float64Array(count);
  if (choice.kind === 'zipf') {
    for (let i = 0; i < count; i++) weights[i] = 1 / Math.pow(i + 1, choice.skew);
  } else {
    const position = new Map<number, number>();
    for (let i = 0; i < count; i++) position.set(cells[i], i);
    for (const [cell, weight] of choice.weights) {
      const i = position.get(cell);
      if (i === undefined) throw new RangeError(`weight given for cell ${cell}, which is not one of the points to choose from`);
      if (!(weight >= 0) || !Number.isFinite(weight)) throw new RangeError(`weight of cell ${cell} must be a finite number >= 0, got ${weight}`);
      weights[i] = weight;
    }
  }
  const cumulative = new Float64Array(count);
  let total = 0;
  let lastPositive = -1;
  for (let i = 0; i < count; i++) {
    total += weights[i];
    cumulative[i] = total;
    if (weights[i] > 0) lastPositive = i;
  }
  if (!(total > 0)) throw new RangeError('point weights must have a positive sum');
  return (rng) => {
    const target = rng() * total;
    // First index whose cumulative weight exceeds the target; it has a positive weight.
    let low = 0;
    let high = count;
    while (low < high) {
      const middle = (low + high) >>> 1;
      if (cumulative[middle] > target) high = middle;
      else low = middle + 1;
    }
    // Rounding can put target at the total; the last point with weight then takes it.
    return cells[low < count ? low : lastPositive];
  };
}

const secondsPerHour = 3600;

/**
 * Task arrivals as a nonhomogeneous Poisson process whose rate is constant within each
 * hour: `tasksPerHour * profile[h % profile.length]` in hour h (counted from time 0), or
 * `tasksPerHour` throughout when `profile` is null.
 *
 * Method: inversion of the cumulative rate Lambda(t) (Law, ch. 8.6; Cinlar 1975): with
 * E ~ Exp(1) from one draw, the next arrival is the t with Lambda(t) = Lambda(previous) + E,
 * found by walking hour by hour (zero-rate hours pass without arrivals). Whole profile
 * cycles are skipped at once, so a very low rate costs at most two cycles of walking.
 * One draw per arrival.
 */
export class ArrivalProcess {
  private readonly ratePerSecond: Float64Array;
  /** Expected arrivals in one full profile cycle. */
  private readonly tasksPerCycle: number;
  private previousSeconds = 0;
  private started = false;

  constructor(tasksPerHour: number, profile: number[] | null) {
    if (!(tasksPerHour > 0) || !Number.isFinite(tasksPerHour)) throw new RangeError(`tasksPerHour must be a finite number > 0, got ${tasksPerHour}`);
    const multipliers = profile ?? [1];
    if (multipliers.length === 0) throw new RangeError('profile must have at least one hourly multiplier');
    this.ratePerSecond = new Float64Array(multipliers.length);
    let tasksPerCycle = 0;
    for (let h = 0; h < multipliers.length; h++) {
      const multiplier = multipliers[h];
      if (!(multiplier >= 0) || !Number.isFinite(multiplier)) throw new RangeError(`profile[${h}] must be a finite number >= 0, got ${multiplier}`);
      this.ratePerSecond[h] = (tasksPerHour * multiplier) / secondsPerHour;
      tasksPerCycle += tasksPerHour * multiplier;
    }
    if (!(tasksPerCycle > 0)) throw new RangeError('profile must have at least one multiplier > 0');
    this.tasksPerCycle = tasksPerCycle;
  }

  /** Time of the next arrival in seconds; strictly after the previous one (the first is >= 0). */
  next(rng: Rng): number {
    const hours = this.ratePerSecond.length;
    let remaining = -Math.log(1 - rng());
    let t = this.previousSeconds;
    for (;;) {
      const hour = Math.floor(t / secondsPerHour);
      const rate = this.ratePerSecond[hour % hours];
      const hourEnd = (hour + 1) * secondsPerHour;
      const expectedToHourEnd = rate * (hourEnd - t);
      if (rate > 0 && remaining <= expectedToHourEnd) {
        t += remaining / rate;
        break;
      }
      remaining -= expectedToHourEnd;
      t = hourEnd;
      // From any hour boundary, the next `hours` hours hold exactly one cycle's mass.
      const wholeCycles = Math.floor(remaining / this.tasksPerCycle) - 1;
      if (wholeCycles > 0) {
        remaining -= wholeCycles * this.tasksPerCycle;
        t += wholeCycles * hours * secondsPerHour;
      }
    }
    if (this.started && t <= this.previousSeconds) {
      // A draw of exactly 0, or an increment lost to rounding far into a run.
      t = this.previousSeconds + Math.max(Number.MIN_VALUE, Math.abs(this.previousSeconds) * Number.EPSILON);
    }
    this.started = true;
    this.previousSeconds = t;
    return t;
  }
}
