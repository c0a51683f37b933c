/**
 * Tests for policies/shared/assignment.ts (Jonker-Volgenant / Crouse 2016
 * shortest augmenting path) and policies/shared/min-cost-flow.ts (successive
 * shortest paths with potentials).
 *
 * Outside references:
 *  - munkres-js (npm, v1.2.2): Hungarian method, Kuhn 1955 / Munkres 1957,
 *    pads rectangular matrices with zeros to square. CommonJS module exporting
 *    a single function `munkres(matrix: number[][]): [row, col][]`; loaded via
 *    createRequire so it works under vitest's ESM runner without type stubs.
 *  - highs (npm): the HiGHS LP/MIP solver (Huangfu & Hall, University of
 *    Edinburgh) compiled to WebAssembly; we feed it min-cost-flow LPs in CPLEX
 *    LP format (flow conservation equalities + capacity bounds).
 *  - Exhaustive enumeration for tiny instances (independent of both).
 */
import { createRequire } from 'node:module';
import { beforeAll, describe, expect, it } from 'vitest';
import fc from 'fast-check';
import type { Highs } from 'highs';
import { FORBIDDEN_COST, solveAssignment } from '../policies/shared/assignment.ts';
import { MinCostFlow } from '../policies/shared/min-cost-flow.ts';

const require = createRequire(import.meta.url);
const munkres = require('munkres-js') as (matrix: number[][]) => Array<[number, number]>;

/** mulberry32: small seeded PRNG, returns floats in [0, 1). */
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

function toRows(cost: Float64Array, rows: number, cols: number): number[][] {
  const m: number[][] = [];
  for (let i = 0; i < rows; i++) m.push(Array.from(cost.subarray(i * cols, (i + 1) * cols)));
  return m;
}

function munkresCost(cost: Float64Array, rows: number, cols: number): number {
  const pairs = munkres(toRows(cost, rows, cols));
  expect(pairs.length).toBe(Math.min(rows, cols));
  let s = 0;
  for (const [i, j] of pairs) s += cost[i * cols + j];
  return s;
}

/** Checks rowToCol/colToRow form a consistent matching of size min(rows, cols) and returns its cost. */
function checkMatching(
  res: { rowToCol: Int32Array; colToRow: Int32Array; totalCost: number },
  cost: Float64Array,
  rows: number,
  cols: number,
): number {
  expect(res.rowToCol.length).toBe(rows);
  expect(res.colToRow.length).toBe(cols);
  let assigned = 0;
  let sum = 0;
  for (let i = 0; i < rows; i++) {
    const j = res.rowToCol[i];
    if (j === -1) continue;
    expect(j).toBeGreaterThanOrEqual(0);
    expect(j).toBeLessThan(cols);
    expect(res.colToRow[j]).toBe(i);
    assigned++;
    sum += cost[i * cols + j];
  }
  let assignedCols = 0;
  for (let j = 0; j < cols; j++) {
    const i = res.colToRow[j];
    if (i === -1) continue;
    expect(res.rowToCol[i]).toBe(j);
    assignedCols++;
  }
  expect(assigned).toBe(Math.min(rows, cols));
  expect(assignedCols).toBe(assigned);
  // Smaller side fully assigned.
  if (rows <= cols) for (let i = 0; i < rows; i++) expect(res.rowToCol[i]).not.toBe(-1);
  else for (let j = 0; j < cols; j++) expect(res.colToRow[j]).not.toBe(-1);
  expect(sum).toBeCloseTo(res.totalCost, 9);
  return sum;
}

/** Exhaustive optimum over all injective maps of the smaller side (tiny sizes only; explicit stack). */
function bruteForce(cost: Float64Array, rows: number, cols: number): number {
  const small = Math.min(rows, cols);
  const big = Math.max(rows, cols);
  if (small === 0) return 0;
  const at = (s: number, b: number) => (rows <= cols ? cost[s * cols + b] : cost[b * cols + s]);
  const choice = new Int32Array(small).fill(-1);
  const used = new Uint8Array(big);
  let best = Infinity;
  let depth = 0;
  let partial = 0;
  const partials = new Float64Array(small + 1);
  while (depth >= 0) {
    // advance choice at this depth
    if (choice[depth] >= 0) used[choice[depth]] = 0;
    let b = choice[depth] + 1;
    while (b < big && used[b]) b++;
    if (b >= big) {
      choice[depth] = -1;
      depth--;
      continue;
    }
    choice[depth] = b;
    used[b] = 1;
    partial = partials[depth] + at(depth, b);
    if (depth === small - 1) {
      if (partial < best) best = partial;
    } else {
      partials[depth + 1] = partial;
      depth++;
    }
  }
  return best;
}

type CostKind = 'int' | 'real' | 'ties' | 'negative';

function randomCost(r: () => number, rows: number, cols: number, kind: CostKind): Float64Array {
  const c = new Float64Array(rows * cols);
  for (let k = 0; k < c.length; k++) {
    switch (kind) {
      case 'int':
        c[k] = Math.floor(r() * 101);
        break;
      case 'real':
        c[k] = r() * 100;
        break;
      case 'ties':
        c[k] = Math.floor(r() * 3);
        break;
      case 'negative':
        c[k] = Math.floor(r() * 41) - 20;
        break;
    }
  }
  return c;
}

describe('solveAssignment vs munkres-js (Hungarian method)', () => {
  it('matches the munkres-js optimum on 240 seeded rectangular instances', () => {
    const r = rng(20240601);
    const kinds: CostKind[] = ['int', 'real', 'ties', 'negative'];
    let wide = 0;
    let tall = 0;
    for (let t = 0; t < 240; t++) {
      let rows = 1 + Math.floor(r() * 40);
      let cols = 1 + Math.floor(r() * 40);
      // Force both orientations to be well represented.
      if (t % 3 === 0 && rows < cols) [rows, cols] = [cols, rows];
      if (t % 3 === 1 && rows > cols) [rows, cols] = [cols, rows];
      if (rows <= cols) wide++;
      else tall++;
      const kind = kinds[t % kinds.length];
      const cost = randomCost(r, rows, cols, kind);
      const res = solveAssignment(cost, rows, cols);
      checkMatching(res, cost, rows, cols);
      const ref = munkresCost(cost, rows, cols);
      if (kind === 'real') expect(res.totalCost).toBeCloseTo(ref, 8);
      else expect(res.totalCost).toBe(ref);
    }
    expect(wide).toBeGreaterThan(60);
    expect(tall).toBeGreaterThan(60);
  });

  it('matches exhaustive enumeration on tiny instances (fast-check)', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 0, max: 5 }),
        fc.integer({ min: 0, max: 5 }),
        fc.integer({ min: 0, max: 0x7fffffff }),
        fc.constantFrom<CostKind>('int', 'real', 'ties', 'negative'),
        (rows, cols, seed, kind) => {
          const cost = randomCost(rng(seed), rows, cols, kind);
          const res = solveAssignment(cost, rows, cols);
          checkMatching(res, cost, rows, cols);
          expect(res.totalCost).toBeCloseTo(bruteForce(cost, rows, cols), 9);
        },
      ),
      { seed: 7, numRuns: 400 },
    );
  });
});

describe('solveAssignment edge cases', () => {
  it('handles 0 x n, n x 0 and 0 x 0', () => {
    for (const [rows, cols] of [
      [0, 5],
      [5, 0],
      [0, 0],
    ]) {
      const res = solveAssignment(new Float64Array(0), rows, cols);
      expect(res.rowToCol.length).toBe(rows);
      expect(res.colToRow.length).toBe(cols);
      expect(Array.from(res.rowToCol).every((x) => x === -1)).toBe(true);
      expect(Array.from(res.colToRow).every((x) => x === -1)).toBe(true);
      expect(res.totalCost).toBe(0);
    }
  });

  it('handles 1 x 1, 1 x n and n x 1', () => {
    let res = solveAssignment(Float64Array.of(7.5), 1, 1);
    expect(Array.from(res.rowToCol)).toEqual([0]);
    expect(res.totalCost).toBe(7.5);
    res = solveAssignment(Float64Array.of(4, 2, 9, 2), 1, 4);
    expect(res.totalCost).toBe(2);
    expect([1, 3]).toContain(res.rowToCol[0]);
    res = solveAssignment(Float64Array.of(4, 2, 9, -1), 4, 1);
    expect(res.totalCost).toBe(-1);
    expect(res.colToRow[0]).toBe(3);
    expect(Array.from(res.rowToCol)).toEqual([-1, -1, -1, 0]);
  });

  it('handles all-equal costs in every orientation', () => {
    for (const [rows, cols] of [
      [6, 6],
      [3, 8],
      [8, 3],
    ]) {
      const cost = new Float64Array(rows * cols).fill(4);
      const res = solveAssignment(cost, rows, cols);
      checkMatching(res, cost, rows, cols);
      expect(res.totalCost).toBe(4 * Math.min(rows, cols));
    }
  });

  it('avoids big finite forbidden costs when possible and uses them when forced', () => {
    const F = FORBIDDEN_COST;
    // Row 0 may only take column 1; row 1 anything.
    let res = solveAssignment(Float64Array.of(F, 5, F, 1, 2, 3), 2, 3);
    expect(res.rowToCol[0]).toBe(1);
    expect(res.totalCost).toBe(6);
    // Column 1 is forbidden for both rows: one forbidden pair is unavoidable,
    // and the cheaper real pair (row 0 -> column 0, cost 1) is kept.
    res = solveAssignment(Float64Array.of(1, F, 2, F), 2, 2);
    expect(res.totalCost).toBe(F + 1);
    expect(res.rowToCol[0]).toBe(0);
  });

  it('accepts +Infinity when avoidable, throws when not; rejects NaN and bad shapes', () => {
    const res = solveAssignment(Float64Array.of(Infinity, 5, 1, Infinity), 2, 2);
    expect(res.totalCost).toBe(6);
    expect(() => solveAssignment(Float64Array.of(1, Infinity, 2, Infinity), 2, 2)).toThrow(/infeasible/);
    expect(() => solveAssignment(Float64Array.of(1, NaN), 1, 2)).toThrow(RangeError);
    expect(() => solveAssignment(Float64Array.of(1, -Infinity), 1, 2)).toThrow(RangeError);
    expect(() => solveAssignment(new Float64Array(5), 2, 3)).toThrow(RangeError);
  });

  it('does not modify the input matrix', () => {
    const cost = randomCost(rng(3), 7, 4, 'real');
    const copy = cost.slice();
    solveAssignment(cost, 7, 4);
    expect(Array.from(cost)).toEqual(Array.from(copy));
  });
});

// ---------------------------------------------------------------------------
// MinCostFlow vs HiGHS LP
// ---------------------------------------------------------------------------

interface Net {
  n: number;
  from: number[];
  to: number[];
  cap: number[];
  cost: number[];
}

function randomNet(r: () => number): Net {
  const n = 4 + Math.floor(r() * 7);
  const m = n + Math.floor(r() * (2 * n + 6));
  const net: Net = { n, from: [], to: [], cap: [], cost: [] };
  const add = (a: number, b: number) => {
    net.from.push(a);
    net.to.push(b);
    net.cap.push(Math.floor(r() * 6));
    // mostly integer costs, some real
    net.cost.push(r() < 0.25 ? Math.round(r() * 1000) / 100 : Math.floor(r() * 10));
  };
  // A random path s -> ... -> t so most instances have positive max flow.
  if (r() < 0.8) {
    let prev = 0;
    for (let x = 1; x < n - 1; x++) if (r() < 0.5) (add(prev, x), (prev = x));
    add(prev, n - 1);
  }
  while (net.from.length < m) {
    const a = Math.floor(r() * n);
    let b = Math.floor(r() * (n - 1));
    if (b >= a) b++;
    add(a, b); // parallel and antiparallel edges allowed
  }
  return net;
}

/** CPLEX LP text: flow conservation equalities, capacity bounds. Flow value either a variable `f` (maximized) or fixed. */
function netToLp(net: Net, mode: { maximizeFlow: true } | { flowValue: number }): string {
  const s = 0;
  const t = net.n - 1;
  const m = net.from.length;
  const lines: string[] = [];
  if ('maximizeFlow' in mode) {
    lines.push('Maximize', ' obj: f');
  } else {
    const terms: string[] = [];
    for (let k = 0; k < m; k++) terms.push(`+ ${net.cost[k]} x${k}`);
    lines.push('Minimize', ` obj: ${terms.join(' ')}`);
  }
  lines.push('Subject To');
  for (let v = 0; v < net.n; v++) {
    const terms: string[] = [];
    for (let k = 0; k < m; k++) {
      if (net.from[k] === v && net.to[k] === v) continue;
      if (net.from[k] === v) terms.push(`+ 1 x${k}`);
      if (net.to[k] === v) terms.push(`- 1 x${k}`);
    }
    // out - in = +F at source, -F at sink, 0 elsewhere
    let rhs = 0;
    if ('maximizeFlow' in mode) {
      if (v === s) terms.push('- 1 f');
      if (v === t) terms.push('+ 1 f');
    } else {
      if (v === s) rhs = mode.flowValue;
      if (v === t) rhs = -mode.flowValue;
    }
    if (terms.length === 0) {
      if (rhs !== 0) throw new Error('unreachable: flow demanded at isolated node');
      continue;
    }
    lines.push(` n${v}: ${terms.join(' ')} = ${rhs}`);
  }
  lines.push('Bounds');
  for (let k = 0; k < m; k++) lines.push(` 0 <= x${k} <= ${net.cap[k]}`);
  if ('maximizeFlow' in mode) lines.push(' f >= 0');
  lines.push('End');
  return lines.join('\n');
}

function checkFlowFeasible(mcf: MinCostFlow, ids: number[], net: Net, value: number, cost: number): void {
  const excess = new Float64Array(net.n);
  let c = 0;
  for (let k = 0; k < ids.length; k++) {
    const f = mcf.flowOn(ids[k]);
    expect(f).toBeGreaterThanOrEqual(0);
    expect(f).toBeLessThanOrEqual(net.cap[k]);
    expect(Number.isInteger(f)).toBe(true);
    excess[net.from[k]] -= f;
    excess[net.to[k]] += f;
    c += f * net.cost[k];
  }
  for (let v = 1; v < net.n - 1; v++) expect(excess[v]).toBe(0);
  expect(excess[0] + value).toBe(0); // (avoids -0 vs +0 under Object.is)
  expect(excess[net.n - 1]).toBe(value);
  expect(c).toBeCloseTo(cost, 9);
}

describe('MinCostFlow vs HiGHS LP optimum', () => {
  let highs: Highs;
  beforeAll(async () => {
    // At runtime Node/vitest resolve the package's "import" condition (build/highs.mjs),
    // whose default export is the loader. TypeScript (NodeNext) sees a CommonJS package
    // ("type": "commonjs") and types `.default` as the whole module, hence the cast.
    const mod = (await import('highs')) as unknown as { default: () => Promise<Highs> };
    highs = await mod.default();
  });

  it('matches max-flow value and min cost on 40 random networks (full and partial flow)', () => {
    const r = rng(99);
    let partial = 0;
    let positive = 0;
    for (let t = 0; t < 40; t++) {
      const net = randomNet(r);
      const mcf = new MinCostFlow(net.n, 4);
      const ids: number[] = [];
      for (let k = 0; k < net.from.length; k++) ids.push(mcf.addEdge(net.from[k], net.to[k], net.cap[k], net.cost[k]));

      // Max flow value from HiGHS.
      const maxSol = highs.solve(netToLp(net, { maximizeFlow: true }));
      expect(maxSol.Status).toBe('Optimal');
      const fStar = Math.round(maxSol.ObjectiveValue);

      const full = mcf.solve(0, net.n - 1);
      expect(full.flow).toBe(fStar);
      checkFlowFeasible(mcf, ids, net, full.flow, full.cost);
      if (fStar > 0) positive++;
      const lpFull = highs.solve(netToLp(net, { flowValue: fStar }));
      expect(lpFull.Status).toBe('Optimal');
      expect(full.cost).toBeCloseTo(lpFull.ObjectiveValue, 6);

      // Required flow below max flow.
      if (fStar >= 2) {
        const target = 1 + Math.floor(r() * (fStar - 1));
        const part = mcf.solve(0, net.n - 1, target);
        expect(part.flow).toBe(target);
        checkFlowFeasible(mcf, ids, net, part.flow, part.cost);
        const lpPart = highs.solve(netToLp(net, { flowValue: target }));
        expect(lpPart.Status).toBe('Optimal');
        expect(part.cost).toBeCloseTo(lpPart.ObjectiveValue, 6);
        partial++;
      }
    }
    expect(positive).toBeGreaterThan(25);
    expect(partial).toBeGreaterThan(10);
  });

  it('edge cases: unreachable sink, maxFlow 0, bad input, re-solve after addEdge', () => {
    const mcf = new MinCostFlow(4);
    const e0 = mcf.addEdge(0, 1, 3, 2);
    expect(mcf.flowOn(e0)).toBe(0);
    expect(mcf.solve(0, 3)).toEqual({ flow: 0, cost: 0 });
    expect(mcf.solve(0, 1, 0)).toEqual({ flow: 0, cost: 0 });
    const e1 = mcf.addEdge(1, 3, 5, 1);
    expect(mcf.flowOn(e1)).toBe(0);
    expect(mcf.solve(0, 3)).toEqual({ flow: 3, cost: 9 });
    expect(mcf.flowOn(e0)).toBe(3);
    expect(mcf.flowOn(e1)).toBe(3);
    expect(() => mcf.solve(2, 2)).toThrow(RangeError);
    expect(() => mcf.addEdge(0, 1, 1, -1)).toThrow(RangeError);
    expect(() => mcf.addEdge(0, 1, 1.5, 1)).toThrow(RangeError);
    expect(() => mcf.addEdge(0, 4, 1, 1)).toThrow(RangeError);
    expect(() => mcf.flowOn(99)).toThrow(RangeError);
  });

  it('grows edge storage past the capacity hint', () => {
    const mcf = new MinCostFlow(2, 1);
    for (let k = 0; k < 100; k++) mcf.addEdge(0, 1, 1, k);
    const res = mcf.solve(0, 1, 10);
    expect(res).toEqual({ flow: 10, cost: 45 });
  });
});

// ---------------------------------------------------------------------------
// solveAssignment vs MinCostFlow on assignment instances
// ---------------------------------------------------------------------------

describe('solveAssignment agrees with MinCostFlow on assignment instances', () => {
  it('equal optimum on 60 seeded instances (source -> rows -> cols -> sink)', () => {
    const r = rng(4242);
    for (let t = 0; t < 60; t++) {
      const rows = 1 + Math.floor(r() * 25);
      const cols = 1 + Math.floor(r() * 25);
      const kind: CostKind = t % 3 === 0 ? 'real' : t % 3 === 1 ? 'int' : 'ties';
      const cost = randomCost(r, rows, cols, kind);
      const res = solveAssignment(cost, rows, cols);

      const source = 0;
      const sink = rows + cols + 1;
      const mcf = new MinCostFlow(rows + cols + 2, rows * cols + rows + cols);
      for (let i = 0; i < rows; i++) mcf.addEdge(source, 1 + i, 1, 0);
      for (let j = 0; j < cols; j++) mcf.addEdge(1 + rows + j, sink, 1, 0);
      const pairEdge = new Int32Array(rows * cols);
      for (let i = 0; i < rows; i++)
        for (let j = 0; j < cols; j++) pairEdge[i * cols + j] = mcf.addEdge(1 + i, 1 + rows + j, 1, cost[i * cols + j]);
      const flow = mcf.solve(source, sink);
      expect(flow.flow).toBe(Math.min(rows, cols));
      expect(flow.cost).toBeCloseTo(res.totalCost, 8);

      // The flow's matching is valid and costs the same.
      let used = 0;
      let sum = 0;
      for (let k = 0; k < rows * cols; k++) {
        const f = mcf.flowOn(pairEdge[k]);
        if (f > 0) {
          used++;
          sum += cost[k];
        }
      }
      expect(used).toBe(Math.min(rows, cols));
      expect(sum).toBeCloseTo(res.totalCost, 8);
    }
  });
});
