/**
 * What a robot is doing in one recorded tick, from its phase in the world (sim/world.ts)
 * and whether it moved in that tick. One byte per robot per tick holds the move (bits 0-2),
 * the state (bits 3-5) and whether it carries a load (bit 6); see format.ts.
 */
export const RobotState = {
  /** No task, not moving. */
  Parked: 0,
  /** Moving without a load (to a pickup, or an idle robot going to parking). */
  Empty: 1,
  /** Moving with a load (phase ToDrop or later: parcel or shelf). */
  Loaded: 2,
  /** Being loaded or unloaded at a station. */
  Handling: 3,
  /** Holding a task but did not move this tick (blocked, queueing, waiting for a reserved cell). */
  Waiting: 4,
  /** Member of a deadlock episode between its detection and its end. */
  Stalled: 5,
} as const;
export type RobotState = (typeof RobotState)[keyof typeof RobotState];

export const robotStateNames = ['parked', 'empty', 'loaded', 'handling', 'waiting', 'stalled'] as const;

/** Move codes: the step a robot took into this tick. */
export const Move = { Stay: 0, North: 1, East: 2, South: 3, West: 4, Jump: 7 } as const;

export const moveMask = 0b111;
export const stateShift = 3;
export const stateMask = 0b111 << stateShift;
export const loadBit = 1 << 6;

export function stateOfCode(code: number): number {
  return (code & stateMask) >> stateShift;
}
