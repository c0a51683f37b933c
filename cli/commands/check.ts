/** `fleetwright check`: what the layout holds, and whether it is connected and well-formed. */
import { loadScenarioFile, type ScenarioOverrides } from '../../scenarios/load.ts';
import { checkLayout } from '../../scenarios/check-layout.ts';
import { toJson } from '../../reports/summary.ts';

export function checkCommand(scenarioPath: string, json: boolean, overrides: ScenarioOverrides): void {
  const scenario = loadScenarioFile(scenarioPath, overrides);
  const report = checkLayout(scenario);
  if (json) {
    process.stdout.write(`${toJson(report)}\n`);
    return;
  }
  const lines = [
    `${scenario.name}: ${report.width} x ${report.height} cells (${(report.width * scenario.units.cellMeters).toFixed(1)} m x ${(report.height * scenario.units.cellMeters).toFixed(1)} m), ${report.floorCells} travelable`,
    `pickups ${report.pickups}, drops ${report.drops}, storage ${report.storage}, parking ${report.parking}; fleet ${scenario.fleet.robots} robots`,
    `connected: ${report.connected ? 'yes' : 'no'}`,
    `well-formed (Ma et al. 2017): ${report.wellFormed ? 'yes' : `no: ${report.wellFormedViolation}`}`,
  ];
  lines.push(
    report.restCellsNote === null
      ? `rest cells: ${report.restCells} floor cells can be extra rest spots with the floor still well-formed, so token passing and flow-batch hold ${report.robotsHeld} robots (${report.parking} on parking); this fleet uses ${report.restCellsUsed}`
      : `rest cells: none (${report.restCellsNote}); token passing and flow-batch hold ${report.robotsHeld} robots`,
  );
  if (!report.wellFormed) {
    lines.push(`well-formed with rest cells for ${scenario.fleet.robots} robots: ${report.wellFormedWithRestCells ? 'yes' : 'no'}`);
  }
  if (!report.wellFormedWithRestCells) {
    lines.push('planned policies (token passing, flow-batch) are only guaranteed to finish every task on well-formed layouts; expect waits or stalls');
  }
  process.stdout.write(`${lines.join('\n')}\n`);
}
