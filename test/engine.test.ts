import { describe, expect, it } from 'vitest';
import seedrandom from 'seedrandom';
import { makeScenario } from './helpers.ts';
import { runReplications } from '../experiments/replications.ts';
import { summarize } from '../reports/summary.ts';
import { EventQueue } from '../sim/event-queue.ts';
import { CollisionValidator } from '../sim/validator.ts';
import { parseLayout } from '../sim/layout.ts';

function expectClean(records: ReturnType<typeof runReplications>): void {
  for (const r of records) {
    expect(r.collisions).toBe(0);
    expect(r.illegalSteps).toBe(0);
    // The engine throws on a conservation break; the totals must also add up at the end.
    expect(r.released).toBe(r.delivered + r.open);
  }
}

// One robot, one pickup, one drop, 7 cells apart; pickup handling 3 s, drop handling 2 s.
const lane = `
##########
#P......D#
#H########
##########`;

describe('cycle time of one robot (Groover, Automation, Production Systems and CIM, ch. 10)', () => {
  // Hand formula: Tc = load time + loaded distance / speed + unload time + empty distance / speed
  //             = 3 s + 7 m / (1 m/s) + 2 s + 7 m / (1 m/s) = 19 s.
  const cycleSeconds = 3 + 7 / 1 + 2 + 7 / 1;

  it('throughput of a saturated single robot equals 3600 / Tc exactly', () => {
    const scenario = makeScenario({
      layout: lane,
      robots: 1,
      pickupSeconds: 3,
      dropSeconds: 2,
      hours: (190 * cycleSeconds) / 3600,
      sampleSeconds: cycleSeconds,
      warmup: cycleSeconds / 3600,
    });
    const records = runReplications(scenario);
    expectClean(records);
    const { summary } = summarize(scenario, records, 0);
    expect(summary.throughputPerHour.mean).toBeCloseTo(3600 / cycleSeconds, 9);
    // Every batch holds exactly one cycle per interval, so the batch-means interval has zero width.
    expect(summary.throughputPerHour.halfWidth).toBeCloseTo(0, 9);
    // Pinned by hand: the robot leaves H at tick 0, reaches P at 1, picks until 4, reaches D
    // at 11 and delivers at 13, then every 19 ticks: deliveries at 13 + 19k, k = 0..189 (the
    // last at 3604 < 3610). Its plan keeps it moving or handling every tick, so the engine
    // runs a motion event on each of the 3610 ticks and 3610 agent-steps.
    expect(records[0].delivered).toBe(190);
    expect(records[0].motionTicks).toBe(3610);
    expect(records[0].agentSteps).toBe(3610);
    // The robot is loaded 7 of every 19 s and handling 5 of every 19 s.
    expect(summary.robotTime.loaded.mean).toBeCloseTo(7 / 19, 9);
    expect(summary.robotTime.handling.mean).toBeCloseTo(5 / 19, 9);
  });

  it('the same holds at 2 m/s on 2 m cells (ticks are 1 s) and at 0.5 m cells (ticks are 0.5 s)', () => {
    const scenario = makeScenario({
      layout: lane,
      robots: 1,
      pickupSeconds: 3,
      dropSeconds: 2,
      cellMeters: 0.5,
      robotSpeedMps: 1,
      hours: (100 * 12) / 3600,
      sampleSeconds: 12,
      warmup: 12 / 3600,
    });
    // Tc = 3 + 3.5 m / 1 m/s + 2 + 3.5 m / 1 m/s = 12 s.
    const records = runReplications(scenario);
    expectClean(records);
    const { summary } = summarize(scenario, records, 0);
    expect(summary.tickSeconds).toBe(0.5);
    expect(summary.throughputPerHour.mean).toBeCloseTo(3600 / 12, 9);
  });

  it('n robots on one pickup and one drop never exceed n x 3600 / Tc', () => {
    const layout = `
############
#P........D#
#.##########
#HHHH#######
############`;
    // Without traffic: 3 s + 9 m + 2 s + 9 m = 23 s per cycle.
    const cycle = 3 + 9 + 2 + 9;
    for (const robots of [1, 2, 3, 4]) {
      const hours = 2;
      const scenario = makeScenario({ layout, robots, pickupSeconds: 3, dropSeconds: 2, hours, warmup: 0 });
      const records = runReplications(scenario);
      expectClean(records);
      // The bound on deliveries in the run: each robot finishes at most one cycle per Tc.
      expect(records[0].delivered).toBeLessThanOrEqual((robots * hours * 3600) / cycle);
      expect(records[0].delivered).toBeGreaterThan(0);
    }
  });
});

// A single robot serving Poisson orders one at a time in release order, resting at the drop
// between tasks, is an M/D/1 queue with deterministic service Tc = 25 + 5 + 25 + 5 = 60 s.
const mdOneLane = `
############################
#P........................D#
############################`;

describe('queueing checks on a single robot (M/D/1)', () => {
  const scenario = makeScenario({
    layout: mdOneLane,
    robots: 1,
    pickupSeconds: 5,
    dropSeconds: 5,
    demand: { kind: 'poisson', mode: 'delivery', tasksPerHour: 30, profile: null, pickups: { kind: 'uniform' }, drops: { kind: 'uniform' } },
    hours: 150,
    replications: 4,
    warmup: 1,
    sampleSeconds: 600,
  });
  const records = runReplications(scenario);
  const { summary, perReplication } = summarize(scenario, records, 0);

  it('runs clean', () => expectClean(records));

  it('mean lead time matches Pollaczek-Khinchine for M/D/1', () => {
    // REFERENCES.md, M/D/1: Wq = rho / (2 mu (1 - rho)); with lambda = 30/h and a 1/mu = 60 s
    // service, rho = 0.5 and Wq = 0.5 * 60 s / (2 * 0.5) = 30 s; lead time W = Wq + 60 s = 90 s.
    const rho = 30 / 60;
    const expected = (rho * 60) / (2 * (1 - rho)) + 60;
    expect(Math.abs(summary.leadTimeSeconds.mean - expected) / expected).toBeLessThan(0.04);
  });

  it("tasks in system agree with Little's law and with the M/D/1 value L = rho + rho^2 / (2 (1 - rho))", () => {
    // Little (1961): L = lambda W, checked per replication on the same window.
    for (const w of perReplication) {
      const littleL = (w.throughputPerHour / 3600) * w.leadTimeSeconds;
      expect(Math.abs(w.tasksInSystem - littleL) / w.tasksInSystem).toBeLessThan(0.02);
    }
    // P-K: Lq = rho^2 / (2 (1 - rho)) = 0.25, L = Lq + rho = 0.75 (REFERENCES.md, M/D/1).
    expect(Math.abs(summary.tasksInSystem.mean - 0.75) / 0.75).toBeLessThan(0.06);
  });

  it('throughput equals the arrival rate of a stable queue', () => {
    expect(Math.abs(summary.throughputPerHour.mean - 30) / 30).toBeLessThan(0.03);
  });
});

describe("Little's law on a stable multi-robot Poisson run", () => {
  it('time-average tasks in system = throughput x mean lead time (Little, Operations Research 9(3), 1961)', () => {
    const layout = `
##############
#P..........D#
#..........H.#
#P..........D#
#H..........H#
##############`;
    const scenario = makeScenario({
      layout,
      robots: 3,
      pickupSeconds: 4,
      dropSeconds: { dist: 'exponential', mean: 3 },
      demand: { kind: 'poisson', mode: 'delivery', tasksPerHour: 200, profile: null, pickups: { kind: 'uniform' }, drops: { kind: 'uniform' } },
      hours: 40,
      replications: 3,
      warmup: 0.5,
      sampleSeconds: 300,
    });
    const records = runReplications(scenario);
    expectClean(records);
    const { perReplication } = summarize(scenario, records, 0);
    for (const w of perReplication) {
      const littleL = (w.throughputPerHour / 3600) * w.leadTimeSeconds;
      expect(Math.abs(w.tasksInSystem - littleL) / w.tasksInSystem).toBeLessThan(0.02);
    }
  });
});

describe('determinism', () => {
  it('the same scenario and seed give identical records; another seed differs', () => {
    const base = {
      layout: lane.replace('#H########', '#H.......#').replace('##########\n#P', '##########\n#P'),
      robots: 1,
      pickupSeconds: { dist: 'uniform' as const, min: 1, max: 5 },
      demand: { kind: 'poisson' as const, mode: 'delivery' as const, tasksPerHour: 120, profile: [1, 0.5], pickups: { kind: 'uniform' as const }, drops: { kind: 'uniform' as const } },
      hours: 3,
      replications: 2,
    };
    const strip = (rs: ReturnType<typeof runReplications>) => {
      expectClean(rs);
      return JSON.stringify(rs.map(({ wallSeconds: _w, planningSeconds: _p, metrics, ...rest }) => ({ ...rest, d: Array.from(metrics.deliveries), l: metrics.leadTicks })));
    };
    const a = strip(runReplications(makeScenario({ ...base, seed: 7 })));
    const b = strip(runReplications(makeScenario({ ...base, seed: 7 })));
    const c = strip(runReplications(makeScenario({ ...base, seed: 8 })));
    expect(a).toBe(b);
    expect(a).not.toBe(c);
  });
});

describe('EventQueue', () => {
  it('pops in (tick, priority, seq) order, matching a stable sort of the same events', () => {
    const random = seedrandom('queue');
    const queue = new EventQueue(4);
    const events: { tick: number; priority: number; seq: number }[] = [];
    for (let i = 0; i < 5000; i++) {
      const e = { tick: Math.floor(random() * 50), priority: Math.floor(random() * 4), seq: i };
      events.push(e);
      queue.schedule(e.tick, e.priority, e.priority, i);
    }
    events.sort((x, y) => x.tick - y.tick || x.priority - y.priority || x.seq - y.seq);
    for (const e of events) {
      expect(queue.pop()).toBe(true);
      expect([queue.lastTick, queue.lastPayload]).toEqual([e.tick, e.seq]);
    }
    expect(queue.pop()).toBe(false);
    expect(queue.peekTick()).toBe(Infinity);
  });
});

describe('CollisionValidator (Stern et al., SoCS 2019 definitions)', () => {
  const layout = parseLayout(`
#####
#...#
#...#
#####`);
  const cell = (x: number, y: number) => y * 5 + x;
  it('counts a vertex collision, a swap, and allows following into a vacated cell', () => {
    const validator = new CollisionValidator(layout, Int32Array.of(cell(1, 1), cell(2, 1), cell(3, 1)));
    // Robot 0 follows robot 1 into (2,1) as it moves on to (2,2): allowed.
    validator.check(Int32Array.of(cell(2, 1), cell(2, 2), cell(3, 1)), 1);
    expect(validator.collisions).toBe(0);
    // Robots 0 and 2 exchange (2,1) and (3,1): a swap.
    validator.check(Int32Array.of(cell(3, 1), cell(2, 2), cell(2, 1)), 2);
    expect(validator.swapCollisions).toBe(1);
    // Robots 1 and 2 both enter (2,2)... robot 1 waits there and robot 2 moves in: a vertex collision.
    validator.check(Int32Array.of(cell(3, 1), cell(2, 2), cell(2, 2)), 3);
    expect(validator.vertexCollisions).toBe(1);
    // A jump of two cells is an illegal step.
    validator.check(Int32Array.of(cell(1, 1), cell(2, 2), cell(2, 1)), 4);
    expect(validator.illegalSteps).toBe(1);
  });
});
