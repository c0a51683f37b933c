/**
 * Planned policies (token passing, token passing with swaps, flow-batch) with more robots
 * than marked parking spots: they rest the extra robots on rest cells (sim/rest-cells.ts),
 * which keep the floor well-formed, so the completeness argument of Ma, Li, Kumar, Koenig
 * (AAMAS 2017: every task of a finite task set is delivered on a well-formed instance)
 * still applies, and throughput must not collapse as the fleet grows.
 */
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import seedrandom from 'seedrandom';
import { runReplications } from '../experiments/replications.ts';
import { loadScenarioFile } from '../scenarios/load.ts';
import { buildLayout, CellKind, checkWellFormed, componentLabels, parseLayout, type Layout } from '../sim/layout.ts';
import type { Scenario, TraceTask } from '../sim/model.ts';
import { restCellsForFleet, restCellsOf, withRestCells } from '../sim/rest-cells.ts';
import { makeScenario } from './helpers.ts';

const demoPath = fileURLToPath(new URL('../scenarios/demo-sortation.yaml', import.meta.url));
const planned = ['token-passing', 'token-passing-swaps', 'flow-batch'];

/** The demo hall under a deep Poisson backlog: 6,000 tasks/h, far above what any fleet here delivers. */
function deepBacklog(policy: string, robots: number, hours: number): Scenario {
  return loadScenarioFile(demoPath, { policy, robots, hours, replications: 1, tasksPerHour: 6000, warmup: 0 });
}

describe('planned policies at 100 robots on the demo hall (38 parking spots), deep backlog', () => {
  for (const policy of planned) {
    it(`${policy}: 0 collisions, 0 deadlocks, deliveries in every 10 minutes, at least as many per hour as 32 robots`, () => {
      const layout = parseLayout(loadScenarioFile(demoPath).layoutText);
      expect(checkWellFormed(layout, 100).wellFormed).toBe(false);
      expect(checkWellFormed(withRestCells(layout, restCellsForFleet(layout, 100)), 100).wellFormed).toBe(true);
      const [big] = runReplications(deepBacklog(policy, 100, 1));
      expect(big.collisions).toBe(0);
      expect(big.illegalSteps).toBe(0);
      expect(big.policyCounters.restCells).toBe(62);
      // Well-formed with its rest cells: no deadlock, livelock or gridlock (closed wait-for
      // sets, sim/deadlock-detector.ts), although the backlog keeps every robot in demand.
      expect(big.metrics.episodes).toHaveLength(0);
      // Tasks stay open throughout (the backlog only grows), so every window must deliver:
      // no stall towards zero. Ten windows of 6 sample minutes.
      const perMinute = Array.from(big.metrics.deliveries);
      expect(perMinute.length).toBe(60);
      const windows = Array.from({ length: 10 }, (_, i) => perMinute.slice(6 * i, 6 * i + 6).reduce((a, b) => a + b, 0));
      const mean = windows.reduce((a, b) => a + b, 0) / windows.length;
      for (const delivered of windows.slice(1)) expect(delivered).toBeGreaterThan(0.6 * mean);
      expect(big.released - big.delivered).toBeGreaterThan(1000);
      // Past the parking count throughput levels off at worst; it may not fall far below a
      // fleet the marked spots alone hold (tolerance for one replication's noise: 10%).
      const [small] = runReplications(deepBacklog(policy, 32, 1));
      expect(big.delivered).toBeGreaterThan(0.9 * small.delivered);
    });
  }
});

describe('completeness with rest cells (Ma et al. 2017: finite tasks, well-formed floor, all delivered)', () => {
  it('the demo hall with 120 robots delivers every task of a 400-task trace, for each planned policy', () => {
    const demo = loadScenarioFile(demoPath);
    const layout = parseLayout(demo.layoutText);
    const random = seedrandom('rest-completeness');
    const tasks: TraceTask[] = [];
    for (let i = 0; i < 400; i++) {
      tasks.push({
        releaseSeconds: i * 2,
        pickup: layout.pickups[Math.floor(random() * layout.pickups.length)],
        drop: layout.drops[Math.floor(random() * layout.drops.length)],
      });
    }
    expect(checkWellFormed(withRestCells(layout, restCellsForFleet(layout, 120)), 120).wellFormed).toBe(true);
    for (const policy of planned) {
      const scenario: Scenario = {
        ...demo,
        fleet: { robots: 120 },
        policy: { name: policy, options: {} },
        demand: { kind: 'trace', mode: 'delivery', tracePath: 'inline', tasks },
        run: { ...demo.run, hours: 1, replications: 1, warmup: 0 },
      };
      const [record] = runReplications(scenario);
      expect(record.collisions, policy).toBe(0);
      expect(record.delivered, policy).toBe(400);
      expect(record.metrics.episodes, policy).toHaveLength(0);
    }
  });

  const legendOf: Record<number, string> = { [CellKind.Blocked]: '#', [CellKind.Floor]: '.', [CellKind.Pickup]: 'P', [CellKind.Drop]: 'D', [CellKind.Parking]: 'H' };

  /** A random small floor with few parking spots, connected and well-formed for its parking count; null otherwise. */
  function randomFloor(seed: number): { text: string; layout: Layout } | null {
    const random = seedrandom(`past-parking-${seed}`);
    const width = 7 + Math.floor(random() * 8);
    const height = 5 + Math.floor(random() * 5);
    const kind = new Uint8Array(width * height);
    for (let y = 0; y < height; y++) {
      for (let x = 0; x < width; x++) {
        const border = x === 0 || y === 0 || x === width - 1 || y === height - 1;
        const r = random();
        kind[y * width + x] = border || r < 0.1 ? CellKind.Blocked : r < 0.15 ? CellKind.Pickup : r < 0.22 ? CellKind.Drop : r < 0.25 ? CellKind.Parking : CellKind.Floor;
      }
    }
    const layout = buildLayout(width, height, kind);
    if (layout.pickups.length === 0 || layout.drops.length === 0 || layout.parking.length === 0) return null;
    if (componentLabels(layout).count !== 1 || !checkWellFormed(layout, layout.parking.length).wellFormed) return null;
    const rows: string[] = [];
    for (let y = 0; y < height; y++) rows.push(Array.from(kind.subarray(y * width, (y + 1) * width), (k) => legendOf[k]).join(''));
    return { text: rows.join('\n'), layout };
  }

  for (const policy of planned) {
    it(`${policy}: random floors with more robots than parking spots deliver every task of a finite trace (fast-check)`, () => {
      let runs = 0;
      fc.assert(
        fc.property(fc.integer({ min: 0, max: 1_000_000 }), fc.integer({ min: 1, max: 6 }), (seed, extra) => {
          const floor = randomFloor(seed);
          fc.pre(floor !== null);
          const { layout, text } = floor!;
          const available = restCellsOf(layout).cells.length;
          fc.pre(available >= 1);
          const robots = layout.parking.length + Math.min(extra, available);
          expect(checkWellFormed(withRestCells(layout, restCellsForFleet(layout, robots)), robots).wellFormed).toBe(true);
          runs++;
          const random = seedrandom(`trace-${seed}`);
          const tasks: TraceTask[] = [];
          for (let i = 0; i < 30; i++) {
            tasks.push({ releaseSeconds: i * 3, pickup: layout.pickups[Math.floor(random() * layout.pickups.length)], drop: layout.drops[Math.floor(random() * layout.drops.length)] });
          }
          const scenario = makeScenario({ layout: text, robots, policy, seed, pickupSeconds: 2, dropSeconds: 1, hours: 0.5, demand: { kind: 'trace', mode: 'delivery', tracePath: 'inline', tasks } });
          const [record] = runReplications(scenario);
          expect(record.collisions).toBe(0);
          expect(record.illegalSteps).toBe(0);
          expect(record.metrics.episodes).toHaveLength(0);
          if (record.delivered !== tasks.length) throw new Error(`${record.delivered} of ${tasks.length} delivered with ${robots} robots on\n${text}`);
        }),
        { numRuns: Number(process.env.PROPERTY_RUNS ?? 25), seed: Number(process.env.PROPERTY_SEED ?? 20261201) },
      );
      expect(runs).toBeGreaterThanOrEqual(25);
    });
  }
});
