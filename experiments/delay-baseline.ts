/**
 * The throughput lost to execution delays as a paired figure: the same scenario run again
 * without `faults.delays`, on the same seeds, so replication i of both sees the same tasks
 * and handling times (common random numbers; Law, Simulation Modeling and Analysis, 5th
 * ed., §11.2), measured after the same warm-up cut, like the breakdown figure
 * (experiments/breakdown-baseline.ts).
 */
import type { Scenario } from '../sim/model.ts';
import type { ReplicationRecord } from '../sim/engine.ts';
import { windowMetrics } from '../reports/window-metrics.ts';
import { runReplications, type ExperimentProgress } from './replications.ts';

/** The scenario without `faults.delays` (other faults kept). */
export function withoutDelays(scenario: Scenario): Scenario {
  const { delays: _dropped, ...otherFaults } = scenario.faults ?? {};
  const { faults: _faults, ...rest } = scenario;
  return Object.keys(otherFaults).length > 0 ? { ...rest, faults: otherFaults } : rest;
}

/**
 * Post-warm-up throughput per replication (tasks per hour) of the scenario without delays,
 * for the same replications as `records`, in their order; null when the scenario has no
 * delays.
 */
export function delayBaseline(scenario: Scenario, records: ReplicationRecord[], cutIntervals: number, progress?: ExperimentProgress): number[] | null {
  if (!scenario.faults?.delays) return null;
  const baseline = runReplications(withoutDelays(scenario), progress, {}, records.map((r) => r.replication));
  return baseline.map((record) => windowMetrics(record, cutIntervals, record.metrics.intervalCount).throughputPerHour);
}
