/**
 * Path arrays carved out of shared blocks (arena allocation, as in Hanson, "Fast allocation
 * and deallocation of memory based on object lifetimes", Software: Practice and Experience
 * 20(1), 1990), for the planned policies' committed paths.
 *
 * Why: every plan ends in a fresh path of tens of cells that the reservation table and the
 * executor keep until the robot's next plan (they tell paths apart by identity, so a path
 * is never overwritten in place). An Int32Array of that size gets its own off-heap backing
 * store, which costs about a microsecond to allocate and adds to the collector's external
 * memory count; on the demo hall that was about 5% of token passing's planning time. A view
 * into a block costs a small on-heap object. A block is freed by the collector once no path
 * in it is alive, so memory is what the live paths need plus at most one block per live
 * path in the worst case (each robot holding the last path of a different block).
 */

/** Bytes per block: room for a few hundred typical paths. */
const blockBytes = 16 * 1024;

let block = new ArrayBuffer(blockBytes);
let used = 0;

/** A new zero-filled Int32Array of `length` cells, usually a view into a shared block. */
export function newPath(length: number): Int32Array {
  const bytes = 4 * length;
  // Long paths get their own array: they would waste most of a block.
  if (bytes > blockBytes / 8) return new Int32Array(length);
  if (used + bytes > blockBytes) {
    block = new ArrayBuffer(blockBytes);
    used = 0;
  }
  const path = new Int32Array(block, used, length);
  used += bytes;
  return path;
}

/** A copy of the first `length` cells of `source`, from `newPath`. */
export function copyPath(source: Int32Array, length: number): Int32Array {
  const path = newPath(length);
  for (let i = 0; i < length; i++) path[i] = source[i];
  return path;
}
