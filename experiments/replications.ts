/**
 * Replications of one scenario: builds the shared, read-only parts once (layout, distance
 * tables, policy factory) and runs replication 0..n-1, each with its own random streams.
 * Library code beside the engine; the CLI's `run` and `compare` are thin wrappers over it.
 */
import type { Scenario } from '../sim/model.ts';
import { parseLayout } from '../sim/layout.ts';
import { DistanceTables } from '../sim/distance-table.ts';
import { runReplication, type ReplicationHooks, type ReplicationRecord, type SimulationSetup } from '../sim/engine.ts';
import { findPolicy, parsePolicyOptions } from '../policies/registry.ts';

/** `policyField` names where the policy came from in error messages (a file field or `--policy`). */
export function prepareSetup(scenario: Scenario, policyField = `${scenario.sourcePath ?? 'scenario'}: policy.name`): SimulationSetup {
  const layout = parseLayout(scenario.layoutText);
  const policy = findPolicy(scenario.policy.name, policyField);
  const policyOptions = parsePolicyOptions(policy, scenario.policy.options);
  return { scenario, layout, distances: new DistanceTables(layout), policy, policyOptions };
}

export interface ExperimentProgress {
  /** Overall fraction done, replication index and count. */
  (fraction: number, replication: number, replications: number): void;
}

export function runReplications(scenario: Scenario, progress?: ExperimentProgress, hooks: ReplicationHooks = {}): ReplicationRecord[] {
  const setup = prepareSetup(scenario);
  const n = scenario.run.replications;
  const records: ReplicationRecord[] = [];
  for (let rep = 0; rep < n; rep++) {
    records.push(
      runReplication(setup, rep, {
        ...hooks,
        progress: progress ? (f) => progress((rep + f) / n, rep, n) : undefined,
      }),
    );
    progress?.((rep + 1) / n, rep, n);
  }
  return records;
}
