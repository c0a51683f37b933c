/**
 * The throughput lost to breakdowns as a paired figure: the same scenario run again without
 * breakdowns, on the same seeds, so replication i of both sees the same tasks, handling
 * times and battery (common random numbers; Law, Simulation Modeling and Analysis, 5th ed.,
 * §11.2), measured after the same warm-up cut. The paired-t interval of the differences is
 * then much narrower than the two runs' own intervals.
 */
import type { Scenario } from '../sim/model.ts';
import type { ReplicationRecord } from '../sim/engine.ts';
import { windowMetrics } from '../reports/window-metrics.ts';
import { runReplications, type ExperimentProgress } from './replications.ts';

/** The scenario without `faults.breakdowns` (other faults kept). */
export function withoutBreakdowns(scenario: Scenario): Scenario {
  const { breakdowns: _dropped, ...otherFaults } = scenario.faults ?? {};
  const { faults: _faults, ...rest } = scenario;
  return Object.keys(otherFaults).length > 0 ? { ...rest, faults: otherFaults } : rest;
}

/**
 * Post-warm-up throughput per replication (tasks per hour) of the scenario without
 * breakdowns, for the same replications as `records`, in their order; null when the
 * scenario has no breakdowns.
 */
export function breakdownBaseline(scenario: Scenario, records: ReplicationRecord[], cutIntervals: number, progress?: ExperimentProgress): number[] | null {
  if (!scenario.faults?.breakdowns) return null;
  const baseline = runReplications(withoutBreakdowns(scenario), progress, {}, records.map((r) => r.replication));
  return baseline.map((record) => windowMetrics(record, cutIntervals, record.metrics.intervalCount).throughputPerHour);
}
