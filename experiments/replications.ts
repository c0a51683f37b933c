/**
 * The one replication loop. `run`, `compare`, `size` and `sweep` all run replications
 * through `checkedReplication` (here, or inside a worker thread of experiments/pool.ts), so
 * every replication anywhere gets the same checks: the independent collision validator's
 * count and illegal steps must be zero, or the run fails (RunError, exit 1) naming the
 * policy as defective. The engine already throws on a conservation break.
 *
 * Shared, read-only parts (layout, distance tables, policy factory and options) are built
 * once per scenario by `prepareSetup`; each replication has its own random streams, so
 * replication i gives the same record wherever and whenever it runs.
 */
import type { Scenario } from '../sim/model.ts';
import { parseLayout } from '../sim/layout.ts';
import { DistanceTables } from '../sim/distance-table.ts';
import { runReplication, type ReplicationHooks, type ReplicationRecord, type SimulationSetup } from '../sim/engine.ts';
import { RunError } from '../sim/errors.ts';
import { findPolicy, parsePolicyOptions } from '../policies/registry.ts';

/** `policyField` names where the policy came from in error messages (a file field or `--policy`). */
export function prepareSetup(scenario: Scenario, policyField = `${scenario.sourcePath ?? 'scenario'}: policy.name`): SimulationSetup {
  const layout = parseLayout(scenario.layoutText);
  const policy = findPolicy(scenario.policy.name, policyField);
  const policyOptions = parsePolicyOptions(policy, scenario.policy.options);
  return { scenario, layout, distances: new DistanceTables(layout), policy, policyOptions };
}

/** Throws RunError when the validator saw a collision or an illegal step: the policy is defective. */
export function checkRecord(scenario: Pick<Scenario, 'policy'>, record: ReplicationRecord): void {
  if (record.collisions === 0 && record.illegalSteps === 0) return;
  throw new RunError(
    `the collision validator counted ${record.collisions} collisions and ${record.illegalSteps} illegal steps in replication ${record.replication} ` +
      `(policy ${scenario.policy.name} is defective): ${record.collisionExamples.join('; ')}`,
  );
}

/** One replication with every check of the loop applied. */
export function checkedReplication(setup: SimulationSetup, replication: number, hooks: ReplicationHooks = {}): ReplicationRecord {
  const record = runReplication(setup, replication, hooks);
  checkRecord({ policy: { ...setup.scenario.policy, name: setup.policy.name } }, record);
  return record;
}

/** Overall fraction done, replication index and count. */
export interface ExperimentProgress {
  (fraction: number, replication: number, replications: number): void;
}

/**
 * Runs replications of one scenario in this thread, in order (default 0 .. run.replications
 * - 1); throws on the first failed check. Hooks (motion watchers, recorders) reach every
 * replication, or those a function of the replication index returns.
 */
export function runReplications(
  scenarioOrSetup: Scenario | SimulationSetup,
  progress?: ExperimentProgress,
  hooksOrPerReplication: ReplicationHooks | ((replication: number) => ReplicationHooks) = {},
  replications?: readonly number[],
): ReplicationRecord[] {
  const setup = 'layout' in scenarioOrSetup ? scenarioOrSetup : prepareSetup(scenarioOrSetup);
  const indices = replications ?? Array.from({ length: setup.scenario.run.replications }, (_, i) => i);
  const n = indices.length;
  const records: ReplicationRecord[] = [];
  for (let k = 0; k < n; k++) {
    const hooks = typeof hooksOrPerReplication === 'function' ? hooksOrPerReplication(indices[k]) : hooksOrPerReplication;
    const own: ReplicationHooks = { ...hooks };
    if (progress) {
      own.progress = (f) => {
        hooks.progress?.(f);
        progress((k + f) / n, indices[k], n);
      };
    }
    records.push(checkedReplication(setup, indices[k], own));
    progress?.((k + 1) / n, indices[k], n);
  }
  return records;
}
