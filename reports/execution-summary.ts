/**
 * The turning and execution-delay parts of the run summary: `turning` when robots take time
 * to turn in place (`units.turnSeconds` > 0), `delays` when moves may be held back
 * (`faults.delays`). Neither appears otherwise, so a scenario without them gives the
 * summary it gave before.
 *
 * The counts are whole-run figures per replication (the engine counts turns and held moves
 * over the whole run, the planned policies the waits their dependency graph imposed), with a
 * Student-t interval over replications, never from batches: one replication gives the
 * value and no interval. The throughput lost to delays is paired against the same
 * replications run without delays (experiments/fault-baselines.ts), after the same warm-up.
 */
import type { Scenario } from '../sim/model.ts';
import type { ReplicationRecord } from '../sim/engine.ts';
import { turnTicksOf } from '../sim/headings.ts';
import { meanHandlingSeconds } from '../sim/station-handling.ts';
import { clipInterval, intervalOf, pairedDifferenceInterval, type Interval } from './stats/index.ts';

export interface TurningSummary {
  /** Seconds of a 90-degree turn in place as the scenario gives it. */
  turnSeconds: number;
  /** As modelled: rounded up to whole ticks (a robot never turns faster than asked). */
  modelledTurnSeconds: number;
  /** Quarter turns per robot per hour (whole run). */
  quarterTurnsPerRobotHour: Interval;
  /** Share of robot time spent turning in place (whole run; part of loaded and empty travel). */
  turningFraction: Interval;
}

export interface DelaySummary {
  probabilityPerMove: number;
  /** Mean of a hold, seconds (before rounding to ticks). */
  meanSeconds: number;
  /** Share of the moves robots started that were held back (whole run; about probabilityPerMove). */
  heldMoveFraction: Interval;
  /** Moves held back per hour, whole fleet (whole run). */
  heldMovesPerHour: Interval;
  /** Robot-seconds per hour robots stood held back (whole run). */
  heldRobotSecondsPerHour: Interval;
  /**
   * Planned policies (token passing, flow-batch): times per hour a robot was made to wait
   * for a late robot ahead of it in a cell's planned passing order (the action dependency
   * graph), and the robot-seconds of those waits per hour; null for reactive policies.
   */
  dependencyWaitsPerHour: Interval | null;
  dependencyWaitSecondsPerHour: Interval | null;
  /** Throughput of the same replications without delays; null when none was run (compare, size, sweep). */
  throughputWithoutDelaysPerHour: Interval | null;
  /** Without delays minus with, paired over replications; null when no run without delays was made. */
  throughputLostPerHour: Interval | null;
}

export interface ExecutionSummary {
  turning?: TurningSummary;
  delays?: DelaySummary;
}

export function summarizeExecution(scenario: Scenario, records: ReplicationRecord[], throughputPerHour: number[], delayBaseline: number[] | null): ExecutionSummary {
  const result: ExecutionSummary = {};
  const confidence = scenario.run.confidence;
  const tickSeconds = records[0].tickSeconds;
  const hoursOf = (r: ReplicationRecord) => (r.endTick * r.tickSeconds) / 3600;
  const over = (pick: (r: ReplicationRecord) => number, fraction = false): Interval => clipInterval(intervalOf(records.map(pick), confidence), 0, fraction ? 1 : Infinity);
  const robots = scenario.fleet.robots;
  const turnTicks = turnTicksOf(scenario.units.turnSeconds, tickSeconds);
  if (turnTicks > 0) {
    result.turning = {
      turnSeconds: scenario.units.turnSeconds!,
      modelledTurnSeconds: turnTicks * tickSeconds,
      quarterTurnsPerRobotHour: over((r) => (r.execution?.quarterTurns ?? 0) / (robots * hoursOf(r))),
      turningFraction: over((r) => ((r.execution?.quarterTurns ?? 0) * turnTicks) / (robots * r.endTick), true),
    };
  }
  const delays = scenario.faults?.delays;
  if (delays) {
    const waits = records.map((r) => r.policyCounters.dependencyWaits);
    const planned = waits.every((v) => v !== undefined);
    result.delays = {
      probabilityPerMove: delays.probabilityPerMove,
      meanSeconds: meanHandlingSeconds(delays.seconds),
      heldMoveFraction: over((r) => (r.execution && r.execution.moveAttempts > 0 ? r.execution.heldMoves / r.execution.moveAttempts : 0), true),
      heldMovesPerHour: over((r) => (r.execution?.heldMoves ?? 0) / hoursOf(r)),
      heldRobotSecondsPerHour: over((r) => ((r.execution?.heldTicks ?? 0) * r.tickSeconds) / hoursOf(r)),
      dependencyWaitsPerHour: planned ? over((r) => r.policyCounters.dependencyWaits / hoursOf(r)) : null,
      dependencyWaitSecondsPerHour: planned ? over((r) => r.policyCounters.dependencyWaitSeconds / hoursOf(r)) : null,
      throughputWithoutDelaysPerHour: delayBaseline === null ? null : clipInterval(intervalOf(delayBaseline, confidence), 0, Infinity),
      throughputLostPerHour: delayBaseline === null ? null : pairedDifferenceInterval(delayBaseline, throughputPerHour, confidence),
    };
  }
  return result;
}
