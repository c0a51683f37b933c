/**
 * Positions from a recording's delta-encoded moves: frame 0 holds absolute cells, every
 * later frame one move code per robot (stay, one step N/E/S/W, or a jump to the next
 * absolute cell of the jump list, when an operator cleared a jam). Keyframes every
 * `keyEvery` frames make seeking O(keyEvery x robots) instead of O(frames x robots).
 * Pure typed-array code shared by the Node reader and the browser viewer.
 */
import { Move, moveMask } from './robot-state.ts';

export interface FrameData {
  robots: number;
  frames: number;
  width: number;
  /** Cells at frame 0. */
  initial: Uint32Array;
  /** frames x robots codes, frame-major. */
  codes: Uint8Array;
  /** Jump targets in the order they occur (frame-major, robot order). */
  jumps: Uint32Array;
}

/** Applies the moves of `frame` (>= 1) to `cells` in place; returns the next jump index. */
export function applyFrame(data: FrameData, frame: number, cells: Int32Array, jumpIndex: number): number {
  const { robots, width, codes, jumps } = data;
  const base = frame * robots;
  for (let r = 0; r < robots; r++) {
    switch (codes[base + r] & moveMask) {
      case Move.Stay:
        break;
      case Move.North:
        cells[r] -= width;
        break;
      case Move.East:
        cells[r] += 1;
        break;
      case Move.South:
        cells[r] += width;
        break;
      case Move.West:
        cells[r] -= 1;
        break;
      case Move.Jump:
        cells[r] = jumps[jumpIndex++];
        break;
    }
  }
  return jumpIndex;
}

export class FrameIndex {
  private readonly keyCells: Int32Array[] = [];
  private readonly keyJumps: number[] = [];

  constructor(
    readonly data: FrameData,
    readonly keyEvery = 32,
  ) {
    const cells = Int32Array.from(data.initial);
    let jump = 0;
    for (let f = 0; f < data.frames; f++) {
      if (f > 0) jump = applyFrame(data, f, cells, jump);
      if (f % keyEvery === 0) {
        this.keyCells.push(Int32Array.from(cells));
        this.keyJumps.push(jump);
      }
    }
  }

  /** Writes the robots' cells at `frame` into `out` (length robots). */
  cellsAt(frame: number, out: Int32Array): void {
    const f = Math.max(0, Math.min(this.data.frames - 1, Math.floor(frame)));
    const k = Math.floor(f / this.keyEvery);
    out.set(this.keyCells[k]);
    let jump = this.keyJumps[k];
    for (let g = k * this.keyEvery + 1; g <= f; g++) jump = applyFrame(this.data, g, out, jump);
  }
}
