/**
 * Per-cell robot waiting time (`metrics.cellWaitingTicks`), the floor heatmap of the HTML
 * report: a robot holding a task that did not move adds its waiting time at the cell it
 * stands on, on executed motion ticks and across the stretches the engine skips.
 */
import { describe, expect, it } from 'vitest';
import { runReplication } from '../sim/engine.ts';
import { prepareSetup } from '../experiments/replications.ts';
import { RobotActivity } from '../sim/metrics.ts';
import { makeScenario } from './helpers.ts';

// The one-lane corridor of test/greedy-reactive.test.ts: two robots meet head-on.
const corridor = ['##########', '#HPD##DPH#', '#........#', '#####.####', '##########'].join('\n');
const width = 10;
const cell = (x: number, y: number) => y * width + x;

describe('per-cell waiting time', () => {
  // Hand trace (greedy-reactive test): robot 0 stands on (4,2) and robot 1 on (5,2) from
  // tick 6, each blocked by the other, and neither moves again in the hour (no clearing).
  // Before that neither waits: step onto the pickup at tick 1, handle to tick 3, drive.
  // So each of the two cells holds 3600 - 6 = 3594 robot-seconds and no other cell any.
  it('puts the whole head-on jam on the two cells where the robots stand, nowhere else', () => {
    const scenario = makeScenario({
      layout: corridor,
      robots: 2,
      policy: 'greedy-reactive',
      pickupSeconds: 2,
      dropSeconds: 2,
      hours: 1,
      recoverySeconds: 0,
      demand: {
        kind: 'trace',
        mode: 'delivery',
        tracePath: 'inline',
        tasks: [
          { releaseSeconds: 0, pickup: cell(2, 1), drop: cell(6, 1) },
          { releaseSeconds: 0, pickup: cell(7, 1), drop: cell(3, 1) },
        ],
      },
    });
    const record = runReplication(prepareSetup(scenario), 0);
    const waiting = record.metrics.cellWaitingTicks;
    expect(waiting.length).toBe(50);
    expect(waiting[cell(4, 2)]).toBe(3594);
    expect(waiting[cell(5, 2)]).toBe(3594);
    const elsewhere = Array.from(waiting).reduce((s, v) => s + v, 0) - waiting[cell(4, 2)] - waiting[cell(5, 2)];
    expect(elsewhere).toBe(0);
  });

  // The robot time split counts the same waiting robot-ticks per sample interval; spread
  // over cells instead, the total must be the same (two accumulations, one per interval,
  // one per cell, on every executed and every skipped tick).
  it('adds up to the waiting robot time of the run on a small busy hall', () => {
    const scenario = makeScenario({
      layout: [
        '############',
        '#P.......D.#',
        '#H..#..#...#',
        '#P.......D.#',
        '#H..#..#...#',
        '#H.......D.#',
        '############',
      ].join('\n'),
      robots: 3,
      policy: 'token-passing',
      pickupSeconds: 3,
      dropSeconds: 2,
      hours: 0.5,
      demand: { kind: 'poisson', mode: 'delivery', tasksPerHour: 400, profile: null, pickups: { kind: 'uniform' }, drops: { kind: 'uniform' } },
    });
    const record = runReplication(prepareSetup(scenario), 0);
    const m = record.metrics;
    let fromIntervals = 0;
    for (let i = 0; i < m.intervalCount; i++) fromIntervals += m.robotTicks[i * 5 + RobotActivity.Waiting];
    const fromCells = Array.from(m.cellWaitingTicks).reduce((s, v) => s + v, 0);
    expect(fromIntervals).toBeGreaterThan(0);
    expect(fromCells).toBe(fromIntervals);
    // Nobody waits inside a wall.
    for (let c = 0; c < m.cellWaitingTicks.length; c++) if (m.cellWaitingTicks[c] > 0) expect(scenario.layoutText.replace(/\n/g, '')[c]).not.toBe('#');
  });
});
