/**
 * The sizing hand formula (experiments/hand-formula.ts, Groover, Automation, Production
 * Systems, and Computer-Integrated Manufacturing, ch. 10) with operating realism: per-station
 * handling enters the cycle time as each station's mean weighted by its share of tasks, and
 * the available time per robot AT = 3600 s x availability, the availability being
 * MTBF / (MTBF + MTTR) (alternating renewal process; REFERENCES.md: 2 h and 30 min give 0.8)
 * times the share of time not charging (experiments/availability.ts). Values by hand.
 */
import { describe, expect, it } from 'vitest';
import { handFormulaFor } from '../experiments/hand-formula.ts';
import { parseScenarioText } from '../scenarios/load.ts';
import { parseLayout } from '../sim/layout.ts';
import { DistanceTables } from '../sim/distance-table.ts';
import { privateLanePolicy } from './fixtures/private-lane-policy.ts';

// P at 1:1 and 1:3, D at 7:1: a 9 x 5 hall; P 1:1 -> D is 6 cells, P 1:3 -> D is 8 cells.
const layout = ['#########', '#P.....D#', '#H......#', '#P....C.#', '#########'];

function handFor(extra: string, rate: number) {
  const scenario = parseScenarioText(['layout: |', ...layout.map((r) => `  ${r}`), extra, 'demand: { kind: poisson, tasksPerHour: 300 }', ''].join('\n'), null);
  const parsed = parseLayout(scenario.layoutText);
  return handFormulaFor({ scenario, layout: parsed, distances: new DistanceTables(parsed), policy: privateLanePolicy, policyOptions: {} }, rate);
}

describe('hand formula with per-station handling and availability', () => {
  it('a slow pickup counts by its share: (4 + 10) / 2 = 7 s load; loaded (6 + 8) / 2 = 7 m', () => {
    const hand = handFor("handling: { pickupSeconds: 4, dropSeconds: 2, stations: { '1:3': { pickupSeconds: 10 } } }\nfleet: { robots: 1 }", 300);
    expect(hand.loadSeconds).toBeCloseTo(7, 12);
    expect(hand.unloadSeconds).toBe(2);
    expect(hand.loadedMeters).toBeCloseTo(7, 12);
    // Tc = 7 + 7 + 2 + 7 = 23 s; 300 tasks/h x 23 s = 6900 s/h of work: 1.92 robots, so 2.
    expect(hand.cycleSeconds).toBeCloseTo(23, 12);
    expect(hand.robotsExact).toBeCloseTo(6900 / 3600, 12);
    expect(hand.robots).toBe(2);
    expect(hand.availability.total).toBe(1);
    // The slow pickup takes half the tasks for 10 s: 3600 / (0.5 x 10) = 720 tasks/h at most.
    expect(hand.stationLimit).toMatchObject({ cell: '1:3', kind: 'pickup', tasksPerHour: 720 });
  });

  it('breakdowns: AT = 3600 s x 0.8, so 6900 s/h of work needs 6900 / 2880 = 2.4, so 3 robots', () => {
    const hand = handFor("handling: { pickupSeconds: 4, dropSeconds: 2, stations: { '1:3': { pickupSeconds: 10 } } }\nfleet: { robots: 1 }\nfaults: { breakdowns: { mtbfHours: 2, mttrMinutes: 30 } }", 300);
    expect(hand.availability.breakdowns).toBeCloseTo(0.8, 12);
    expect(hand.availability.total).toBeCloseTo(0.8, 12);
    expect(hand.robotsExact).toBeCloseTo(6900 / (3600 * 0.8), 12);
    expect(hand.robots).toBe(3);
  });

  it('charging: runHours 4, chargeHours 1, 0.2 -> 0.9: W = 0.7 x 4 h = 10080 s, detour via C (6:3) and the charge by hand', () => {
    const hand = handFor('handling: { pickupSeconds: 4, dropSeconds: 2 }\nfleet: { robots: 1, battery: { runHours: 4, chargeHours: 1 } }', 300);
    // Detour from D (7:1) to its nearest charger C (6:3): 3 cells; on to P 1:1 is 5 + 2 = 7
    // and to P 1:3 is 5; the direct D -> P trips are 6 and 8. Mean detour
    // (3 + 7 - 6 + 3 + 5 - 8) / 2 = 2 s; charge (10080 + 2) x 1 / 4 = 2520.5 s.
    expect(hand.availability.workSecondsPerCharge).toBeCloseTo(10080, 9);
    expect(hand.availability.detourSeconds).toBeCloseTo(2, 12);
    expect(hand.availability.chargeSeconds).toBeCloseTo(2520.5, 9);
    expect(hand.availability.charging).toBeCloseTo(10080 / (10080 + 2 + 2520.5), 12);
    // Tc = 4 + 7 + 2 + 7 = 20 s, 6000 s/h of work at AT = 3600 x 0.79984: 2.08, so 3 robots.
    expect(hand.robotsExact).toBeCloseTo(6000 / (3600 * hand.availability.charging), 12);
    expect(hand.robots).toBe(3);
  });
});
