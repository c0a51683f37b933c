import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import seedrandom from 'seedrandom';
import { makeScenario } from './helpers.ts';
import { runReplications } from '../experiments/replications.ts';
import { buildLayout, CellKind, checkWellFormed, componentLabels } from '../sim/layout.ts';
import { policies } from '../policies/registry.ts';

/** Planned policies: complete and deadlock-free on well-formed layouts (Ma et al., AAMAS 2017). */
const planned = new Set(['token-passing', 'token-passing-swaps', 'flow-batch']);

const legendOf: Record<number, string> = {
  [CellKind.Blocked]: '#',
  [CellKind.Floor]: '.',
  [CellKind.Pickup]: 'P',
  [CellKind.Drop]: 'D',
  [CellKind.Parking]: 'H',
};

/** A random small floor: walls round the edge, some blocked cells, endpoints scattered. Null when not usable. */
function randomFloor(seed: number, robots: number): string | null {
  const random = seedrandom(`floor-${seed}`);
  const width = 6 + Math.floor(random() * 8);
  const height = 5 + Math.floor(random() * 5);
  const kind = new Uint8Array(width * height);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const border = x === 0 || y === 0 || x === width - 1 || y === height - 1;
      const r = random();
      kind[y * width + x] = border || r < 0.12 ? CellKind.Blocked : r < 0.2 ? CellKind.Pickup : r < 0.3 ? CellKind.Drop : r < 0.42 ? CellKind.Parking : CellKind.Floor;
    }
  }
  const layout = buildLayout(width, height, kind);
  if (layout.pickups.length === 0 || layout.drops.length === 0 || layout.parking.length < robots) return null;
  if (componentLabels(layout).count !== 1) return null;
  if (!checkWellFormed(layout, robots).wellFormed) return null;
  const rows: string[] = [];
  for (let y = 0; y < height; y++) rows.push(Array.from(kind.subarray(y * width, (y + 1) * width), (k) => legendOf[k]).join(''));
  return rows.join('\n');
}

describe('every policy on random small well-formed floors (property test, fast-check)', () => {
  for (const factory of policies) {
    it(`${factory.name}: 0 collisions, conservation intact${planned.has(factory.name) ? ', no deadlock' : ''}`, () => {
      let runs = 0;
      fc.assert(
        fc.property(fc.integer({ min: 0, max: 1_000_000 }), fc.integer({ min: 1, max: 4 }), fc.boolean(), (seed, robots, saturated) => {
          const layout = randomFloor(seed, robots);
          fc.pre(layout !== null);
          runs++;
          const scenario = makeScenario({
            layout: layout!,
            robots,
            policy: factory.name,
            seed,
            pickupSeconds: { dist: 'uniform', min: 0, max: 3 },
            dropSeconds: 1,
            hours: 0.25,
            demand: saturated
              ? { kind: 'saturated', mode: 'delivery', pickups: { kind: 'uniform' }, drops: { kind: 'uniform' } }
              : { kind: 'poisson', mode: 'delivery', tasksPerHour: 150, profile: null, pickups: { kind: 'uniform' }, drops: { kind: 'zipf', skew: 1 } },
          });
          // The engine throws a RunError if conservation ever breaks.
          const [record] = runReplications(scenario);
          expect(record.collisions).toBe(0);
          expect(record.illegalSteps).toBe(0);
          expect(record.released).toBe(record.delivered + record.open);
          if (planned.has(factory.name)) {
            expect(record.metrics.episodes).toHaveLength(0);
            expect(record.delivered).toBeGreaterThan(0);
          }
        }),
        { numRuns: Number(process.env.PROPERTY_RUNS ?? 30), seed: Number(process.env.PROPERTY_SEED ?? 20261201) },
      );
      expect(runs).toBeGreaterThanOrEqual(30);
    });
  }
});
