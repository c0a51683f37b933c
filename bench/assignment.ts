/**
 * Benchmark: solveAssignment (Jonker-Volgenant / Crouse 2016 shortest
 * augmenting path, policies/shared/assignment.ts) vs munkres-js (Hungarian
 * method, Kuhn 1955 / Munkres 1957) on the same seeded random square
 * instances with integer costs 0..200 (like grid distances).
 *
 * Ours: best of `repeats` runs (after one warm-up). munkres-js: best of up to
 * 3 runs, but only once when a single run is slow (> 2 s, e.g. n = 1000) --
 * a deliberate shortcut to keep the benchmark short.
 *
 * Run directly: `npx tsx bench/assignment.ts [--json] [sizes...]`.
 */
import { createRequire } from 'node:module';
import { performance } from 'node:perf_hooks';
import { solveAssignment } from '../policies/shared/assignment.ts';

const require = createRequire(import.meta.url);
const munkres = require('munkres-js') as (matrix: number[][]) => Array<[number, number]>;

export interface AssignmentBenchRow {
  name: 'assignment';
  size: number;
  ms: number;
  munkresMs: number;
  speedupVsMunkres: number;
  equalCost: boolean;
}

/** mulberry32 seeded PRNG in [0, 1). */
function rng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

function randomSquare(n: number, seed: number): Float64Array {
  const r = rng(seed);
  const c = new Float64Array(n * n);
  for (let k = 0; k < c.length; k++) c[k] = Math.floor(r() * 201);
  return c;
}

export async function benchAssignment(sizes: number[] = [200, 500, 1000], repeats = 5): Promise<AssignmentBenchRow[]> {
  const out: AssignmentBenchRow[] = [];
  for (const n of sizes) {
    const cost = randomSquare(n, 1000 + n);

    // Ours: warm-up, then best of `repeats`.
    let ours = solveAssignment(cost, n, n);
    let ms = Infinity;
    for (let k = 0; k < repeats; k++) {
      const t0 = performance.now();
      ours = solveAssignment(cost, n, n);
      const dt = performance.now() - t0;
      if (dt < ms) ms = dt;
    }

    // munkres-js on the same matrix (it copies the input; conversion is excluded from timing).
    const rows: number[][] = [];
    for (let i = 0; i < n; i++) rows.push(Array.from(cost.subarray(i * n, (i + 1) * n)));
    let munkresMs = Infinity;
    let munkresCost = NaN;
    for (let k = 0; k < 3; k++) {
      const t0 = performance.now();
      const pairs = munkres(rows);
      const dt = performance.now() - t0;
      if (dt < munkresMs) munkresMs = dt;
      let s = 0;
      for (const [i, j] of pairs) s += cost[i * n + j];
      munkresCost = s;
      if (dt > 2000) break; // slow: run once only (deliberate shortcut)
    }

    out.push({
      name: 'assignment',
      size: n,
      ms: round(ms),
      munkresMs: round(munkresMs),
      speedupVsMunkres: round(munkresMs / ms),
      equalCost: ours.totalCost === munkresCost,
    });
    // Yield between sizes so callers' progress output can flush.
    await new Promise<void>((resolve) => setImmediate(resolve));
  }
  return out;
}

function round(x: number): number {
  return Math.round(x * 100) / 100;
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const args = process.argv.slice(2);
  const json = args.includes('--json');
  const sizes = args.filter((a) => /^\d+$/.test(a)).map(Number);
  const rows = await benchAssignment(sizes.length > 0 ? sizes : undefined);
  if (json) {
    console.log(JSON.stringify(rows, null, 2));
  } else {
    console.table(rows);
  }
}
