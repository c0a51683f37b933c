/** The facts `fleetwright check` reports about a scenario's layout (DESIGN §7 `check --json`). */
import type { Scenario } from '../sim/model.ts';
import { checkWellFormed, componentLabels, parseLayout } from '../sim/layout.ts';

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
}

export function checkLayout(scenario: Scenario): LayoutReport {
  const layout = parseLayout(scenario.layoutText);
  const { count } = componentLabels(layout);
  const wellFormed = checkWellFormed(layout, scenario.fleet.robots);
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
  };
}
