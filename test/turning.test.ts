import { describe, expect, it } from 'vitest';
import path from 'node:path';
import { makeScenario } from './helpers.ts';
import { runReplications } from '../experiments/replications.ts';
import { summarize } from '../reports/summary.ts';
import { loadScenarioFile } from '../scenarios/load.ts';
import { turnTicksOf, turnsLowerBound, quarterTurns } from '../sim/headings.ts';
import type { PolicyFactory } from '../sim/policy.ts';
import { tokenPassing } from '../policies/token-passing/index.ts';
import { prepareSetup } from '../experiments/replications.ts';
import { runReplication } from '../sim/engine.ts';

const policies = ['token-passing', 'token-passing-swaps', 'flow-batch', 'greedy-reactive', 'pibt'];
const scenariosFolder = path.join(import.meta.dirname, '..', 'scenarios');

// One robot on an L-shaped one-lane route: P at (1, 1), east 6 cells to the corner (7, 1),
// south 3 cells to D at (7, 4); parking H below P. Forward-only, the robot turns on every
// cycle: at P from facing west to east (2 quarter turns), at the corner east to south (1),
// at D south to north (2), at the corner north to west (1): k = 6 quarter turns per cycle.
const lRoute = `
#########
#P......#
#H#####.#
#######.#
#######D#
#########`;

describe('turning in place: cycle time of one robot (Groover, Automation, Production Systems and CIM, ch. 10)', () => {
  for (const turnSeconds of [1, 2]) {
    // Hand formula with the turns in the travel term (common practice):
    // Tc = load 3 s + loaded 9 m / (1 m/s) + unload 2 s + empty 9 m / (1 m/s) + 6 x turnSeconds.
    const cycleSeconds = 3 + 9 + 2 + 9 + 6 * turnSeconds;
    for (const policy of policies) {
      it(`${policy}, turnSeconds ${turnSeconds}: saturated throughput equals 3600 / (${23} + 6 x ${turnSeconds}) s exactly, turning counted as travel`, () => {
        const scenario = makeScenario({
          layout: lRoute,
          robots: 1,
          policy,
          pickupSeconds: 3,
          dropSeconds: 2,
          turnSeconds,
          hours: (100 * cycleSeconds) / 3600,
          sampleSeconds: cycleSeconds,
          warmup: cycleSeconds / 3600,
        });
        const records = runReplications(scenario);
        expect(records[0].collisions).toBe(0);
        expect(records[0].illegalSteps).toBe(0);
        const { summary } = summarize(scenario, records, 0);
        expect(summary.throughputPerHour.mean).toBeCloseTo(3600 / cycleSeconds, 9);
        expect(summary.throughputPerHour.halfWidth).toBeCloseTo(0, 9);
        // Loaded: 2 + 1 quarter turns and 9 cells per cycle; handling 5 s.
        expect(summary.robotTime.loaded.mean).toBeCloseTo((9 + 3 * turnSeconds) / cycleSeconds, 9);
        expect(summary.robotTime.handling.mean).toBeCloseTo(5 / cycleSeconds, 9);
        expect(summary.robotTime.waiting.mean).toBeCloseTo(0, 9);
        // About 6 quarter turns per cycle over the run (the first cycle starts facing north at H).
        expect(Math.abs(records[0].execution!.quarterTurns - 6 * records[0].delivered)).toBeLessThanOrEqual(6);
      });
    }
  }
});

describe('turning time in ticks (sim/headings.ts)', () => {
  it('rounds a turn time that is not a whole number of ticks up (never faster than asked)', () => {
    expect(turnTicksOf(undefined, 1)).toBe(0);
    expect(turnTicksOf(0, 1)).toBe(0);
    expect(turnTicksOf(2, 1)).toBe(2);
    // Ticks of 0.8 s (cellMeters 1.2 at 1.5 m/s): 2 s is 2.5 ticks -> 3 ticks = 2.4 s.
    expect(turnTicksOf(2, 1.2 / 1.5)).toBe(3);
    // Floating-point noise does not add a tick: 1.5 s at 0.5 s ticks is 3 ticks.
    expect(turnTicksOf(1.5, 0.5)).toBe(3);
    expect(turnTicksOf(0.1, 1)).toBe(1);
  });

  it('counts quarter turns around the compass and a lower bound on the turns to a goal (hand-worked)', () => {
    expect(quarterTurns(0, 0)).toBe(0);
    expect(quarterTurns(0, 1)).toBe(1);
    expect(quarterTurns(0, 3)).toBe(1);
    expect(quarterTurns(1, 3)).toBe(2);
    // 10 x 10 grid; goal at (5, 5) = 55.
    const width = 10;
    const at = (x: number, y: number) => y * width + x;
    expect(turnsLowerBound(width, at(5, 5), 2, at(5, 5))).toBe(0);
    expect(turnsLowerBound(width, at(2, 5), 1, at(5, 5))).toBe(0); // due west of it, facing east
    expect(turnsLowerBound(width, at(2, 5), 3, at(5, 5))).toBe(2); // facing away
    expect(turnsLowerBound(width, at(2, 5), 0, at(5, 5))).toBe(1);
    expect(turnsLowerBound(width, at(2, 2), 1, at(5, 5))).toBe(1); // needs east and south, faces east
    expect(turnsLowerBound(width, at(2, 2), 3, at(5, 5))).toBe(2); // faces west: south, then east
    expect(turnsLowerBound(width, at(2, 2), 0, at(5, 5))).toBe(2); // faces north: east, then south
  });
});

/** The run summary as JSON without its wall-clock part. */
function summaryJson(scenario: ReturnType<typeof loadScenarioFile>): string {
  const records = runReplications(scenario);
  const { summary } = summarize(scenario, records, 0);
  const { timing: _timing, ...rest } = summary;
  return JSON.stringify(rest);
}

describe('turnSeconds 0 keeps the behaviour without turning', () => {
  for (const policy of policies) {
    it(`${policy} on the demo hall: turnSeconds 0 gives byte-identical JSON (outside timing) to a scenario without it`, () => {
      const file = path.join(scenariosFolder, 'demo-sortation.yaml');
      const plain = loadScenarioFile(file, { policy, hours: 0.5, replications: 2 });
      const zero = loadScenarioFile(file, { policy, hours: 0.5, replications: 2, fields: [{ path: ['units', 'turnSeconds'], value: 0, label: 'test: units.turnSeconds' }] });
      expect(zero.units.turnSeconds).toBe(0);
      expect(summaryJson(zero)).toBe(summaryJson(plain));
    });
  }
});

describe('forward-only motion is enforced by the validator, not trusted to the policy', () => {
  it('a planned policy that ignores headings fails with illegal steps (moves against the heading)', () => {
    // Token passing wrapped so that it never turns: its plans assume turns, its robots
    // then move sideways or backwards.
    const noTurns: PolicyFactory<any> = {
      ...tokenPassing,
      create(context, options) {
        const inner = tokenPassing.create(context, options);
        return { step: (tick, moves) => inner.step(tick, moves) };
      },
    };
    const scenario = makeScenario({ layout: lRoute, robots: 1, pickupSeconds: 3, dropSeconds: 2, turnSeconds: 1, hours: 0.05 });
    const setup = { ...prepareSetup(scenario), policy: noTurns };
    const record = runReplication(setup, 0);
    expect(record.illegalSteps).toBeGreaterThan(0);
    expect(record.collisionExamples.join(' ')).toMatch(/while facing|before its turn ended/);
  });

  it('turning while handling, or turning and moving in one step, is refused and counted as illegal', () => {
    // A policy that asks robot 0 to turn at every step, also while it picks up.
    const scenario = makeScenario({ layout: lRoute, robots: 1, pickupSeconds: 3, dropSeconds: 2, turnSeconds: 1, hours: 0.02 });
    const turner: PolicyFactory<any> = {
      ...tokenPassing,
      create(context, options) {
        const inner = tokenPassing.create(context, options);
        return {
          step: (tick, moves, turns) => {
            const wanted = inner.step(tick, moves, turns);
            if (turns && context.world.robotPhase[0] === 2) turns[0] = (context.world.robotHeading[0] + 1) & 3;
            return wanted;
          },
        };
      },
    };
    const record = runReplication({ ...prepareSetup(scenario), policy: turner }, 0);
    expect(record.illegalSteps).toBeGreaterThan(0);
    expect(record.collisionExamples.join(' ')).toMatch(/turned while being loaded or unloaded/);
  });
});

describe('the run summary reports turning, with the modelled turn time', () => {
  it('a turn time that is not whole ticks is modelled rounded up, and the summary says so', () => {
    // Ticks of 1.2 m / 1.5 m/s = 0.8 s; 2 s per quarter turn is 2.5 ticks -> 3 ticks = 2.4 s.
    const scenario = makeScenario({ layout: lRoute, robots: 1, pickupSeconds: 3, dropSeconds: 2, turnSeconds: 2, cellMeters: 1.2, robotSpeedMps: 1.5, hours: 0.2 });
    const records = runReplications(scenario);
    const { summary } = summarize(scenario, records, 0);
    expect(summary.turning!.turnSeconds).toBe(2);
    expect(summary.turning!.modelledTurnSeconds).toBeCloseTo(2.4, 12);
    // Whole run: quarter turns x 3 ticks over the robot's ticks.
    const execution = records[0].execution!;
    expect(summary.turning!.turningFraction.mean).toBeCloseTo((execution.quarterTurns * 3) / records[0].endTick, 12);
    expect(summary.turning!.quarterTurnsPerRobotHour.mean).toBeCloseTo(execution.quarterTurns / (records[0].endTick * 0.8 / 3600), 9);
  });

  it('without turning time the summary has no turning block', () => {
    const scenario = makeScenario({ layout: lRoute, robots: 1, hours: 0.1 });
    const { summary } = summarize(scenario, runReplications(scenario), 0);
    expect(summary.turning).toBeUndefined();
    expect(summary.delays).toBeUndefined();
  });
});
