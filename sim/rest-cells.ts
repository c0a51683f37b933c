/**
 * Rest cells: extra non-task endpoints chosen among plain floor cells, so that a floor with
 * fewer marked parking spots (H) than robots stays well-formed for the decoupled policies.
 *
 * Well-formedness (Ma, Li, Kumar, Koenig, "Lifelong Multi-Agent Path Finding for Online
 * Pickup and Delivery Tasks", AAMAS 2017, Definition 1; checkWellFormed in layout.ts): at
 * least as many non-task endpoints as robots, and any two endpoints joined by a path that
 * passes through no other endpoint. Token passing is complete on such floors because a robot
 * with nothing to do can always reach a non-task endpoint that no other path ends on, and
 * rest there without blocking anybody's way between endpoints. Marking more floor cells as
 * non-task endpoints keeps that argument intact as long as the second condition survives;
 * this file chooses such cells.
 *
 * Method (greedy, one pass, every test local):
 *  - Invariant (I): the plain floor cells F (passable, not an endpoint, not chosen) have one
 *    4-connected component K that every endpoint touches. (I) implies the pair condition:
 *    any two endpoints are joined through K, which holds no endpoint.
 *  - A candidate c in K is accepted when removing it from F keeps (I) with c as a new
 *    endpoint: (a) the F-neighbours of c are 4-connected to one another through the F cells
 *    of the 8 cells around c, so any path through c can go round it and K minus c stays
 *    connected (a local form of the "simple point" test of digital topology for a
 *    4-connected foreground; Rosenfeld, "Connectivity in Digital Pictures", JACM 17(1),
 *    1970, (memory)); (b) c touches K (has an F-neighbour), so the new endpoint reaches K;
 *    (c) every endpoint next to c keeps another F-neighbour in K, so c is never a
 *    station's or a parking spot's only access.
 *  - Candidates are tried in order of preference, so that a fleet that needs k rest cells
 *    gets the k best: first cells next to no task endpoint (P, D, S), so a resting robot
 *    never stands beside a station; then fewer F-neighbours first (cells along walls and in
 *    corners before the middle of an aisle: "out of the main aisles where possible"); then
 *    farther from the nearest task endpoint; then reading order. The accepted list is in
 *    acceptance order; its length is how many extra robots the floor can hold this way (a
 *    greedy count, not a proven maximum).
 * Each test looks at a 3 x 3 window, so the pass is O(cells log cells) (the sort), and the
 * result is computed once per layout and cached.
 *
 * If (I) does not hold for the marked endpoints (no aisle that every endpoint touches), no
 * rest cell is chosen and `reason` says why: such a floor needs its layout fixed first.
 */
import { buildLayout, CellKind, componentLabels, isEndpointKind, type Layout } from './layout.ts';

export interface RestCellChoice {
  /** Chosen cells in order of preference; a fleet uses a prefix of it. */
  readonly cells: Int32Array;
  /** Why no rest cell could be chosen, or null. */
  readonly reason: string | null;
}

/** Ring around a cell in cyclic order (N, NE, E, SE, S, SW, W, NW): consecutive entries are 4-neighbours. */
const ringDx = [0, 1, 1, 1, 0, -1, -1, -1];
const ringDy = [-1, -1, 0, 1, 1, 1, 0, -1];

function isTaskEndpointKind(kind: number): boolean {
  return kind === CellKind.Pickup || kind === CellKind.Drop || kind === CellKind.Storage;
}

/** Chooses rest cells for a layout (uncached; see restCellsOf). */
export function chooseRestCells(layout: Layout): RestCellChoice {
  const { width, height, cellCount, kind, passable, neighbors } = layout;
  const endpoint = new Uint8Array(cellCount);
  for (let c = 0; c < cellCount; c++) endpoint[c] = isEndpointKind(kind[c]) ? 1 : 0;
  // free[c] = 1 for the cells of F (updated as cells are chosen).
  const free = new Uint8Array(cellCount);
  for (let c = 0; c < cellCount; c++) free[c] = passable[c] && !endpoint[c] ? 1 : 0;
  const { labels, count } = componentLabels(layout, free);

  // The component K that every endpoint touches, if any: count, per component, the endpoints touching it.
  const touching = new Int32Array(count);
  let endpoints = 0;
  for (let c = 0; c < cellCount; c++) {
    if (!endpoint[c]) continue;
    endpoints++;
    for (let d = 0; d < 4; d++) {
      const n = neighbors[c * 4 + d];
      if (n < 0 || !free[n]) continue;
      let seen = false;
      for (let e = 0; e < d; e++) {
        const m = neighbors[c * 4 + e];
        if (m >= 0 && free[m] && labels[m] === labels[n]) seen = true;
      }
      if (!seen) touching[labels[n]]++;
    }
  }
  if (endpoints === 0) return { cells: new Int32Array(0), reason: 'the floor has no endpoints' };
  let shared = -1;
  let mostTouched = 0;
  for (let k = 0; k < count; k++) {
    if (touching[k] === endpoints) shared = k;
    if (touching[k] > touching[mostTouched]) mostTouched = k;
  }
  if (shared < 0) {
    // Name one endpoint that does not touch the most shared aisle.
    let outside = -1;
    for (let c = 0; c < cellCount && outside < 0; c++) {
      if (!endpoint[c]) continue;
      let touches = false;
      for (let d = 0; d < 4; d++) {
        const n = neighbors[c * 4 + d];
        if (n >= 0 && free[n] && labels[n] === mostTouched) touches = true;
      }
      if (!touches) outside = c;
    }
    return noRest(layout, outside);
  }
  const inK = (c: number) => free[c] === 1 && labels[c] === shared;

  // Nearest task endpoint (breadth-first over passable cells), for the preference order.
  const far = new Int32Array(cellCount).fill(0x3fffffff);
  const queue = new Int32Array(cellCount);
  let head = 0;
  let tail = 0;
  for (let c = 0; c < cellCount; c++) {
    if (passable[c] && isTaskEndpointKind(kind[c])) {
      far[c] = 0;
      queue[tail++] = c;
    }
  }
  while (head < tail) {
    const c = queue[head++];
    for (let d = 0; d < 4; d++) {
      const n = neighbors[c * 4 + d];
      if (n >= 0 && far[n] === 0x3fffffff) {
        far[n] = far[c] + 1;
        queue[tail++] = n;
      }
    }
  }

  const candidates: number[] = [];
  const besideStation = new Uint8Array(cellCount);
  const floorDegree = new Uint8Array(cellCount);
  for (let c = 0; c < cellCount; c++) {
    if (!inK(c)) continue;
    candidates.push(c);
    for (let d = 0; d < 4; d++) {
      const n = neighbors[c * 4 + d];
      if (n < 0) continue;
      if (isTaskEndpointKind(kind[n])) besideStation[c] = 1;
      if (free[n]) floorDegree[c]++;
    }
  }
  candidates.sort((a, b) => besideStation[a] - besideStation[b] || floorDegree[a] - floorDegree[b] || far[b] - far[a] || a - b);

  const chosen: number[] = [];
  const runOf = new Int32Array(8);
  for (const c of candidates) {
    const x = c % width;
    const y = (c - x) / width;
    // (b) c must keep touching K.
    let floorNeighbours = 0;
    for (let d = 0; d < 4; d++) {
      const n = neighbors[c * 4 + d];
      if (n >= 0 && free[n]) floorNeighbours++;
    }
    if (floorNeighbours === 0) continue;
    // (a) F-neighbours of c connected through the F cells of its ring.
    let gap = -1;
    const ringFree = [0, 0, 0, 0, 0, 0, 0, 0];
    for (let i = 0; i < 8; i++) {
      const rx = x + ringDx[i];
      const ry = y + ringDy[i];
      const inside = rx >= 0 && ry >= 0 && rx < width && ry < height;
      ringFree[i] = inside && free[ry * width + rx] ? 1 : 0;
      if (!ringFree[i] && gap < 0) gap = i;
    }
    if (gap >= 0) {
      let run = 0;
      for (let k = 1; k <= 8; k++) {
        const i = (gap + k) % 8;
        if (ringFree[i]) runOf[i] = run;
        else run++;
      }
      let neighbourRun = -1;
      let split = false;
      for (let i = 0; i < 8; i += 2) {
        if (!ringFree[i]) continue;
        if (neighbourRun < 0) neighbourRun = runOf[i];
        else if (runOf[i] !== neighbourRun) split = true;
      }
      if (split) continue;
    }
    // (c) every endpoint beside c keeps another F-neighbour (in K, which stays connected).
    let strands = false;
    for (let d = 0; d < 4 && !strands; d++) {
      const e = neighbors[c * 4 + d];
      if (e < 0 || free[e]) continue;
      if (!endpoint[e]) continue;
      let other = false;
      for (let k = 0; k < 4; k++) {
        const n = neighbors[e * 4 + k];
        if (n >= 0 && n !== c && inK(n)) other = true;
      }
      if (!other) strands = true;
    }
    if (strands) continue;
    free[c] = 0;
    endpoint[c] = 1;
    chosen.push(c);
  }
  return { cells: Int32Array.from(chosen), reason: null };
}

function noRest(layout: Layout, cell: number): RestCellChoice {
  const x = cell % layout.width;
  const y = (cell - x) / layout.width;
  return { cells: new Int32Array(0), reason: `no aisle touches every endpoint (${x}:${y} does not touch the one the others share)` };
}

const cache = new WeakMap<Layout, RestCellChoice>();

/** The rest cells of a layout, chosen once and cached for the layout object. */
export function restCellsOf(layout: Layout): RestCellChoice {
  let choice = cache.get(layout);
  if (!choice) {
    choice = chooseRestCells(layout);
    cache.set(layout, choice);
  }
  return choice;
}

/**
 * Rest cells a fleet of `robots` uses: none while the marked parking spots suffice (marked
 * spots first), otherwise one per robot beyond them, the most preferred first, as far as
 * the floor has them.
 */
export function restCellsForFleet(layout: Layout, robots: number): Int32Array {
  const needed = Math.max(0, robots - layout.parking.length);
  if (needed === 0) return new Int32Array(0);
  const { cells } = restCellsOf(layout);
  return cells.subarray(0, Math.min(needed, cells.length));
}

/**
 * Where a fleet may rest: the marked parking spots (reading order), then its rest cells in
 * order of preference.
 */
export function restSpotsForFleet(layout: Layout, robots: number): Int32Array {
  const extra = restCellsForFleet(layout, robots);
  const spots = new Int32Array(layout.parking.length + extra.length);
  spots.set(layout.parking);
  spots.set(extra, layout.parking.length);
  return spots;
}

/** The layout with the given cells marked as parking, e.g. to check well-formedness with rest cells. */
export function withRestCells(layout: Layout, cells: ArrayLike<number>): Layout {
  const kind = layout.kind.slice();
  for (let i = 0; i < cells.length; i++) kind[cells[i]] = CellKind.Parking;
  return buildLayout(layout.width, layout.height, kind);
}
