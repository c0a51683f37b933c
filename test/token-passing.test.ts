import { describe, expect, it } from 'vitest';
import seedrandom from 'seedrandom';
import { makeScenario } from './helpers.ts';
import { runReplications } from '../experiments/replications.ts';
import { loadScenarioFile } from '../scenarios/load.ts';
import { checkWellFormed, parseLayout } from '../sim/layout.ts';
import type { DemandSpec, TraceTask } from '../sim/model.ts';
import { TokenPassing } from '../policies/token-passing/token-passing.ts';

// One-lane corridor (row 2) with one side pocket at (5,3). Robot 0 starts on H(1,1), robot 1
// on H(8,1). Task A: P(2,1) -> D(6,1); task B: P(7,1) -> D(3,1): the robots must pass each
// other in the lane. REFERENCES.md (MAPF facts): a joint plan lets one robot give way; a
// correct planner solves it (common practice).
const corridor = `
##########
#HPD##DPH#
#........#
#####.####
##########`;
const width = 10;
const at = (x: number, y: number) => y * width + x;

function corridorScenario(policy: string) {
  const tasks: TraceTask[] = [
    { releaseSeconds: 0, pickup: at(2, 1), drop: at(6, 1) },
    { releaseSeconds: 0, pickup: at(7, 1), drop: at(3, 1) },
  ];
  return makeScenario({
    layout: corridor,
    robots: 2,
    policy,
    pickupSeconds: 2,
    dropSeconds: 2,
    demand: { kind: 'trace', mode: 'delivery', tracePath: 'inline', tasks },
    hours: 0.1,
    warmup: 0,
    deadlockSeconds: 30,
  });
}

describe('token passing (Ma, Li, Kumar, Koenig, AAMAS 2017)', () => {
  it('the corridor layout is well-formed', () => {
    expect(checkWellFormed(parseLayout(corridor), 2).wellFormed).toBe(true);
  });

  // flow-batch plans against the same reservations (prioritized planning), so it must pass too.
  for (const policy of ['token-passing', 'token-passing-swaps', 'flow-batch']) {
    it(`${policy}: two robots pass each other in a one-lane corridor with one pocket, without collision`, () => {
      let sawBothInLane = false;
      const records = runReplications(corridorScenario(policy), undefined, {
        afterMotion: (_tick, world) => {
          // Independent of the validator: no two robots ever share a cell.
          expect(world.robotCell[0]).not.toBe(world.robotCell[1]);
          if (Math.floor(world.robotCell[0] / width) === 2 && Math.floor(world.robotCell[1] / width) === 2) sawBothInLane = true;
        },
      });
      const r = records[0];
      expect(r.released).toBe(2);
      expect(r.delivered).toBe(2);
      expect(r.collisions).toBe(0);
      expect(r.metrics.episodes.length).toBe(0);
      expect(sawBothInLane).toBe(true);
    });
  }

  it('completes every task of a finite trace on the well-formed demo hall, at several fleet sizes', () => {
    const demo = loadScenarioFile('scenarios/demo-sortation.yaml');
    const layout = parseLayout(demo.layoutText);
    const random = seedrandom('finite-trace');
    const tasks: TraceTask[] = [];
    for (let i = 0; i < 300; i++) {
      tasks.push({
        releaseSeconds: i * 4,
        pickup: layout.pickups[Math.floor(random() * layout.pickups.length)],
        drop: layout.drops[Math.floor(random() * layout.drops.length)],
      });
    }
    for (const robots of [5, 20, 38]) {
      expect(checkWellFormed(layout, robots).wellFormed).toBe(true);
      const scenario = { ...demo, fleet: { robots }, demand: { kind: 'trace' as const, mode: 'delivery' as const, tracePath: 'inline', tasks }, run: { ...demo.run, hours: 2, replications: 1, warmup: 0 } };
      const [r] = runReplications(scenario);
      expect(r.collisions).toBe(0);
      expect(r.delivered).toBe(300);
      expect(r.metrics.episodes.length).toBe(0);
    }
  });

  it('runs the demo hall under saturated demand with no collision and no deadlock', () => {
    const demo = loadScenarioFile('scenarios/demo-sortation.yaml', { robots: 38, hours: 1, replications: 1 });
    const scenario = { ...demo, demand: { kind: 'saturated' as const, mode: 'delivery' as const, pickups: { kind: 'uniform' as const }, drops: { kind: 'uniform' as const } } };
    const [r] = runReplications(scenario);
    expect(r.collisions).toBe(0);
    expect(r.delivered).toBeGreaterThan(1000);
    expect(r.metrics.episodes.length).toBe(0);
  });

  it('counts the task-seconds a task is held back because its drop ends another robot\'s path (worked by hand)', () => {
    // Two robots on H(1,1) and H(1,2); two tasks released at 0 s, both P(3,1) -> D(7,1),
    // pickup 2 s, drop 1 s, 1 s per cell. Robot 0 takes task 0 at 0 s: 2 cells to P, 2 s
    // pickup, 4 cells to D, 1 s drop; its path ends on D, so task 1 (same drop) may not be
    // taken by robot 1. At 2 + 2 + 4 + 1 = 9 s robot 0 has delivered, rests on D, and takes
    // task 1 itself (tasks ending where it rests are open to it). Held back: task 1 for 9 s.
    const layout = `
#########
#H.P...D#
#H.....D#
#########`;
    const w = 9;
    const trace = (drops: number[]): TraceTask[] => drops.map((drop) => ({ releaseSeconds: 0, pickup: 1 * w + 3, drop }));
    const run = (tasks: TraceTask[]) =>
      runReplications(
        makeScenario({ layout, robots: 2, policy: 'token-passing', pickupSeconds: 2, dropSeconds: 1, demand: { kind: 'trace', mode: 'delivery', tracePath: 'inline', tasks }, hours: 0.05, warmup: 0 }),
      )[0];
    const same = run(trace([1 * w + 7, 1 * w + 7]));
    expect(same.delivered).toBe(2);
    expect(same.collisions).toBe(0);
    expect(same.policyCounters.heldBackTaskSeconds).toBe(9);
    // Different drops: nothing is held back (robot 1 takes task 1 at once).
    const different = run(trace([1 * w + 7, 2 * w + 7]));
    expect(different.delivered).toBe(2);
    expect(different.policyCounters.heldBackTaskSeconds).toBe(0);
  });
});


describe('token passing: fruitless token requests are skipped without changing a choice', () => {
  it('with the skip the saturated demo hall runs exactly as without it, on far fewer requests', () => {
    // Saturated demand on the demo hall: every new task to a drop that ends another robot's
    // path is held back, so idle robots on rest spots find the eligible list empty again and
    // again. Skipping those requests must leave every plan, and so every figure, unchanged.
    const demo = loadScenarioFile('scenarios/demo-sortation.yaml', { robots: 40, hours: 0.5, replications: 1 });
    const scenario = { ...demo, demand: { kind: 'saturated' as const, mode: 'delivery' as const, pickups: { kind: 'uniform' as const }, drops: { kind: 'zipf' as const, skew: 0.6 } } };
    const run = (skip: boolean) => {
      TokenPassing.skipFruitlessRequests = skip;
      try {
        const [r] = runReplications(scenario);
        const { timing: _timing, policyCounters, ...rest } = r;
        const { tokenRequests, ...counters } = policyCounters;
        return { rest, counters, tokenRequests };
      } finally {
        TokenPassing.skipFruitlessRequests = true;
      }
    };
    const skipped = run(true);
    const full = run(false);
    expect(skipped.rest.delivered).toBeGreaterThan(500);
    expect(skipped.rest).toEqual(full.rest);
    expect(skipped.counters).toEqual(full.counters);
    // Many requests of the full run found nothing (the share grows with the run: about 90% over 8 h).
    expect(skipped.tokenRequests).toBeLessThan(0.75 * full.tokenRequests);
  });
});

describe('token passing with swaps: fruitless swap probes are skipped or cut short without changing a choice', () => {
  // Ma et al., AAMAS 2017 (TPTS): a free robot takes another's task only if it reaches the
  // pickup earlier. The probe's shortcuts (the other robot stands on a stop of the task; the
  // pickup leg searched with the other's pickup tick as deadline; the plan reusing the
  // probe's leg) and the requests answered at once (`idleRequest`) must leave every swap,
  // plan and figure as the full probes and requests give them: only the search's own
  // counters may differ.
  const saturated = (file: string, robots: number, hours: number, mode: 'delivery' | 'round-trip', turnSeconds?: number) => {
    const loaded = loadScenarioFile(file, { policy: 'token-passing-swaps', robots, hours, replications: 1 });
    if (loaded.demand.kind === 'trace') throw new Error(`${file}: expected generated demand`);
    const demand: DemandSpec = mode === 'delivery'
      ? { kind: 'saturated', mode, pickups: { kind: 'uniform' }, drops: { kind: 'zipf', skew: 0.6 } }
      : { kind: 'saturated', mode, pickups: loaded.demand.pickups, drops: loaded.demand.drops };
    return { ...loaded, units: turnSeconds === undefined ? loaded.units : { ...loaded.units, turnSeconds }, demand };
  };
  const run = (scenario: ReturnType<typeof saturated>, skip: boolean) => {
    TokenPassing.skipFruitlessProbes = skip;
    TokenPassing.skipFruitlessRequests = skip;
    try {
      const [r] = runReplications(scenario);
      const { timing: _timing, policyCounters, ...rest } = r;
      const { searches, expansions, unreachableSkips: _u, swapProbesSkipped, deadlineStops, idleRequests, ...counters } = policyCounters;
      return { rest, counters, searches, expansions, swapProbesSkipped, deadlineStops, idleRequests };
    } finally {
      TokenPassing.skipFruitlessProbes = true;
      TokenPassing.skipFruitlessRequests = true;
    }
  };
  // With the fewest swaps each case makes (more tasks than robots on the goods-to-person floor: few robots are free to swap).
  // Robots idle on rest spots (requests answered at once) only where the drops hold tasks back (the demo hall).
  const cases: [string, ReturnType<typeof saturated>, number, boolean][] = [
    ['demo hall, 100 robots, skewed drops', saturated('scenarios/demo-sortation.yaml', 100, 0.25, 'delivery'), 100, true],
    ['demo hall, 60 forward-only robots (1 s quarter turns)', saturated('scenarios/demo-sortation.yaml', 60, 0.25, 'delivery', 1), 20, true],
    ['goods-to-person floor, 60 robots, round trips', saturated('scenarios/demo-fulfillment.yaml', 60, 1, 'round-trip'), 10, false],
  ];
  for (const [name, scenario, swaps, idle] of cases) {
    it(`${name}: the same run with the shortcuts on and off, on fewer searches`, () => {
      const cut = run(scenario, true);
      const full = run(scenario, false);
      expect(cut.rest.delivered).toBeGreaterThan(100);
      expect(cut.counters.taskSwaps).toBeGreaterThanOrEqual(swaps);
      expect(cut.rest).toEqual(full.rest);
      expect(cut.counters).toEqual(full.counters);
      expect(full.swapProbesSkipped).toBe(0);
      expect(full.deadlineStops).toBe(0);
      expect(full.idleRequests).toBe(0);
      // Token requests answered at once: counted as requests either way (so in `counters` above).
      if (idle) expect(cut.idleRequests).toBeGreaterThan(0);
      expect(cut.deadlineStops).toBeGreaterThan(0);
      expect(cut.searches).toBeLessThanOrEqual(full.searches);
      expect(cut.expansions).toBeLessThan(full.expansions);
    });
  }
});
