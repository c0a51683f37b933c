/**
 * Lead time split into where a task's time went, from its timestamps (release, the
 * assignment that carried it, pickup done, delivery) and its two handling durations:
 *
 *   waiting for a robot = assigned - released   (the last assignment: a task handed back by a
 *                                                swap or a breakdown was still waiting;
 *                                                round trips: also waiting for the shelf)
 *   empty travel        = arrived at pickup - assigned, arrival = pickup done - pickup handling
 *   loaded travel       = arrived at drop - pickup done, arrival = delivered - drop handling
 *   handling            = pickup handling + drop handling
 *
 * Travel includes every stop on the way (blocked, waiting for a reserved cell, a loaded
 * robot's repair). Handling starts on arrival and lasts exactly its drawn duration (the
 * engine's handling convention, sim/policy.ts), so the four parts add up to the lead time,
 * delivered - released, exactly.
 */

export interface LeadTimeParts {
  waitingForRobot: number;
  emptyTravel: number;
  loadedTravel: number;
  handling: number;
}

export const leadTimePartNames = ['waitingForRobot', 'emptyTravel', 'loadedTravel', 'handling'] as const;

/** The four parts, in the unit of the timestamps (ticks in the engine). */
export function splitLeadTime(releaseTick: number, assignedTick: number, pickedUpTick: number, pickupTicks: number, deliveredTick: number, dropTicks: number): LeadTimeParts {
  const pickupArrival = pickedUpTick - pickupTicks;
  const dropArrival = deliveredTick - dropTicks;
  return {
    waitingForRobot: assignedTick - releaseTick,
    emptyTravel: pickupArrival - assignedTick,
    loadedTravel: dropArrival - pickedUpTick,
    handling: pickupTicks + dropTicks,
  };
}
