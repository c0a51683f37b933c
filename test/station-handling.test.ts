/**
 * Per-station handling (`handling.groups`, `handling.stations`; sim/station-handling.ts):
 * overrides change the cycle exactly as Groover's cycle-time method says (Automation,
 * Production Systems, and Computer-Integrated Manufacturing, ch. 10: Tc = load time +
 * loaded travel + unload time + empty travel), and draws stay in release order on the
 * handling stream, so two policies on one seed see identical handling times (common random
 * numbers).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parseScenarioText } from '../scenarios/load.ts';
import { runReplications } from '../experiments/replications.ts';
import { summarize } from '../reports/summary.ts';
import type { Scenario } from '../sim/model.ts';
import type { World } from '../sim/world.ts';

// One robot at H (1:2), pickup P (1:1), drop D (8:1) 7 cells east.
const lane = ['##########', '#P......D#', '#H########', '##########'];

function laneScenario(handling: string, cycleSeconds: number): Scenario {
  const yaml = [
    'layout: |',
    ...lane.map((row) => `  ${row}`),
    `handling: ${handling}`,
    'fleet: { robots: 1 }',
    'demand: { kind: saturated }',
    `run: { hours: ${(100 * cycleSeconds) / 3600}, replications: 1, warmup: ${cycleSeconds / 3600}, sampleSeconds: ${cycleSeconds} }`,
    '',
  ].join('\n');
  return parseScenarioText(yaml, null);
}

describe('per-station handling in the single-robot cycle (Groover)', () => {
  it('defaults alone: Tc = 3 + 7 + 2 + 7 = 19 s', () => {
    const scenario = laneScenario('{ pickupSeconds: 3, dropSeconds: 2 }', 19);
    const { summary } = summarize(scenario, runReplications(scenario), 0);
    expect(summary.throughputPerHour.mean).toBeCloseTo(3600 / 19, 9);
  });

  it('a group override at the pickup (10 s) and a cell override at the drop (4 s): Tc = 10 + 7 + 4 + 7 = 28 s', () => {
    const scenario = laneScenario("{ pickupSeconds: 3, dropSeconds: 2, groups: { inducts: ['1:1'] }, stations: { inducts: { pickupSeconds: 10 }, '8:1': { dropSeconds: 4 } } }", 28);
    const records = runReplications(scenario);
    const { summary } = summarize(scenario, records, 0);
    expect(summary.throughputPerHour.mean).toBeCloseTo(3600 / 28, 9);
    // Handling is 14 of every 28 s; the split's handling part is the same 14 s per task.
    expect(summary.robotTime.handling.mean).toBeCloseTo(14 / 28, 9);
    expect(summary.leadTimeSplit.handlingSeconds.mean).toBeCloseTo(14, 9);
  });
});

describe('common random numbers with per-station handling', () => {
  it('token passing and pibt see the same tasks with the same handling times on the demo hall', () => {
    const text = readFileSync('scenarios/demo-sortation-shift.yaml', 'utf8');
    const base = parseScenarioText(text, null);
    expect(base.handling.stations?.size).toBe(2);
    const tasksSeen = (policy: string): string[] => {
      const scenario: Scenario = { ...base, policy: { name: policy, options: {} }, run: { ...base.run, hours: 0.5, replications: 1 } };
      const seen = new Map<string, string>();
      const watch = (_tick: number, world: World) => {
        for (let id = 0; id < world.taskCount; id++) {
          if (world.taskRelease[id] >= 1200) continue; // released in the first 20 minutes: seen by both runs
          const key = `${world.taskRelease[id]}/${world.taskPickup[id]}/${world.taskDrop[id]}/${world.taskPickupTicks[id]}/${world.taskDropTicks[id]}`;
          seen.set(`${id}/${world.taskRelease[id]}`, key);
        }
      };
      runReplications(scenario, undefined, { afterMotion: watch });
      return [...seen.values()].sort();
    };
    const a = tasksSeen('token-passing');
    const b = tasksSeen('pibt');
    expect(a.length).toBeGreaterThan(200);
    expect(b).toEqual(a);
    // The overridden inducts (1:2 and 1:16, uniform 6..10 s) drew their own times; the others kept 4 s.
    const inducts = new Set([2 * 40 + 1, 16 * 40 + 1]);
    for (const key of a) {
      const [, pickup, , pickupTicks] = key.split('/').map(Number);
      if (inducts.has(pickup)) {
        expect(pickupTicks).toBeGreaterThanOrEqual(6);
        expect(pickupTicks).toBeLessThanOrEqual(10);
      } else expect(pickupTicks).toBe(4);
    }
  });
});
