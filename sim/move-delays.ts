/**
 * Execution delays (`faults.delays`): every time a robot starts a move, the move is held
 * back with probability `probabilityPerMove` for a duration drawn from `seconds` (rounded to
 * whole ticks like handling times, sim/demand.ts); when the hold ends the robot tries again,
 * and that try may be held back too. This is the delay model of Ma, Kumar & Koenig,
 * "Multi-Agent Path Finding with Delay Probabilities", AAAI 2017 (each move attempt fails
 * independently with a fixed probability), with a hold of a given length instead of one
 * timestep. With a fixed hold of d ticks the number of holds before a move succeeds is
 * geometric, so a move costs on average 1 + d p / (1 - p) ticks.
 *
 * All draws come from the replication's own stream `delays`, so arrivals, handling and
 * every other stream are the same with and without delays (common random numbers); which
 * moves are drawn for depends on the policy's moves.
 */
import type { DelaySpec } from './model.ts';
import { makeHandlingSampler, type Rng } from './demand.ts';

export class MoveDelays {
  /** Moves started (one draw each). */
  attempts = 0;
  /** Moves held back, and the ticks they were held. */
  heldMoves = 0;
  heldTicks = 0;
  private readonly duration: (rng: Rng) => number;
  private readonly probability: number;

  constructor(
    spec: DelaySpec,
    tickSeconds: number,
    private readonly stream: Rng,
  ) {
    this.probability = spec.probabilityPerMove;
    this.duration = makeHandlingSampler(spec.seconds, tickSeconds);
  }

  /** Ticks by which the move a robot starts now is held back: 0 when it goes ahead. */
  draw(): number {
    this.attempts++;
    if (!(this.stream() < this.probability)) return 0;
    const ticks = this.duration(this.stream);
    if (ticks > 0) {
      this.heldMoves++;
      this.heldTicks += ticks;
    }
    return ticks;
  }
}
