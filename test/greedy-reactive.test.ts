import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { greedyReactive } from '../policies/greedy-reactive/index.ts';
import { runReplication, type ReplicationRecord } from '../sim/engine.ts';
import { prepareSetup } from '../experiments/replications.ts';
import type { PolicyFactory } from '../sim/policy.ts';
import type { World } from '../sim/world.ts';
import { loadScenarioFile } from '../scenarios/load.ts';
import { makeScenario } from './helpers.ts';

// One-lane corridor with one side pocket under (5,2). Robot 0 starts on H(1,1), robot 1 on
// H(8,1). If each robot follows its own shortest path, they meet head-on in row 2 and block
// each other forever: the pocket is on no shortest path. A joint plan sends one robot into
// the pocket (or lets it wait at an endpoint).
const corridor = ['##########', '#HPD##DPH#', '#........#', '#####.####', '##########'].join('\n');
const width = 10;
const cell = (x: number, y: number) => y * width + x;

function corridorRun(policy: string, recoverySeconds?: number): ReplicationRecord {
  const scenario = makeScenario({
    layout: corridor,
    robots: 2,
    policy,
    pickupSeconds: 2,
    dropSeconds: 2,
    hours: 1,
    recoverySeconds,
    demand: {
      kind: 'trace',
      mode: 'delivery',
      tracePath: 'inline',
      tasks: [
        { releaseSeconds: 0, pickup: cell(2, 1), drop: cell(6, 1) },
        { releaseSeconds: 0, pickup: cell(7, 1), drop: cell(3, 1) },
      ],
    },
  });
  return runReplication(prepareSetup(scenario), 0);
}

const demoHall = path.join(import.meta.dirname, '..', 'scenarios', 'demo-sortation.yaml');

describe('greedy-reactive in the one-lane corridor with a side pocket', () => {
  // Hand trace (1 tick = 1 s, handling 2 s): both robots step onto their pickups at tick 1,
  // handle through tick 3, and head for the other end of row 2; at tick 6 robot 0 stands on
  // (4,2) and robot 1 on (5,2), each wanting the other's cell. Neither moves again.
  it('deadlocks head-on without clearing: one episode of both robots, stalled from tick 6, no collision', () => {
    const record = corridorRun('greedy-reactive', 0);
    expect(record.collisions).toBe(0);
    expect(record.delivered).toBe(0);
    expect(record.metrics.episodes).toHaveLength(1);
    const [episode] = record.metrics.episodes;
    expect(episode.robots).toBe(2);
    expect(episode.stallTick).toBe(6);
    // Detected after deadlockSeconds (120 s by default).
    expect(episode.detectTick).toBe(126);
    expect(episode.cleared).toBe(false);
    // Both robots lose the rest of the hour: 2 x (3600 - 6) ticks.
    expect(episode.lostTicks).toBe(2 * (3600 - 6));
  });

  // With the default recovery (300 s) the operator arrives at tick 426, leaves robot 0 (the
  // lowest-numbered) in place and drives robot 1 from (5,2) to the nearest free parking,
  // H(8,1). Robot 0 then gets closer to its drop at tick 427 and leaves the episode:
  // lost time 421 ticks for robot 0 (stalled from 6) + 420 for robot 1 (6 to 426) = 841.
  // Robot 1 sets out again once robot 0 is out of its way, and both tasks are delivered.
  it('is cleared by the modelled operator, after which both tasks are delivered', () => {
    const record = corridorRun('greedy-reactive');
    expect(record.collisions).toBe(0);
    expect(record.delivered).toBe(2);
    const episodes = record.metrics.episodes;
    expect(episodes).toHaveLength(1);
    const [episode] = episodes;
    expect(episode.robots).toBe(2);
    expect(episode.stallTick).toBe(6);
    expect(episode.detectTick).toBe(126);
    expect(episode.cleared).toBe(true);
    expect(episode.lostTicks).toBe(841);
    expect(episode.endTick).toBe(427);
  });

  it('token-passing (a joint, reserved plan) delivers both tasks with no collision and no deadlock', () => {
    const record = corridorRun('token-passing');
    expect(record.delivered).toBe(2);
    expect(record.collisions).toBe(0);
    expect(record.metrics.episodes).toHaveLength(0);
  });
});

describe('greedy-reactive on the demo parcel hall', () => {
  it('runs an hour with 20 robots under Poisson demand: no collision, some deliveries', () => {
    const scenario = loadScenarioFile(demoHall, { robots: 20, hours: 1, replications: 1, policy: 'greedy-reactive' });
    expect(scenario.demand.kind).toBe('poisson');
    const record = runReplication(prepareSetup(scenario), 0);
    expect(record.collisions).toBe(0);
    expect(record.illegalSteps).toBe(0);
    expect(record.delivered).toBeGreaterThan(0);
    expect(record.released).toBe(record.delivered + record.open);
  });
});

/**
 * Watches greedy-reactive from outside: its decisions (every move goes to a neighbouring
 * cell that no other robot is sent to, and that is empty at this tick or whose robot is
 * sent elsewhere, not into the mover's cell) and, through the engine's afterMotion hook,
 * the executed positions (no two robots on one cell, no two robots exchanging cells).
 * Following into a cell vacated in the same tick is allowed (DESIGN §2).
 */
function watchedGreedy(): { factory: PolicyFactory<any>; violations: string[]; checkMotion: (tick: number, world: World) => void; motionTicks: () => number } {
  const violations: string[] = [];
  let previous: Int32Array | null = null;
  let ticks = 0;
  const factory: PolicyFactory<any> = {
    ...greedyReactive,
    create(context, options) {
      const inner = greedyReactive.create(context, options);
      const { world, layout } = context;
      return {
        step(tick, moves) {
          const next = inner.step(tick, moves);
          const target = new Map<number, number>();
          for (let r = 0; r < world.robotCount; r++) {
            const from = world.robotCell[r];
            const to = moves[r];
            if (target.has(to)) violations.push(`tick ${tick}: robots ${target.get(to)} and ${r} sent to cell ${to}`);
            target.set(to, r);
            if (to === from) continue;
            let adjacent = false;
            for (let d = 0; d < 4; d++) if (layout.neighbors[from * 4 + d] === to) adjacent = true;
            if (!adjacent) violations.push(`tick ${tick}: robot ${r} sent from ${from} to non-neighbour ${to}`);
            const holder = world.occupant[to];
            if (holder >= 0 && (moves[holder] === to || moves[holder] === from)) {
              violations.push(`tick ${tick}: robot ${r} sent into cell ${to}, which robot ${holder} does not leave or leaves towards it`);
            }
          }
          return next;
        },
        onRelocated(robot, tick) {
          // The operator's jump is not a move; start the robot's history from its new cell.
          if (previous) previous[robot] = world.robotCell[robot];
          inner.onRelocated?.(robot, tick);
        },
        counters: () => inner.counters?.() ?? {},
      };
    },
  };
  const checkMotion = (tick: number, world: World): void => {
    ticks++;
    const standing = new Map<number, number>();
    for (let r = 0; r < world.robotCount; r++) {
      const c = world.robotCell[r];
      if (standing.has(c)) violations.push(`tick ${tick}: robots ${standing.get(c)} and ${r} both on cell ${c}`);
      standing.set(c, r);
      if (!world.layout.passable[c]) violations.push(`tick ${tick}: robot ${r} on blocked cell ${c}`);
    }
    if (previous) {
      const stoodOn = new Map<number, number>();
      for (let r = 0; r < world.robotCount; r++) stoodOn.set(previous[r], r);
      for (let r = 0; r < world.robotCount; r++) {
        const other = stoodOn.get(world.robotCell[r]);
        if (world.robotCell[r] !== previous[r] && other !== undefined && other !== r && world.robotCell[other] === previous[r]) {
          violations.push(`tick ${tick}: robots ${r} and ${other} exchanged cells ${previous[r]} and ${world.robotCell[r]}`);
        }
      }
    }
    previous = Int32Array.from(world.robotCell);
  };
  return { factory, violations, checkMotion, motionTicks: () => ticks };
}

describe('greedy-reactive never moves a robot into an occupied cell', () => {
  it.each([20, 40])('demo hall, %i robots, 1 hour, with operator clearing: decisions and executed ticks stay collision-free', (robots) => {
    const scenario = loadScenarioFile(demoHall, { robots, hours: 1, replications: 1, policy: 'greedy-reactive' });
    const watch = watchedGreedy();
    const setup = { ...prepareSetup(scenario), policy: watch.factory };
    const record = runReplication(setup, 0, { afterMotion: watch.checkMotion });
    expect(watch.violations.slice(0, 5)).toEqual([]);
    expect(watch.motionTicks()).toBeGreaterThan(1000);
    expect(record.collisions).toBe(0);
    // The watcher saw robots cleared by the operator (so the relocation path was exercised).
    expect(record.metrics.episodes.some((e) => e.cleared)).toBe(true);
  });
});
