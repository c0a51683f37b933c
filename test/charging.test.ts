/**
 * Charging against Groover's cycle-time method (Automation, Production Systems, and
 * Computer-Integrated Manufacturing, ch. 10): a vehicle's throughput is 3600 / Tc times its
 * availability, here the share of time it is not going to, waiting for or sitting on a
 * charger, computed by hand from the run, charge and travel-to-charger times.
 */
import { describe, expect, it } from 'vitest';
import { makeScenario } from './helpers.ts';
import { runReplications } from '../experiments/replications.ts';
import { summarize } from '../reports/summary.ts';
import type { Scenario } from '../sim/model.ts';
import { parseScenarioText } from '../scenarios/load.ts';
import { renderRunTable } from '../reports/console-table.ts';
import { handAvailability } from '../experiments/availability.ts';
import { parseLayout } from '../sim/layout.ts';
import { DistanceTables } from '../sim/distance-table.ts';

// One robot, one pickup P (1:1), one drop D (8:1) 7 cells apart, parking H (1:2) under P,
// a charger C (8:2) under D. Pickup 3 s, drop 2 s; 1 m cells at 1 m/s: ticks are seconds.
const lane = `
##########
#P......D#
#H######C#
##########`;

describe('one saturated robot with a deterministic battery (Groover cycle time x availability)', () => {
  // Without charging: Tc = 3 + 7 + 2 + 7 = 19 s, throughput 3600 / 19 per hour.
  const cycleSeconds = 19;
  // Battery: a full charge lasts runHours = 1 h (3600 s of any activity), a full charge
  // takes chargeHours = 0.25 h (900 s), so charging from l to u takes (u - l) x 900 s.
  // chargeUpTo u = 0.9, chargeBelow b = 0.195: the robot works (u - b) x 3600 = 2538 s on
  // a charge, then finishes the task it holds and goes to charge.
  //
  // One charge cycle, from leaving the charger at 0.9:
  //  - first task: C -> D -> ... -> P is 8 cells, then 3 + 7 + 2: delivered 20 s after the charge;
  //  - then one delivery every 19 s: the k-th at 20 + 19 (k - 1) = 19 k + 1 s;
  //  - the charge falls to b at 2538 s, during task n = 134 (19 x 133 + 1 = 2528 < 2538 <=
  //    19 x 134 + 1 = 2547), which the robot finishes at D at 2547 s;
  //  - D -> C is 1 cell: plugged in at 2548 s with 0.9 - 2548 / 3600 left;
  //  - charging back to 0.9 takes 2548 / 3600 x 900 = 637 s.
  // Cycle L = 2548 + 637 = 3185 s with n = 134 deliveries. By hand (Groover's availability):
  //   work 134 x 19 = 2546 s, travel to and from the charger beyond the work 1 + 1 = 2 s,
  //   charging 637 s: A = 2546 / (2546 + 2 + 637) = 2546 / 3185.
  const deliveriesPerCycle = 134;
  const chargeCycleSeconds = 2546 + 2 + 637;
  const availability = (deliveriesPerCycle * cycleSeconds) / chargeCycleSeconds;

  // The first cycle starts from a full battery at H: it ends when the first charge is done
  // (at 3538 s: 0.805 x 3600 = 2898 s to reach b, the 152nd delivery at 13 + 19 x 151 =
  // 2882 s is before it, the 153rd at 2901 s after it; plugged in at 2902 s with 698/3600
  // left, charged by (3240 - 698) / 4 = 635.5 -> 636 s). Sample intervals of one cycle each
  // and a warm-up of two of them (6370 s) leave only whole steady cycles, and every
  // interval of length L in a periodic schedule holds exactly n deliveries.
  const scenario = (policy: string): Scenario => ({
    ...makeScenario({
      layout: lane,
      robots: 1,
      policy,
      pickupSeconds: 3,
      dropSeconds: 2,
      hours: (12 * chargeCycleSeconds) / 3600,
      sampleSeconds: chargeCycleSeconds,
      warmup: (2 * chargeCycleSeconds) / 3600,
    }),
    fleet: { robots: 1, battery: { runHours: 1, chargeHours: 0.25, chargeBelow: 0.195, chargeUpTo: 0.9 } },
  });

  it.each(['token-passing', 'pibt', 'greedy-reactive', 'flow-batch'])('%s: throughput = 3600 / Tc x A by hand', (policy) => {
    const records = runReplications(scenario(policy));
    expect(records[0].collisions).toBe(0);
    const { summary } = summarize(scenario(policy), records, 0);
    expect(summary.throughputPerHour.mean).toBeCloseTo((3600 / cycleSeconds) * availability, 9);
    expect(summary.throughputPerHour.mean).toBeCloseTo((deliveriesPerCycle * 3600) / chargeCycleSeconds, 9);
    // Charging time per cycle: D -> C (1 s) and the charge (637 s); the C -> D leg belongs to the next task.
    expect(summary.robotTime.charging!.mean).toBeCloseTo((1 + 637) / chargeCycleSeconds, 9);
    // One charger, charging 637 of every 3185 s; one charge per cycle.
    expect(summary.charging!.chargerUtilisation.mean).toBeCloseTo(637 / chargeCycleSeconds, 9);
    expect(summary.charging!.chargesPerHour.mean).toBeCloseTo(3600 / chargeCycleSeconds, 9);
    expect(summary.charging!.ranFlat).toBe(0);
    expect(summary.charging!.warning).toBeNull();
  });
});

describe('the hand formula\'s availability factor (experiments/availability.ts)', () => {
  it('on the one-robot lane: W = 0.705 x 3600 = 2538 s, detour D -> C -> P less D -> P = 1 + 8 - 7 = 2 s, charge (2538 + 2) / 4 = 635 s', () => {
    const scenario: Scenario = {
      ...makeScenario({ layout: lane, robots: 1, pickupSeconds: 3, dropSeconds: 2 }),
      fleet: { robots: 1, battery: { runHours: 1, chargeHours: 0.25, chargeBelow: 0.195, chargeUpTo: 0.9 } },
      faults: { breakdowns: { timeToFailure: { dist: 'exponential', mean: 7200 }, repair: { dist: 'exponential', mean: 1800 } } },
    };
    const layout = parseLayout(lane);
    const hand = handAvailability(scenario, layout, new DistanceTables(layout));
    expect(hand.workSecondsPerCharge).toBeCloseTo(2538, 9);
    expect(hand.detourSeconds).toBe(2);
    expect(hand.chargeSeconds).toBeCloseTo(635, 9);
    expect(hand.charging).toBeCloseTo(2538 / 3175, 12);
    // MTBF 2 h, MTTR 30 min: 0.8 (REFERENCES.md).
    expect(hand.breakdowns).toBeCloseTo(0.8, 12);
    expect(hand.total).toBeCloseTo(0.8 * (2538 / 3175), 12);
    // Within 0.01% of the simulated cycle's 2546 / 3185 (the robot finishes its last task before charging).
    expect(Math.abs(hand.charging - 2546 / 3185)).toBeLessThan(1e-4);
  });
});

describe('robots queue for a single charger', () => {
  // 9 x 5 hall, pickup 1:1, drops 7:1 and 7:2, parking 1:2 and 1:3, one charger 4:3.
  const yaml = (battery: string) =>
    [
      'layout: |',
      '  #########',
      '  #P.....D#',
      '  #H.....D#',
      '  #H..C...#',
      '  #########',
      'handling: { pickupSeconds: 3, dropSeconds: 2 }',
      `fleet: { robots: 2, battery: ${battery} }`,
      'demand: { kind: saturated }',
      'run: { hours: 6, replications: 2, warmup: 0 }',
      '',
    ].join('\n');

  it('with sane thresholds nobody runs flat and nothing warns', () => {
    // A charge from 0.4 to 0.9 takes 0.5 x 0.25 h = 7.5 min while the other robot works
    // 0.5 x 0.5 h = 15 min: the charger keeps up, so nobody should run flat.
    const scenario = parseScenarioText(yaml('{ runHours: 0.5, chargeHours: 0.25, chargeBelow: 0.4, chargeUpTo: 0.9 }'), null);
    const records = runReplications(scenario);
    const { summary } = summarize(scenario, records, 0);
    expect(records.every((r) => r.collisions === 0)).toBe(true);
    expect(summary.charging!.ranFlat).toBe(0);
    expect(summary.charging!.warning).toBeNull();
    // Each robot charges about every 15 + 7.5 min: more than 2 x 2 charges per hour for the two.
    expect(summary.charging!.chargesPerHour.mean).toBeGreaterThan(4);
  });

  it('with thresholds that cannot work, robots run flat and the summary and table warn', () => {
    // Charging from 0.05 to full takes 0.95 x 2 h = 1.9 h, the other robot's 0.05 x 0.5 h
    // = 1.5 min of reserve is gone long before: it runs flat in the queue.
    const scenario = parseScenarioText(yaml('{ runHours: 0.5, chargeHours: 2, chargeBelow: 0.05, chargeUpTo: 1 }'), null);
    const records = runReplications(scenario);
    const { summary } = summarize(scenario, records, 0);
    expect(summary.charging!.ranFlat).toBeGreaterThan(0);
    expect(summary.charging!.warning).toMatch(/ran flat .*throughput is optimistic; raise fleet\.battery\.chargeBelow or add chargers/);
    expect(summary.charging!.queueRobots.mean).toBeGreaterThan(0);
    expect(renderRunTable(summary)).toMatch(/\nwarning: \d+ robots? ran flat/);
  });
});
