/**
 * Handling time per station: the scenario's default pickup and drop handling, overridden
 * for single stations or named groups of them (`handling.stations`, resolved to cells by the
 * loader). Each station gets its own sampler; all draw from the one handling stream in
 * release order (pickup, drop, then return for round trips, as without overrides), so two
 * policies on one seed still see identical handling times (common random numbers).
 */
import type { HandlingSpec, Scenario } from './model.ts';
import { makeHandlingSampler, type Rng } from './demand.ts';

export type HandlingSampler = (rng: Rng) => number;

export class StationHandling {
  private readonly pickupAt = new Map<number, HandlingSampler>();
  private readonly dropAt = new Map<number, HandlingSampler>();
  private readonly pickupDefault: HandlingSampler;
  private readonly dropDefault: HandlingSampler;

  constructor(handling: Scenario['handling'], tickSeconds: number) {
    this.pickupDefault = makeHandlingSampler(handling.pickupSeconds, tickSeconds);
    this.dropDefault = makeHandlingSampler(handling.dropSeconds, tickSeconds);
    for (const [cell, override] of handling.stations ?? []) {
      if (override.pickupSeconds) this.pickupAt.set(cell, makeHandlingSampler(override.pickupSeconds, tickSeconds));
      if (override.dropSeconds) this.dropAt.set(cell, makeHandlingSampler(override.dropSeconds, tickSeconds));
    }
  }

  /** Sampler of pickup (or shelf lift and set-down) handling ticks at `cell`. */
  pickup(cell: number): HandlingSampler {
    return this.pickupAt.get(cell) ?? this.pickupDefault;
  }

  /** Sampler of drop (or pick) handling ticks at `cell`. */
  drop(cell: number): HandlingSampler {
    return this.dropAt.get(cell) ?? this.dropDefault;
  }
}

/** Mean of a handling spec in seconds (for hand formulas). */
export function meanHandlingSeconds(spec: HandlingSpec): number {
  switch (spec.dist) {
    case 'fixed':
      return spec.seconds;
    case 'uniform':
      return (spec.min + spec.max) / 2;
    case 'exponential':
      return spec.mean;
  }
}
