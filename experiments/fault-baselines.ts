/**
 * The throughput lost to a fault as a paired figure: the same scenario run again without
 * that fault (`faults.breakdowns` or `faults.delays`, the other kept), on the same seeds, so
 * replication i of both sees the same tasks, handling times and battery (common random
 * numbers; Law, Simulation Modeling and Analysis, 5th ed., §11.2), measured after the same
 * warm-up cut. The paired-t interval of the differences is then much narrower than the two
 * runs' own intervals.
 */
import type { Scenario } from '../sim/model.ts';
import type { ReplicationRecord } from '../sim/engine.ts';
import { windowMetrics } from '../reports/window-metrics.ts';
import { runReplications, type ExperimentProgress } from './replications.ts';

type Fault = 'breakdowns' | 'delays';

/** The scenario without `faults[fault]` (other faults kept; no `faults` when none is left). */
export function withoutFault(scenario: Scenario, fault: Fault): Scenario {
  const { [fault]: _dropped, ...otherFaults } = scenario.faults ?? {};
  const { faults: _faults, ...rest } = scenario;
  return Object.keys(otherFaults).length > 0 ? { ...rest, faults: otherFaults } : rest;
}

export const withoutBreakdowns = (scenario: Scenario): Scenario => withoutFault(scenario, 'breakdowns');
export const withoutDelays = (scenario: Scenario): Scenario => withoutFault(scenario, 'delays');

/**
 * Post-warm-up throughput per replication (tasks per hour) of the scenario without the
 * fault, for the same replications as `records`, in their order; null when the scenario
 * does not have that fault.
 */
function faultBaseline(fault: Fault, scenario: Scenario, records: ReplicationRecord[], cutIntervals: number, progress?: ExperimentProgress): number[] | null {
  if (!scenario.faults?.[fault]) return null;
  const baseline = runReplications(withoutFault(scenario, fault), progress, {}, records.map((r) => r.replication));
  return baseline.map((record) => windowMetrics(record, cutIntervals, record.metrics.intervalCount).throughputPerHour);
}

export const breakdownBaseline = (scenario: Scenario, records: ReplicationRecord[], cutIntervals: number, progress?: ExperimentProgress) =>
  faultBaseline('breakdowns', scenario, records, cutIntervals, progress);
export const delayBaseline = (scenario: Scenario, records: ReplicationRecord[], cutIntervals: number, progress?: ExperimentProgress) =>
  faultBaseline('delays', scenario, records, cutIntervals, progress);
