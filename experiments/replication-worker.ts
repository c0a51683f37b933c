/**
 * The task a worker thread runs: one checked replication of a scenario (the same loop as
 * everywhere, experiments/replications.ts). Setups (layout, distance tables, policy) are
 * kept per scenario key, so a worker that gets several replications of one parameter
 * point builds them once. Failures come back as data, so that the main thread rethrows the
 * right error class (InputError exits 2, RunError 1).
 */
import type { Scenario } from '../sim/model.ts';
import type { ReplicationRecord, SimulationSetup } from '../sim/engine.ts';
import { InputError, RunError } from '../sim/errors.ts';
import { checkedReplication, prepareSetup } from './replications.ts';
import { runLine, type RunLineHeader } from './run-line.ts';

export interface ReplicationTask {
  /** Identifies the scenario's content (its run-id hash); equal keys share a setup. */
  scenarioKey: string;
  scenario: Scenario;
  replication: number;
  /** When set, reply with the sweep's run line instead of the record (less to copy back). */
  line?: RunLineHeader;
}

export type ReplicationReply =
  | { ok: true; record: ReplicationRecord }
  | { ok: true; line: string }
  | { ok: false; kind: 'input' | 'run' | 'internal'; message: string; stack?: string };

const setups = new Map<string, SimulationSetup>();
/** A bounded cache: a sweep over many layouts must not keep every distance table. */
const maxSetups = 8;

export function runReplicationTask(task: ReplicationTask): ReplicationReply {
  try {
    let setup = setups.get(task.scenarioKey);
    if (!setup) {
      setup = prepareSetup(task.scenario);
      if (setups.size >= maxSetups) setups.delete(setups.keys().next().value as string);
      setups.set(task.scenarioKey, setup);
    }
    const record = checkedReplication(setup, task.replication);
    return task.line ? { ok: true, line: runLine(task.line, task.scenario, record) } : { ok: true, record };
  } catch (error) {
    const kind = error instanceof InputError ? 'input' : error instanceof RunError ? 'run' : 'internal';
    return { ok: false, kind, message: error instanceof Error ? error.message : String(error), stack: error instanceof Error ? error.stack : undefined };
  }
}

export default runReplicationTask;
