/**
 * The lead-time split (sim/lead-time-split.ts: waiting for a robot, empty travel, loaded
 * travel, handling) on a single-robot example worked out by hand from the engine's
 * conventions (sim/policy.ts: a robot reaching a stop at tick t handles through t + h and
 * moves on from t + h; one cell per tick), not from the code: the parts add up to the lead
 * time, task by task and on average.
 */
import { describe, expect, it } from 'vitest';
import { makeScenario } from './helpers.ts';
import { runReplications } from '../experiments/replications.ts';
import { summarize } from '../reports/summary.ts';
import { leadTimeSplitCsv } from '../reports/realism-csv.ts';

// One robot at H (1:2), pickup P (1:1), drop D (8:1) 7 cells east of P. Cells y * 10 + x.
const lane = `
##########
#P......D#
#H########
##########`;
const P = 11;
const D = 18;

describe('lead time split of three traced tasks, one robot, token passing', () => {
  // Pickup 3 s, drop 2 s, 1 s per cell.
  //  A released 0: assigned 0, H -> P arrives 1, picked 4, arrives at D 11, delivered 13.
  //     waiting 0, empty 1, loaded 11 - 4 = 7, handling 3 + 2 = 5; lead 13.
  //  B released 5: the robot is busy until 13, assigned 13 at D, D -> P arrives 20, picked
  //     23, arrives at D 30, delivered 32. waiting 8, empty 7, loaded 7, handling 5; lead 27.
  //  C released 100: the robot parked on H (1:2) after B; assigned 100, arrives at P 101,
  //     picked 104, at D 111, delivered 113. waiting 0, empty 1, loaded 7, handling 5; lead 13.
  // Means: waiting 8/3, empty 9/3 = 3, loaded 7, handling 5; lead 53/3, their sum.
  const expected = { waitingForRobot: 8 / 3, emptyTravel: 3, loadedTravel: 7, handling: 5, lead: 53 / 3 };
  const scenario = makeScenario({
    layout: lane,
    robots: 1,
    pickupSeconds: 3,
    dropSeconds: 2,
    hours: 180 / 3600,
    sampleSeconds: 60,
    warmup: 0,
    demand: {
      kind: 'trace',
      mode: 'delivery',
      tracePath: 'hand-worked',
      tasks: [
        { releaseSeconds: 0, pickup: P, drop: D },
        { releaseSeconds: 5, pickup: P, drop: D },
        { releaseSeconds: 100, pickup: P, drop: D },
      ],
    },
  });

  it('gives the hand-worked parts, and they add up to the lead time', () => {
    const records = runReplications(scenario);
    expect(records[0].delivered).toBe(3);
    const { summary, perReplication } = summarize(scenario, records, 0);
    expect(summary.leadTimeSeconds.mean).toBeCloseTo(expected.lead, 9);
    const split = summary.leadTimeSplit;
    expect(split.waitingForRobotSeconds.mean).toBeCloseTo(expected.waitingForRobot, 9);
    expect(split.emptyTravelSeconds.mean).toBeCloseTo(expected.emptyTravel, 9);
    expect(split.loadedTravelSeconds.mean).toBeCloseTo(expected.loadedTravel, 9);
    expect(split.handlingSeconds.mean).toBeCloseTo(expected.handling, 9);
    const total = split.waitingForRobotSeconds.mean + split.emptyTravelSeconds.mean + split.loadedTravelSeconds.mean + split.handlingSeconds.mean;
    expect(total).toBeCloseTo(summary.leadTimeSeconds.mean, 9);
    // Per sample interval of delivery: minute 0 holds A and B (waiting 0 + 8, empty 1 + 7,
    // loaded 7 + 7, handling 5 + 5), minute 1 holds C, minute 2 nothing.
    expect(Array.from(records[0].taskTiming.leadPartTicks)).toEqual([8, 8, 14, 10, 0, 1, 7, 5, 0, 0, 0, 0]);
    const csv = leadTimeSplitCsv(perReplication).trim().split('\n');
    expect(csv[0]).toBe('replication,delivered,leadTimeSeconds,waitingForRobotSeconds,emptyTravelSeconds,loadedTravelSeconds,handlingSeconds');
    expect(csv[1].split(',').map(Number)).toEqual([0, 3, Number((53 / 3).toFixed(6)), Number((8 / 3).toFixed(6)), 3, 7, 5]);
  });
});
