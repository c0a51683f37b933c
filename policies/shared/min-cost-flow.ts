/**
 * Minimum-cost flow by successive shortest paths with Johnson potentials.
 *
 * Method: successive shortest path algorithm with node potentials (reduced
 * costs c_ij + pi_i - pi_j >= 0 on every residual arc, so each shortest path
 * is found by Dijkstra), Ahuja, Magnanti & Orlin, "Network Flows" (1993),
 * ch. 9.7; potential trick from Edmonds & Karp (1972) / Johnson (1977).
 * Dijkstra uses an indexed binary heap with decrease-key and stops as soon as
 * the sink is settled; potentials are then updated with
 * pi_v += min(dist_v, dist_sink), which keeps all reduced costs non-negative
 * (AMO Lemma 9.11 with distances capped at the sink distance).
 *
 * Requirements (checked in addEdge): non-negative integer capacities and
 * non-negative finite costs. Because all costs are >= 0 the zero potential is
 * already feasible, so no Bellman-Ford initialisation is needed. Integer
 * capacities guarantee termination and an integral optimal flow.
 *
 * Complexity: O(F * (E log V)) where F is the flow value sent (each
 * augmentation sends >= 1 unit) -- pseudo-polynomial in capacities; O(V + E)
 * memory in typed arrays (CSR adjacency built at solve time).
 *
 * Behaviour on edge cases:
 *  - solve() always starts from the zero flow, so it can be called repeatedly
 *    (e.g. with a different sink or maxFlow) and after further addEdge calls.
 *  - maxFlow (default Infinity) caps the flow value: the result is the
 *    minimum-cost flow of value min(maxFlow, max s-t flow). SSP is optimal for
 *    every intermediate flow value, so a capped run is still optimal.
 *  - Sink unreachable: returns { flow: 0, cost: 0 }. source === sink throws.
 *  - Parallel edges and self-loops are allowed (a self-loop never carries flow).
 *
 * MinCostFlow vs solveAssignment (policies/shared/assignment.ts):
 *  - Dense one-to-one robot/task matching with a full cost matrix: use
 *    solveAssignment (O(n^2 m) with tight array scans; the flow formulation
 *    source->robots->tasks->sink solves the same problem but costs
 *    O(n * nm log(n+m)) with heap and pointer-chasing overhead; measured on
 *    1000 x 1000 integer costs: ~7 s here vs ~0.13 s for solveAssignment).
 *  - Use MinCostFlow when the structure is not a plain 1:1 matching: sparse
 *    candidate edges (only k nearest tasks per robot), capacities > 1 (a robot
 *    carrying several loads, station throughput limits), intermediate nodes
 *    (zones, chargers), or when only k < min(rows, cols) pairs must be made
 *    (solve with maxFlow = k).
 */

/** Flow/cost pair returned by {@link MinCostFlow.solve}. */
export interface MinCostFlowResult {
  flow: number;
  cost: number;
}

export class MinCostFlow {
  private readonly nodeCount: number;
  private edgeCount = 0;
  // User edges, growable (doubling).
  private eFrom: Int32Array;
  private eTo: Int32Array;
  private eCap: Float64Array;
  private eCost: Float64Array;
  // Residual capacity per arc: arc 2k is edge k forward, arc 2k+1 its reverse.
  // Length 2 * edgeCount after solve(); empty before.
  private residual: Float64Array = new Float64Array(0);
  private solvedEdges = 0;

  constructor(nodeCount: number, edgeCapacityHint = 16) {
    if (!Number.isInteger(nodeCount) || nodeCount < 0) {
      throw new RangeError(`MinCostFlow: bad node count ${nodeCount}`);
    }
    this.nodeCount = nodeCount;
    const cap = Math.max(1, Math.floor(edgeCapacityHint));
    this.eFrom = new Int32Array(cap);
    this.eTo = new Int32Array(cap);
    this.eCap = new Float64Array(cap);
    this.eCost = new Float64Array(cap);
  }

  /** Adds a directed edge; returns its index for {@link flowOn}. */
  addEdge(from: number, to: number, capacity: number, cost: number): number {
    const n = this.nodeCount;
    if (!Number.isInteger(from) || from < 0 || from >= n || !Number.isInteger(to) || to < 0 || to >= n) {
      throw new RangeError(`MinCostFlow.addEdge: node out of range (${from} -> ${to}, ${n} nodes)`);
    }
    if (!Number.isSafeInteger(capacity) || capacity < 0) {
      throw new RangeError(`MinCostFlow.addEdge: capacity must be a non-negative integer, got ${capacity}`);
    }
    if (!Number.isFinite(cost) || cost < 0) {
      throw new RangeError(`MinCostFlow.addEdge: cost must be finite and >= 0, got ${cost}`);
    }
    const k = this.edgeCount;
    if (k === this.eFrom.length) this.grow();
    this.eFrom[k] = from;
    this.eTo[k] = to;
    this.eCap[k] = capacity;
    this.eCost[k] = cost;
    this.edgeCount = k + 1;
    return k;
  }

  /** Flow on edge `edge` from the last solve() (0 before any solve or for edges added since). */
  flowOn(edge: number): number {
    if (!Number.isInteger(edge) || edge < 0 || edge >= this.edgeCount) {
      throw new RangeError(`MinCostFlow.flowOn: no edge ${edge}`);
    }
    if (edge >= this.solvedEdges) return 0;
    return this.residual[2 * edge + 1];
  }

  /** Minimum-cost flow of value min(maxFlow, max flow) from source to sink. */
  solve(source: number, sink: number, maxFlow = Infinity): MinCostFlowResult {
    const n = this.nodeCount;
    if (!Number.isInteger(source) || source < 0 || source >= n || !Number.isInteger(sink) || sink < 0 || sink >= n) {
      throw new RangeError(`MinCostFlow.solve: source/sink out of range (${source}, ${sink})`);
    }
    if (source === sink) throw new RangeError('MinCostFlow.solve: source === sink');
    if (!(maxFlow >= 0)) throw new RangeError(`MinCostFlow.solve: maxFlow must be >= 0, got ${maxFlow}`);

    const m = this.edgeCount;
    const arcs = 2 * m;
    const eFrom = this.eFrom;
    const eTo = this.eTo;
    const eCost = this.eCost;

    // Residual network: arc a has head arcHead[a], cost arcCost[a]; reverse is a ^ 1.
    const residual = new Float64Array(arcs);
    const arcHead = new Int32Array(arcs);
    const arcCost = new Float64Array(arcs);
    // CSR adjacency by tail (counting sort).
    const firstOut = new Int32Array(n + 1);
    for (let k = 0; k < m; k++) {
      const a = 2 * k;
      residual[a] = this.eCap[k];
      arcHead[a] = eTo[k];
      arcHead[a + 1] = eFrom[k];
      arcCost[a] = eCost[k];
      arcCost[a + 1] = -eCost[k];
      firstOut[eFrom[k] + 1]++;
      firstOut[eTo[k] + 1]++;
    }
    for (let x = 0; x < n; x++) firstOut[x + 1] += firstOut[x];
    const fill = firstOut.slice(0, n);
    const adj = new Int32Array(arcs);
    for (let k = 0; k < m; k++) {
      adj[fill[eFrom[k]]++] = 2 * k;
      adj[fill[eTo[k]]++] = 2 * k + 1;
    }
    this.residual = residual;
    this.solvedEdges = m;

    const pi = new Float64Array(n); // zero potentials are feasible since costs >= 0
    const dist = new Float64Array(n);
    const parentArc = new Int32Array(n);
    const state = new Uint8Array(n); // 0 unseen, 1 in heap, 2 settled
    const heap = new Int32Array(n);
    const pos = new Int32Array(n);

    let flow = 0;
    let cost = 0;
    while (flow < maxFlow) {
      // ---- Dijkstra on reduced costs, stop when sink is settled ----
      dist.fill(Infinity);
      state.fill(0);
      dist[source] = 0;
      parentArc[source] = -1;
      heap[0] = source;
      pos[source] = 0;
      state[source] = 1;
      let size = 1;
      let reached = false;
      while (size > 0) {
        // pop min
        const x = heap[0];
        size--;
        if (size > 0) siftDown(heap, pos, dist, size, heap[size]);
        state[x] = 2;
        if (x === sink) {
          reached = true;
          break;
        }
        const dx = dist[x];
        const px = pi[x];
        for (let p = firstOut[x], end = firstOut[x + 1]; p < end; p++) {
          const a = adj[p];
          if (residual[a] <= 0) continue;
          const y = arcHead[a];
          if (state[y] === 2) continue;
          const nd = dx + arcCost[a] + px - pi[y];
          if (nd < dist[y]) {
            dist[y] = nd;
            parentArc[y] = a;
            if (state[y] === 0) {
              state[y] = 1;
              pos[y] = size;
              heap[size] = y;
              size++;
            }
            siftUp(heap, pos, dist, pos[y]);
          }
        }
      }
      if (!reached) break;

      // ---- Potentials: pi_v += min(dist_v, dist_sink) ----
      const dSink = dist[sink];
      for (let x = 0; x < n; x++) {
        pi[x] += state[x] === 2 ? dist[x] : dSink;
      }

      // ---- Bottleneck and augmentation ----
      let delta = maxFlow - flow;
      for (let x = sink; x !== source; ) {
        const a = parentArc[x];
        if (residual[a] < delta) delta = residual[a];
        x = arcHead[a ^ 1];
      }
      let pathCost = 0;
      for (let x = sink; x !== source; ) {
        const a = parentArc[x];
        residual[a] -= delta;
        residual[a ^ 1] += delta;
        pathCost += arcCost[a];
        x = arcHead[a ^ 1];
      }
      flow += delta;
      cost += delta * pathCost;
    }
    return { flow, cost };
  }

  private grow(): void {
    const cap = this.eFrom.length * 2;
    const f = new Int32Array(cap);
    f.set(this.eFrom);
    this.eFrom = f;
    const t = new Int32Array(cap);
    t.set(this.eTo);
    this.eTo = t;
    const c = new Float64Array(cap);
    c.set(this.eCap);
    this.eCap = c;
    const w = new Float64Array(cap);
    w.set(this.eCost);
    this.eCost = w;
  }
}

/** Binary-heap pop helper: places `last` at the root of a heap of `size` and sifts it down. */
function siftDown(heap: Int32Array, pos: Int32Array, dist: Float64Array, size: number, last: number): void {
  const dl = dist[last];
  let i = 0;
  for (;;) {
    let c = 2 * i + 1;
    if (c >= size) break;
    if (c + 1 < size && dist[heap[c + 1]] < dist[heap[c]]) c++;
    if (dist[heap[c]] >= dl) break;
    const y = heap[c];
    heap[i] = y;
    pos[y] = i;
    i = c;
  }
  heap[i] = last;
  pos[last] = i;
}

/** Moves heap[i] up after its key decreased. */
function siftUp(heap: Int32Array, pos: Int32Array, dist: Float64Array, i: number): void {
  const x = heap[i];
  const dx = dist[x];
  while (i > 0) {
    const p = (i - 1) >> 1;
    const y = heap[p];
    if (dist[y] <= dx) break;
    heap[i] = y;
    pos[y] = i;
    i = p;
  }
  heap[i] = x;
  pos[x] = i;
}
