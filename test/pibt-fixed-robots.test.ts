/**
 * PIBT around robots that stand still for long: broken down, or charging on a charger in an
 * aisle (policies/pibt/detour-fields.ts). Deliveries are checked against Groover's cycle-time
 * method (Groover, Automation, Production Systems, and Computer-Integrated Manufacturing,
 * ch. 10: Tc = load + unload + loaded travel / speed + empty travel / speed, a vehicle's
 * deliveries over a time T are T / Tc), with the travel of the way round the fixed robot
 * counted by hand on the floor's drawing.
 */
import { describe, expect, it } from 'vitest';
import { prepareSetup } from '../experiments/replications.ts';
import { loadScenarioFile } from '../scenarios/load.ts';
import { runReplication, type ReplicationRecord } from '../sim/engine.ts';
import type { Scenario, TraceTask } from '../sim/model.ts';
import { Phase } from '../sim/world.ts';
import { makeScenario } from './helpers.ts';
import { summarize } from '../reports/summary.ts';

// A ring: the short way from P (1:1) to D (7:1) runs along row 1 (6 cells); the long way goes
// down column 1, along row 3 and up column 7: 2 + 6 + 2 = 10 cells.
const width = 9;
const cell = (x: number, y: number) => y * width + x;

function withoutTiming(record: ReplicationRecord): string {
  const { timing: _timing, ...rest } = record;
  return JSON.stringify(rest, (_key, value) => (ArrayBuffer.isView(value) ? Array.from(value as unknown as ArrayLike<number>) : value));
}

describe('pibt: a broken-down robot blocks the short way', () => {
  // Parking H: 4:1 (robot 0, on the short way) and 1:2 (robot 1, next to P). Pickup 4 s,
  // drop 3 s; 1 m cells at 1 m/s, so ticks are seconds.
  const layout = ['#########', '#P..H..D#', '#H#####.#', '#.......#', '#########'].join('\n');
  // One task at 0 s (robot 1 is nearer P: 1 cell against 3), then a backlog from 2 s on.
  const tasks: TraceTask[] = [{ releaseSeconds: 0, pickup: cell(1, 1), drop: cell(7, 1) }];
  for (let i = 0; i < 400; i++) tasks.push({ releaseSeconds: 2, pickup: cell(1, 1), drop: cell(7, 1) });
  const scenario = makeScenario({
    layout,
    robots: 2,
    policy: 'pibt',
    pickupSeconds: 4,
    dropSeconds: 3,
    hours: 1,
    // No operator relocation: the broken robot stays where it is.
    recoverySeconds: 0,
    demand: { kind: 'trace', mode: 'delivery', tracePath: 'inline', tasks },
  });

  it('the robot drives the long way round, one delivery per hand-computed detour cycle', () => {
    // Robot 0 breaks down at the first motion tick, resting on its parking spot 4:1, and is
    // never repaired: the world's broken flag, as sim/upkeep.ts sets it at a failure (no task
    // to hand back: it is idle), set here so that no random failure time decides where it stands.
    let startCell = -1;
    const record = runReplication(prepareSetup(scenario), 0, {
      afterMotion: (_tick, world) => {
        if (startCell >= 0) return;
        startCell = world.robotCell[0];
        world.robotBroken[0] = 1;
        world.version++;
      },
    });
    expect(startCell).toBe(cell(4, 1));
    expect(record.collisions).toBe(0);
    // By hand: robot 1 steps onto P at 1 s, loads to 5 s, drives 10 cells round (arrives at
    // D at 15 s), drops to 18 s: the first delivery. Then Tc = 10 + 4 + 10 + 3 = 27 s per
    // delivery: the k-th at 18 + 27 (k - 1) s; the 133rd at 3582 s, the 134th after the hour.
    // (The short way would give Tc = 6 + 4 + 6 + 3 = 19 s, 189 an hour; a robot that waits at
    // the broken robot delivers nothing.)
    expect(record.delivered).toBe(133);
    expect(record.policyCounters.detourSwitches).toBeGreaterThan(0);
  });
});

describe('pibt: a robot charging on a charger in the aisle', () => {
  // The charger C (4:1) sits on the short way; parking H at 1:2 and 7:2 on the long way.
  const layout = ['#########', '#P..C..D#', '#H#####H#', '#.......#', '#########'].join('\n');
  // Battery: a full charge lasts 2 h, a full charge takes 1 h. Starting charges are staggered
  // (sim/battery.ts): robot 0 of 2 starts at 0.2 + 0.8 x 1/2 = 0.6 and falls to 0.2 at
  // 0.4 x 2 h = 48 min, robot 1 starts full and falls to 0.2 only at 96 min; robot 0 then
  // charges to 0.9 for about 0.7 h while robot 1 works alone.
  const scenario: Scenario = {
    ...makeScenario({
      layout,
      robots: 2,
      policy: 'pibt',
      pickupSeconds: 4,
      dropSeconds: 3,
      hours: 1.6,
      recoverySeconds: 0,
      demand: { kind: 'saturated', mode: 'delivery', pickups: { kind: 'uniform' }, drops: { kind: 'uniform' } },
    }),
    fleet: { robots: 2, battery: { runHours: 2, chargeHours: 1, chargeBelow: 0.2, chargeUpTo: 0.9 } },
  };

  it('while it charges, the other robot delivers once per long-way cycle (Groover)', () => {
    let chargeStart = -1;
    let chargeEnd = -1;
    let previousPhase = -1;
    const drops: number[] = [];
    const record = runReplication(prepareSetup(scenario), 0, {
      afterMotion: (tick, world) => {
        const charging = world.robotPhase[0] === Phase.Charging;
        if (charging && chargeStart < 0) {
          expect(world.robotCell[0]).toBe(cell(4, 1));
          chargeStart = tick;
        }
        if (!charging && chargeStart >= 0 && chargeEnd < 0) chargeEnd = tick;
        // Robot 1 finished a drop since the last motion tick.
        if (previousPhase === Phase.HandlingDrop && world.robotPhase[1] !== Phase.HandlingDrop) drops.push(tick);
        previousPhase = world.robotPhase[1];
      },
    });
    expect(record.collisions).toBe(0);
    // Robot 0 went to charge after 48 min (plus the task it finished) and charged for about
    // 0.7 h (from a little below 0.2 to 0.9: at least 0.7 x 3600 = 2520 s).
    expect(chargeStart).toBeGreaterThan(0.8 * 3600);
    expect(chargeStart).toBeLessThan(0.8 * 3600 + 60);
    expect(chargeEnd - chargeStart).toBeGreaterThanOrEqual(2520);
    expect(chargeEnd - chargeStart).toBeLessThan(2520 + 60);
    // By hand: Tc = 10 + 4 + 10 + 3 = 27 s by the long way round the charging robot, so the
    // window holds (chargeEnd - chargeStart) / 27 deliveries, give or take the cycle in
    // progress at either end. Waiting at the charger (the static gradient) would give none.
    const inWindow = drops.filter((t) => t > chargeStart && t <= chargeEnd).length;
    console.info(`charging window ${chargeStart}..${chargeEnd} s: ${inWindow} deliveries by the other robot, by hand ${((chargeEnd - chargeStart) / 27).toFixed(1)}`);
    const byHand = (chargeEnd - chargeStart) / 27;
    expect(Math.abs(inWindow - byHand)).toBeLessThanOrEqual(1.5);
    expect(record.policyCounters.detourSwitches).toBeGreaterThan(0);
  });
});

describe('the summary names waiting behind a broken-down robot', () => {
  // One aisle, no way round: D (1:1), parking H 3:1 (robot 0) and 5:1 (robot 1), P (7:1).
  const layout = ['#########', '#D.H.H.P#', '#########'].join('\n');
  const tasks: TraceTask[] = [{ releaseSeconds: 0, pickup: cell(7, 1), drop: cell(1, 1) }];
  const scenario: Scenario = {
    ...makeScenario({
      layout,
      robots: 2,
      policy: 'pibt',
      pickupSeconds: 4,
      dropSeconds: 3,
      hours: 1,
      warmup: 0,
      recoverySeconds: 0,
      demand: { kind: 'trace', mode: 'delivery', tracePath: 'inline', tasks },
    }),
    // Breakdowns configured (so the upkeep records) but none falls due within the hour.
    faults: { breakdowns: { timeToFailure: { dist: 'fixed', seconds: 1e7 }, repair: { dist: 'fixed', seconds: 60 } } },
  };

  it('as a share of robot time, counted by hand from the drawing', () => {
    const record = runReplication(prepareSetup(scenario), 0, {
      afterMotion: (_tick, world) => {
        if (world.robotBroken[0] === 0) {
          world.robotBroken[0] = 1;
          world.version++;
        }
      },
    });
    const { summary } = summarize(scenario, [record], 0);
    // Robot 1 (nearer P: 2 cells against 4) takes the task: on P at 2 s, loads to 6 s,
    // drives west to 4:1 by 9 s and stands there behind the broken robot on 3:1 until the end:
    // 3600 - 9 = 3591 of the 2 x 3600 robot-seconds. No detour exists, so that is all waiting,
    // and all of it behind a broken-down robot, not a deadlock.
    const byHand = 3591 / 7200;
    expect(record.delivered).toBe(0);
    expect(summary.robotTime.waiting.mean).toBeCloseTo(byHand, 3);
    expect(summary.waitingBehindFixedFraction!.mean).toBeCloseTo(byHand, 3);
    expect(summary.deadlocks.mean).toBe(0);
  });

  it('is absent without a battery or breakdowns', () => {
    const plain = { ...scenario, faults: undefined };
    const record = runReplication(prepareSetup(plain), 0);
    expect(summarize(plain, [record], 0).summary.waitingBehindFixedFraction).toBeUndefined();
  });
});

describe('pibt with breakdowns and charging on the demo shift hall', () => {
  const shiftPath = new URL('../scenarios/demo-sortation-shift.yaml', import.meta.url).pathname;
  const demoPath = new URL('../scenarios/demo-sortation.yaml', import.meta.url).pathname;

  it('gives the same record on a rerun (outside timing)', () => {
    const scenario = loadScenarioFile(shiftPath, { policy: 'pibt', hours: 2, replications: 1 });
    const first = runReplication(prepareSetup(scenario), 0);
    const second = runReplication(prepareSetup(scenario), 0);
    expect(first.collisions).toBe(0);
    expect(first.policyCounters.detourFieldBuilds).toBeGreaterThan(0);
    expect(withoutTiming(second)).toBe(withoutTiming(first));
  });

  it('keeps up with 900 tasks/h over 4 h where static distances lost a third of it', () => {
    // Measured before detour fields (same seed, replication 1): 2,950 of 3,639 released
    // tasks delivered in 4 h (689 left open, the backlog growing); the demand of 900/h can
    // only be met if almost every released task is delivered.
    const scenario = loadScenarioFile(shiftPath, { policy: 'pibt', hours: 4, replications: 1 });
    const record = runReplication(prepareSetup(scenario), 0);
    expect(record.collisions).toBe(0);
    expect(record.open).toBeLessThan(60);
  });

  it('without breakdowns or a battery builds no detour field and reports no detour counters', () => {
    // Nothing is ever fixed for long, so no choice can differ from PIBT on static distances
    // (`run --json` on this hall is byte-identical outside timing, checked by hand when the
    // detours were added).
    const scenario = loadScenarioFile(demoPath, { policy: 'pibt', hours: 1, replications: 1 });
    const record = runReplication(prepareSetup(scenario), 0);
    expect(record.policyCounters).not.toHaveProperty('detourSwitches');
    expect(record.policyCounters).not.toHaveProperty('detourFieldBuilds');
  });
});
