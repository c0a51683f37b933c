/**
 * Every policy under charging, breakdowns and per-station handling on the bundled halls:
 * the independent validator counts no vertex or swap collision and no illegal step (Stern
 * et al., SoCS 2019 definitions), the engine's conservation check holds (it throws), and the
 * upkeep really happened (charges, breakdowns). Batteries and breakdowns here are much
 * harsher than a real site's, so that every transition occurs often in a short run.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parseScenarioText } from '../scenarios/load.ts';
import { policies } from '../policies/registry.ts';
import { runReplications } from '../experiments/replications.ts';
import type { Scenario } from '../sim/model.ts';

const shift = parseScenarioText(readFileSync('scenarios/demo-sortation-shift.yaml', 'utf8'), 'scenarios/demo-sortation-shift.yaml');
const fulfillmentText = readFileSync('scenarios/demo-fulfillment.yaml', 'utf8').replace('#.H...H...H...H...H...H........#', '#.H...H...H...H...H...H...CCC..#');
const harsh = `fleet:\n  robots: 16\n  battery: { runHours: 0.5, chargeHours: 0.2, chargeBelow: 0.3, chargeUpTo: 0.8 }\nfaults:\n  breakdowns: { mtbfHours: 0.5, mttrMinutes: 3 }\n`;
const fulfillment = parseScenarioText(fulfillmentText.replace('fleet: { robots: 16 }\n', harsh), 'scenarios/demo-fulfillment.yaml');

function harshShift(): Scenario {
  return {
    ...shift,
    fleet: { robots: 24, battery: { runHours: 0.5, chargeHours: 0.2, chargeBelow: 0.3, chargeUpTo: 0.8 } },
    faults: { breakdowns: { timeToFailure: { dist: 'exponential', mean: 1800 }, repair: { dist: 'exponential', mean: 180 } } },
  };
}

const sum = (values: Float64Array) => values.reduce((s, v) => s + v, 0);

describe.each([
  ['demo sortation hall with chargers', harshShift],
  ['demo goods-to-person floor with chargers', () => fulfillment],
] as const)('%s', (_name, make) => {
  it.each(policies.map((p) => p.name))('%s: 0 collisions, tasks conserved, robots charged and broke down', (policy) => {
    const base = make();
    const scenario: Scenario = { ...base, policy: { name: policy, options: {} }, run: { ...base.run, hours: 0.75, replications: 1 } };
    const [record] = runReplications(scenario);
    expect(record.collisions, record.collisionExamples.join('; ')).toBe(0);
    expect(record.illegalSteps).toBe(0);
    expect(record.delivered).toBeGreaterThan(0);
    const upkeep = record.upkeep!;
    expect(sum(upkeep.metrics.chargesStarted)).toBeGreaterThan(5);
    expect(sum(upkeep.metrics.failures)).toBeGreaterThan(5);
    // Every robot-tick is in exactly one class of the robot-time split.
    const m = record.metrics;
    let ticks = sum(upkeep.metrics.chargingRobotTicks) + sum(upkeep.metrics.brokenRobotTicks);
    for (let i = 0; i < m.intervalCount * 5; i++) ticks += m.robotTicks[i];
    expect(ticks).toBe(scenario.fleet.robots * record.endTick);
  });
});
