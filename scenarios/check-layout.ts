/** The facts `fleetwright check` reports about a scenario's layout (DESIGN §7 `check --json`). */
import type { Scenario } from '../sim/model.ts';
import { checkWellFormed, componentLabels, parseLayout } from '../sim/layout.ts';
import { restCellsForFleet, restCellsOf, withRestCells } from '../sim/rest-cells.ts';

export interface LayoutReport {
  width: number;
  height: number;
  floorCells: number;
  pickups: number;
  drops: number;
  storage: number;
  parking: number;
  connected: boolean;
  wellFormed: boolean;
  wellFormedViolation: string | null;
  /** Plain floor cells the planned policies may add as non-task endpoints (sim/rest-cells.ts) while the floor stays well-formed. */
  restCells: number;
  /** Why no rest cell can be added, or null. */
  restCellsNote: string | null;
  /** Parking spots plus rest cells: the largest fleet the planned policies can rest (token passing, flow-batch). */
  robotsHeld: number;
  /** Rest cells this fleet uses: one per robot beyond the parking spots, as far as the floor has them. */
  restCellsUsed: number;
  /** Well-formed for this fleet once its rest cells count as non-task endpoints. */
  wellFormedWithRestCells: boolean;
}

export function checkLayout(scenario: Scenario): LayoutReport {
  const layout = parseLayout(scenario.layoutText);
  const { count } = componentLabels(layout);
  const robots = scenario.fleet.robots;
  const wellFormed = checkWellFormed(layout, robots);
  const rest = restCellsOf(layout);
  const used = restCellsForFleet(layout, robots);
  const withRest = wellFormed.wellFormed ? wellFormed : checkWellFormed(withRestCells(layout, used), robots);
  return {
    width: layout.width,
    height: layout.height,
    floorCells: layout.floorCells.length,
    pickups: layout.pickups.length,
    drops: layout.drops.length,
    storage: layout.storage.length,
    parking: layout.parking.length,
    connected: count === 1,
    wellFormed: wellFormed.wellFormed,
    wellFormedViolation: wellFormed.violation,
    restCells: rest.cells.length,
    restCellsNote: rest.reason,
    robotsHeld: layout.parking.length + rest.cells.length,
    restCellsUsed: used.length,
    wellFormedWithRestCells: withRest.wellFormed,
  };
}
