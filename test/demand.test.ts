/**
 * Statistical checks of the demand generators against textbook facts (Law, Simulation
 * Modeling and Analysis, 5th ed., ch. 6 and 8): a Poisson count with mean m has standard
 * deviation sqrt(m); U(a, b) has mean (a + b) / 2 and variance (b - a)^2 / 12; Exp(mean)
 * has standard deviation equal to its mean. All rngs are seeded, so each test is
 * deterministic; the bounds are wide enough (3-4.5 standard errors, or a chi-square
 * quantile at p = 0.001) that they would only fail for a wrong generator.
 */
import seedrandom from 'seedrandom';
import { describe, expect, it } from 'vitest';
import { ArrivalProcess, makeHandlingSampler, makePointChooser, type Rng } from '../sim/demand.ts';

/** Wraps an rng and counts its draws. */
function countingRng(seed: string): { rng: Rng; draws: () => number } {
  const inner = seedrandom(seed);
  let draws = 0;
  return {
    rng: () => {
      draws++;
      return inner();
    },
    draws: () => draws,
  };
}

function countArrivals(arrivals: ArrivalProcess, rng: Rng, horizonSeconds: number, perHour?: number[]): number {
  let count = 0;
  let previous = -1;
  let increasing = true;
  for (;;) {
    const t = arrivals.next(rng);
    if (!(t > previous)) increasing = false;
    previous = t;
    if (t >= horizonSeconds) {
      expect(increasing).toBe(true);
      return count;
    }
    if (perHour) perHour[Math.floor(t / 3600)]++;
    count++;
  }
}

describe('ArrivalProcess', () => {
  it('with a constant rate, the count over 200 hours is within 3 sd of the Poisson mean', () => {
    const tasksPerHour = 600;
    const hours = 200;
    const mean = tasksPerHour * hours;
    const { rng, draws } = countingRng('arrivals-constant');
    const count = countArrivals(new ArrivalProcess(tasksPerHour, null), rng, hours * 3600);
    expect(Math.abs(count - mean)).toBeLessThan(3 * Math.sqrt(mean));
    // One exponential draw per arrival (the last one crossed the horizon).
    expect(draws()).toBe(count + 1);
  });

  it('with a profile, the count follows the hourly multipliers and zero-rate hours stay empty', () => {
    const tasksPerHour = 400;
    const profile = [1, 0, 2.5, 0.5];
    const cycles = 50;
    const hours = profile.length * cycles;
    const perHour = new Array<number>(hours).fill(0);
    const count = countArrivals(new ArrivalProcess(tasksPerHour, profile), seedrandom('arrivals-profile'), hours * 3600, perHour);
    const mean = tasksPerHour * (1 + 0 + 2.5 + 0.5) * cycles; // 80 000
    expect(Math.abs(count - mean)).toBeLessThan(3 * Math.sqrt(mean));
    for (let phase = 0; phase < profile.length; phase++) {
      let inPhase = 0;
      for (let h = phase; h < hours; h += profile.length) inPhase += perHour[h];
      const expected = tasksPerHour * profile[phase] * cycles;
      if (expected === 0) expect(inPhase).toBe(0);
      else expect(Math.abs(inPhase - expected)).toBeLessThan(3 * Math.sqrt(expected));
    }
  });

  it('with a very low rate and long idle stretches, gaps still average 1 / rate', () => {
    // 0.5 tasks per hour, only in the first hour of each day: one task every 2 days on average.
    const profile = [1, ...new Array<number>(23).fill(0)];
    const sparse = new ArrivalProcess(0.5, profile);
    const rng = seedrandom('arrivals-sparse');
    const arrivals = 2000;
    let t = 0;
    let outsideFirstHour = 0;
    for (let i = 0; i < arrivals; i++) {
      t = sparse.next(rng);
      if (t % 86_400 >= 3600) outsideFirstHour++;
    }
    expect(outsideFirstHour).toBe(0);
    const days = t / 86_400;
    const expectedDays = arrivals * 2;
    // The arrival count in `days` is Poisson(days / 2): the horizon for n arrivals has sd sqrt(n) * 2 days.
    expect(Math.abs(days - expectedDays)).toBeLessThan(3 * Math.sqrt(arrivals) * 2);
  });

  it('matches a plain hour-by-hour inversion of the cumulative rate, draw for draw', () => {
    // Reference: walk hour by hour without skipping whole profile cycles.
    const tasksPerHour = 0.3;
    const profile = [0, 2, 0, 0, 1];
    const reference = (previous: number, exponential: number): number => {
      let remaining = exponential;
      let t = previous;
      for (;;) {
        const hour = Math.floor(t / 3600);
        const rate = (tasksPerHour * profile[hour % profile.length]) / 3600;
        const end = (hour + 1) * 3600;
        if (rate > 0 && remaining <= rate * (end - t)) return t + remaining / rate;
        remaining -= rate * (end - t);
        t = end;
      }
    };
    const sparse = new ArrivalProcess(tasksPerHour, profile);
    const rng = seedrandom('reference');
    const mirror = seedrandom('reference');
    let expected = 0;
    for (let i = 0; i < 500; i++) {
      expected = reference(expected, -Math.log(1 - mirror()));
      const t = sparse.next(rng);
      expect(Math.abs(t - expected)).toBeLessThan(1e-6 * Math.max(1, expected));
    }
  });

  it('keeps no state outside the process: two processes run side by side give what each gives alone', () => {
    // Reference: one process alone on its own stream. Then two processes on the same seed
    // (and a third on another seed) advanced in turn must each reproduce it; shared state
    // (a module-level clock or generator) would shift one of them.
    const alone = new ArrivalProcess(120, [1, 0.5]);
    const aloneRng = seedrandom('same');
    const reference = Array.from({ length: 100 }, () => alone.next(aloneRng));
    const a = new ArrivalProcess(120, [1, 0.5]);
    const b = new ArrivalProcess(120, [1, 0.5]);
    const c = new ArrivalProcess(120, [1, 0.5]);
    const rngA = seedrandom('same');
    const rngB = seedrandom('same');
    const rngC = seedrandom('other');
    const fromC: number[] = [];
    for (let i = 0; i < 100; i++) {
      expect(a.next(rngA)).toBe(reference[i]);
      fromC.push(c.next(rngC));
      expect(b.next(rngB)).toBe(reference[i]);
    }
    expect(fromC).not.toEqual(reference);
  });

  it('rejects a profile without a positive multiplier', () => {
    expect(() => new ArrivalProcess(10, [0, 0])).toThrow(RangeError);
    expect(() => new ArrivalProcess(0, null)).toThrow(RangeError);
  });
});

describe('makePointChooser', () => {
  const cells = Int32Array.from([11, 12, 15, 19, 30]);

  /** Pearson chi-square statistic of observed counts against expected proportions. */
  function chiSquare(observed: Map<number, number>, expected: number[], draws: number): number {
    let statistic = 0;
    for (let i = 0; i < cells.length; i++) {
      const e = expected[i] * draws;
      const o = observed.get(cells[i]) ?? 0;
      statistic += ((o - e) * (o - e)) / e;
    }
    return statistic;
  }

  function tally(choose: (rng: Rng) => number, rng: Rng, draws: number): Map<number, number> {
    const counts = new Map<number, number>();
    for (let i = 0; i < draws; i++) {
      const cell = choose(rng);
      counts.set(cell, (counts.get(cell) ?? 0) + 1);
    }
    return counts;
  }

  // Chi-square 0.999 quantile with 4 degrees of freedom (any statistics table): 18.467.
  const chiSquare4At999 = 18.467;

  it('Zipf frequencies match the normalized weights 1/(i+1)^skew', () => {
    const skew = 0.8;
    const weights = Array.from(cells, (_cell, i) => 1 / Math.pow(i + 1, skew));
    const total = weights.reduce((a, b) => a + b, 0);
    const draws = 100_000;
    const { rng, draws: used } = countingRng('zipf');
    const counts = tally(makePointChooser(cells, { kind: 'zipf', skew }), rng, draws);
    expect(used()).toBe(draws);
    expect(chiSquare(counts, weights.map((w) => w / total), draws)).toBeLessThan(chiSquare4At999);
    // The first point is the most popular: 1 / H(5, 0.8) = 0.3289...
    expect((counts.get(11) ?? 0) / draws).toBeCloseTo(weights[0] / total, 2);
  });

  it('uniform choice covers every point evenly', () => {
    const draws = 50_000;
    const counts = tally(makePointChooser(cells, { kind: 'uniform' }), seedrandom('uniform-points'), draws);
    expect(chiSquare(counts, new Array(5).fill(0.2), draws)).toBeLessThan(chiSquare4At999);
  });

  it('explicit weights are followed and zero-weight points are never chosen', () => {
    const weights = new Map([
      [11, 3],
      [15, 1],
      [30, 0],
    ]);
    const draws = 40_000;
    const counts = tally(makePointChooser(cells, { kind: 'weights', weights }), seedrandom('weights'), draws);
    expect(counts.get(12)).toBeUndefined();
    expect(counts.get(19)).toBeUndefined();
    expect(counts.get(30)).toBeUndefined();
    // Binomial(40 000, 0.75): sd = sqrt(n p (1-p)) = 86.6.
    expect(Math.abs((counts.get(11) ?? 0) - 30_000)).toBeLessThan(3 * 86.6);
  });

  it('rejects weights on a cell that is not offered', () => {
    expect(() => makePointChooser(cells, { kind: 'weights', weights: new Map([[99, 1]]) })).toThrow(RangeError);
  });
});

describe('makeHandlingSampler', () => {
  const draws = 100_000;

  function meanTicks(sample: (rng: Rng) => number, rng: Rng): number {
    let sum = 0;
    let wholeNonNegative = true;
    for (let i = 0; i < draws; i++) {
      const ticks = sample(rng);
      if (!Number.isInteger(ticks) || ticks < 0) wholeNonNegative = false;
      sum += ticks;
    }
    expect(wholeNonNegative).toBe(true);
    return sum / draws;
  }

  it('fixed handling is exact, rounded to ticks, and draws nothing', () => {
    const { rng, draws: used } = countingRng('fixed');
    const sample = makeHandlingSampler({ dist: 'fixed', seconds: 4 }, 1.5);
    for (let i = 0; i < 10; i++) expect(sample(rng)).toBe(3); // round(4 / 1.5) = round(2.67)
    expect(used()).toBe(0);
    expect(makeHandlingSampler({ dist: 'fixed', seconds: 0 }, 1)(rng)).toBe(0);
  });

  it('uniform handling has mean (min + max) / 2 and one draw per call', () => {
    // U(2, 6) s: mean 4 s, sd 4 / sqrt(12) = 1.155 s; standard error over 1e5 draws 0.0037 s.
    const tickSeconds = 0.01;
    const { rng, draws: used } = countingRng('uniform-handling');
    const mean = meanTicks(makeHandlingSampler({ dist: 'uniform', min: 2, max: 6 }, tickSeconds), rng) * tickSeconds;
    expect(used()).toBe(draws);
    expect(Math.abs(mean - 4)).toBeLessThan(4.5 * (4 / Math.sqrt(12) / Math.sqrt(draws)) + tickSeconds / 2);
  });

  it('exponential handling has the given mean and one draw per call', () => {
    // Exp(mean 3 s): sd 3 s; standard error over 1e5 draws 0.0095 s.
    const tickSeconds = 0.01;
    const { rng, draws: used } = countingRng('exponential-handling');
    const mean = meanTicks(makeHandlingSampler({ dist: 'exponential', mean: 3 }, tickSeconds), rng) * tickSeconds;
    expect(used()).toBe(draws);
    expect(Math.abs(mean - 3)).toBeLessThan(4.5 * (3 / Math.sqrt(draws)) + tickSeconds / 2);
  });

  it('a degenerate uniform still consumes one draw, keeping streams in step', () => {
    const { rng, draws: used } = countingRng('degenerate');
    const sample = makeHandlingSampler({ dist: 'uniform', min: 5, max: 5 }, 1);
    expect(sample(rng)).toBe(5);
    expect(sample(rng)).toBe(5);
    expect(used()).toBe(2);
  });
});
