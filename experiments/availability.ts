/**
 * The availability factor of a planner's hand formula (Groover, Automation, Production
 * Systems, and Computer-Integrated Manufacturing, ch. 10: available time per vehicle
 * AT = 60 min x availability x traffic factor x efficiency), from the scenario's battery and
 * breakdowns, without congestion:
 *
 *   breakdowns: A_b = MTBF / (MTBF + MTTR) (steady state of an alternating renewal process);
 *   charging:   A_c = W / (W + T_detour + T_charge), per charge cycle:
 *     W        = (chargeUpTo - chargeBelow) x runHours of work on one charge;
 *     T_detour = the trip from a drop to its nearest charger and on to a pickup, less the
 *                drop-to-pickup trip it replaces (layout means, at nominal speed);
 *     T_charge = (W + T_detour) x chargeHours / runHours (everything but charging drains);
 *   A = A_b x A_c (both take the robot away; they overlap rarely).
 * A robot finishes the task it holds before charging, so W is slightly longer in the
 * engine; the difference is under one task per charge (common practice to ignore).
 */
import type { Scenario } from '../sim/model.ts';
import type { Layout } from '../sim/layout.ts';
import { unreachable, type DistanceTables } from '../sim/distance-table.ts';
import { tickSecondsOf } from '../sim/model.ts';
import { steadyStateAvailability } from '../sim/breakdowns.ts';

export interface HandAvailability {
  /** MTBF / (MTBF + MTTR); 1 without breakdowns. */
  breakdowns: number;
  /** Share of time not charging or driving to and from a charger; 1 without a battery. */
  charging: number;
  /** The product: the availability factor of the hand formula. */
  total: number;
  /** Seconds of the charge cycle, for the record (0 without a battery). */
  workSecondsPerCharge: number;
  detourSeconds: number;
  chargeSeconds: number;
}

export function handAvailability(scenario: Scenario, layout: Layout, distances: DistanceTables): HandAvailability {
  const breakdowns = scenario.faults?.breakdowns ? steadyStateAvailability(scenario.faults.breakdowns) : 1;
  const battery = scenario.fleet.battery;
  if (!battery || layout.chargers.length === 0) {
    return { breakdowns, charging: 1, total: breakdowns, workSecondsPerCharge: 0, detourSeconds: 0, chargeSeconds: 0 };
  }
  const tickSeconds = tickSecondsOf(scenario);
  const work = (battery.chargeUpTo - battery.chargeBelow) * battery.runHours * 3600;
  const roundTrip = scenario.demand.mode === 'round-trip';
  // Where tasks end (drops; shelf spots in round trips) and where the next begins (pickups; shelf spots).
  const ends = roundTrip ? layout.storage : layout.drops;
  const starts = roundTrip ? layout.storage : layout.pickups;
  const tables = Array.from(layout.chargers, (c) => distances.to(c));
  const startTables = Array.from(starts, (c) => distances.to(c));
  let detourCells = 0;
  let pairs = 0;
  for (const end of ends) {
    let nearest = -1;
    for (let i = 0; i < tables.length; i++) if (nearest < 0 || tables[i][end] < tables[nearest][end]) nearest = i;
    const toCharger = tables[nearest][end];
    if (toCharger >= unreachable) continue;
    const charger = layout.chargers[nearest];
    for (const table of startTables) {
      detourCells += toCharger + table[charger] - table[end];
      pairs++;
    }
  }
  const detour = pairs > 0 ? (detourCells / pairs) * tickSeconds : 0;
  const charge = ((work + detour) * battery.chargeHours) / battery.runHours;
  const charging = work / (work + detour + charge);
  return { breakdowns, charging, total: breakdowns * charging, workSecondsPerCharge: work, detourSeconds: detour, chargeSeconds: charge };
}
