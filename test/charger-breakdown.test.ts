/**
 * A robot that breaks down on a charger blocks it until its repair (sim/upkeep.ts): the
 * charger must not be handed to the next robot in the queue before then, nor chosen as free
 * by a robot that needs a charge, or that robot drives up to a robot that cannot move and
 * stands (or circles) there for the repair time. A charger is a single server (Kleinrock,
 * Queueing Systems vol. 1, ch. 3): a broken-down robot on it is a server out of service.
 *
 * Invariant checked every tick: no robot heading for its charger (phase ToCharger) has that
 * charger occupied by a broken-down robot. One charger, four robots, short battery, frequent
 * breakdowns: before the rule, charges handed over during a repair gave such ticks on every seed.
 */
import { describe, expect, it } from 'vitest';
import { prepareSetup } from '../experiments/replications.ts';
import { runReplication } from '../sim/engine.ts';
import type { Scenario } from '../sim/model.ts';
import { Phase } from '../sim/world.ts';
import { makeScenario } from './helpers.ts';

const layout = ['###########', '#C.......D#', '#P.......D#', '#H.H...H.H#', '###########'].join('\n');

function scenarioFor(policy: string, seed: number): Scenario {
  return {
    ...makeScenario({
      layout,
      robots: 4,
      policy,
      pickupSeconds: 4,
      dropSeconds: 3,
      hours: 8,
      seed,
      demand: { kind: 'saturated', mode: 'delivery', pickups: { kind: 'uniform' }, drops: { kind: 'uniform' } },
    }),
    fleet: { robots: 4, battery: { runHours: 1, chargeHours: 0.5, chargeBelow: 0.2, chargeUpTo: 0.9 } },
    faults: { breakdowns: { timeToFailure: { dist: 'exponential', mean: 1800 }, repair: { dist: 'fixed', seconds: 1200 } } },
  };
}

describe('a charger with a broken-down robot on it is out of service until the repair', () => {
  for (const policy of ['pibt', 'token-passing']) {
    it(`${policy}: no robot is sent to a charger a broken-down robot stands on (3 seeds x 8 h)`, () => {
      let blockedTicks = 0;
      let brokenOnCharger = 0;
      let charges = 0;
      for (const seed of [1, 2, 3]) {
        const record = runReplication(prepareSetup(scenarioFor(policy, seed)), 0, {
          afterMotion: (_tick, world) => {
            for (let r = 0; r < world.robotCount; r++) {
              const at = world.robotCell[r];
              if (world.robotBroken[r] && world.robotPhase[r] === Phase.Charging) brokenOnCharger++;
              if (world.robotPhase[r] === Phase.Charging && !world.robotBroken[r]) charges++;
              if (world.robotPhase[r] !== Phase.ToCharger) continue;
              const target = world.robotCharger[r];
              const there = target >= 0 ? world.occupant[target] : -1;
              if (there >= 0 && there !== r && world.robotBroken[there] && at !== target) blockedTicks++;
            }
          },
        });
        expect(record.collisions).toBe(0);
      }
      // The case arises (robots break down while charging) and robots still charge.
      expect(brokenOnCharger).toBeGreaterThan(0);
      expect(charges).toBeGreaterThan(0);
      expect(blockedTicks).toBe(0);
    });
  }
});
