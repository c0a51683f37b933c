/**
 * Execution delays (faults.delays): held-back moves under every policy. Planned policies keep
 * each cell's planned passing order (action dependency graph, Hönig et al., IEEE RA-L 2019);
 * reactive ones see a held robot as fixed. The engine's independent validator counts
 * collisions (Stern et al., SoCS 2019 definitions); every replication must have none.
 */
import { describe, expect, it } from 'vitest';
import path from 'node:path';
import { makeScenario } from './helpers.ts';
import { runReplications } from '../experiments/replications.ts';
import { withoutDelays } from '../experiments/fault-baselines.ts';
import { summarize } from '../reports/summary.ts';
import { loadScenarioFile } from '../scenarios/load.ts';
import type { Scenario } from '../sim/model.ts';

const policies = ['token-passing', 'token-passing-swaps', 'flow-batch', 'greedy-reactive', 'pibt'];
const scenariosFolder = path.join(import.meta.dirname, '..', 'scenarios');
const halls = ['demo-sortation.yaml', 'demo-fulfillment.yaml', 'demo-sortation-shift.yaml'];

function withDelays(scenario: Scenario, probabilityPerMove: number, seconds: Scenario['handling']['pickupSeconds'] = { dist: 'exponential', mean: 4 }): Scenario {
  return { ...scenario, faults: { ...scenario.faults, delays: { probabilityPerMove, seconds } } };
}

describe('delays never cause a collision', () => {
  for (const hall of halls) {
    for (const policy of policies) {
      it(`${policy} on ${hall}: 0 collisions and 0 illegal steps at delay probabilities 0, 0.05 and 0.2`, () => {
        const base = loadScenarioFile(path.join(scenariosFolder, hall), { policy, hours: 0.5, replications: 1, warmup: 0 });
        for (const p of [0, 0.05, 0.2]) {
          // checkedReplication (inside runReplications) throws on any collision or illegal step.
          const records = runReplications(withDelays(base, p));
          expect(records[0].collisions).toBe(0);
          expect(records[0].illegalSteps).toBe(0);
          expect(records[0].delivered).toBeGreaterThan(0);
          if (p > 0) expect(records[0].execution!.heldMoves).toBeGreaterThan(0);
        }
      });
    }
  }

  it('with turning too: every policy on the demo hall, turnSeconds 1, delay probability 0.2', () => {
    for (const policy of policies) {
      const base = loadScenarioFile(path.join(scenariosFolder, 'demo-sortation.yaml'), {
        policy,
        hours: 0.5,
        replications: 1,
        warmup: 0,
        fields: [{ path: ['units', 'turnSeconds'], value: 1, label: 'test: units.turnSeconds' }],
      });
      const records = runReplications(withDelays(base, 0.2));
      expect(records[0].collisions).toBe(0);
      expect(records[0].illegalSteps).toBe(0);
      expect(records[0].execution!.quarterTurns).toBeGreaterThan(0);
    }
  });
});

/** The run summary as JSON without its wall-clock part and without the delays block. */
function resultsJson(scenario: Scenario): string {
  const records = runReplications(scenario);
  const { summary } = summarize(scenario, records, 0);
  const { timing: _timing, delays: _delays, ...rest } = summary;
  return JSON.stringify(rest);
}

describe('delay probability 0 gives the results without delays', () => {
  for (const policy of policies) {
    it(`${policy} on the demo hall: identical JSON outside timing and the delays block (planned policies run their dependency graph and keep the plan exactly)`, () => {
      const base = loadScenarioFile(path.join(scenariosFolder, 'demo-sortation.yaml'), { policy, hours: 0.5, replications: 2 });
      const zero = withDelays(base, 0);
      expect(resultsJson(zero)).toBe(resultsJson(base));
      const records = runReplications(zero);
      expect(records[0].execution!.heldMoves).toBe(0);
      expect(records[0].execution!.moveAttempts).toBeGreaterThan(0);
      if (records[0].policyCounters.dependencyWaits !== undefined) expect(records[0].policyCounters.dependencyWaits).toBe(0);
      expect(withoutDelays(zero)).toEqual(base);
    });
  }
});

describe('throughput does not increase with the delay probability', () => {
  for (const policy of policies) {
    it(`${policy}, demo hall, saturated demand: capacity at 0.2 <= at 0.05 <= at 0 (within the intervals)`, () => {
      const base = loadScenarioFile(path.join(scenariosFolder, 'demo-sortation.yaml'), { policy, hours: 1, replications: 3, warmup: 0.25 });
      const saturated: Scenario = { ...base, demand: { kind: 'saturated', mode: 'delivery', pickups: { kind: 'uniform' }, drops: { kind: 'uniform' } } };
      const capacity = (p: number) => summarize(withDelays(saturated, p, { dist: 'fixed', seconds: 3 }), runReplications(withDelays(saturated, p, { dist: 'fixed', seconds: 3 })), 0).summary.throughputPerHour;
      const [c0, c5, c20] = [capacity(0), capacity(0.05), capacity(0.2)];
      // Higher probability: no higher mean beyond the two intervals' half-widths.
      const slack = (a: typeof c0, b: typeof c0) => (a.halfWidth ?? 0) + (b.halfWidth ?? 0);
      expect(c5.mean).toBeLessThanOrEqual(c0.mean + slack(c0, c5));
      expect(c20.mean).toBeLessThanOrEqual(c5.mean + slack(c5, c20));
      // And a 20% chance of 3 s holds costs capacity for real (each move 1.75 ticks on average).
      expect(c20.mean).toBeLessThan(c0.mean);
    });
  }
});

// One robot, one pickup, one drop, 7 cells apart; pickup handling 3 s, drop 2 s (the lane of
// test/engine.test.ts): Tc = 3 + 7 + 2 + 7 = 19 s without delays, 14 moves per cycle.
const lane = `
##########
#P......D#
#H########
##########`;

describe('one robot under delays: the mean cycle time of a geometric number of holds per move', () => {
  // Each move attempt is held with probability p for d s, and tried again after the hold
  // (Ma, Kumar & Koenig, AAAI 2017: independent failures per attempt), so the holds before a
  // move are geometric with mean p / (1 - p): E[Tc] = 19 + 14 x d x p / (1 - p) s, and the
  // long-run throughput is 3600 / E[Tc] (renewal-reward theorem; Ross, Stochastic
  // Processes, ch. 3). p = 0.2, d = 3 s: E[Tc] = 19 + 10.5 = 29.5 s, 122.03 tasks/h.
  const p = 0.2;
  const d = 3;
  const expected = 3600 / (19 + (14 * d * p) / (1 - p));
  for (const policy of policies) {
    it(`${policy}: throughput within its 95% interval of 3600 / E[Tc] = ${expected.toFixed(2)} tasks/h`, () => {
      const scenario = makeScenario({
        layout: lane,
        robots: 1,
        policy,
        pickupSeconds: 3,
        dropSeconds: 2,
        hours: 6,
        replications: 6,
        warmup: 0.1,
        delays: { probabilityPerMove: p, seconds: { dist: 'fixed', seconds: d } },
      });
      const records = runReplications(scenario);
      const { summary } = summarize(scenario, records, 0);
      const t = summary.throughputPerHour;
      expect(Math.abs(t.mean - expected)).toBeLessThanOrEqual(t.halfWidth!);
      // The share of attempts held back estimates p.
      expect(Math.abs(summary.delays!.heldMoveFraction.mean - p)).toBeLessThan(0.01);
    });
  }
});
