/**
 * Replications on worker threads (tinypool, a small well-kept worker-thread pool). One pool
 * per command; each task is one replication (experiments/replication-worker.ts), so the
 * cores stay busy whatever the mix of parameter points. Records come back as plain data
 * (structured clone); a worker's failure is rethrown here with its error class.
 */
import os from 'node:os';
import { fileURLToPath } from 'node:url';
import Tinypool from 'tinypool';
import type { Scenario } from '../sim/model.ts';
import type { ReplicationRecord } from '../sim/engine.ts';
import { InputError, RunError } from '../sim/errors.ts';
import type { ReplicationReply, ReplicationTask } from './replication-worker.ts';
import type { SimulationSetup } from '../sim/engine.ts';
import { checkedReplication, prepareSetup } from './replications.ts';
import { runLine, type RunLineHeader } from './run-line.ts';

/** Worker threads to use when the user does not say: one per core. */
export function defaultWorkers(): number {
  return Math.max(1, typeof os.availableParallelism === 'function' ? os.availableParallelism() : os.cpus().length);
}

/** Validates `--workers`: a positive integer. */
export function parseWorkers(text: string | undefined, option = '--workers'): number {
  if (text === undefined) return defaultWorkers();
  const value = text.trim() === '' ? NaN : Number(text);
  if (!Number.isSafeInteger(value) || value < 1 || value > 1024) throw new InputError(`${option}: got ${JSON.stringify(text)}, expected a whole number of worker threads from 1 to 1024`);
  return value;
}

export interface ReplicationPool {
  readonly workers: number;
  run(scenarioKey: string, scenario: Scenario, replication: number): Promise<ReplicationRecord>;
  /** One sweep run, summarized where it ran: its runs.jsonl line. */
  runLine(scenarioKey: string, scenario: Scenario, header: RunLineHeader): Promise<string>;
  close(): Promise<void>;
}

// The worker's entry sits beside this module: under tsx, experiments/replication-worker.js
// (registers tsx in the thread, then loads replication-worker.ts); under the build, the
// compiled worker beside the bundle, because this file keeps the bundle's own location
// (the marker "build: bundle location", read by build/build.js). Main thread and workers
// therefore always run the same code.
const workerFile = fileURLToPath(new URL('./replication-worker.js', import.meta.url));

export function createPool(workers: number): ReplicationPool {
  const pool = new Tinypool({ filename: workerFile, minThreads: workers, maxThreads: workers, idleTimeout: 60_000 });
  const send = async (task: ReplicationTask) => {
    const reply = (await pool.run(task)) as ReplicationReply;
    if (reply.ok) return reply;
    if (reply.kind === 'input') throw new InputError(reply.message);
    if (reply.kind === 'run') throw new RunError(reply.message);
    const error = new Error(reply.message);
    if (reply.stack) error.stack = reply.stack;
    throw error;
  };
  return {
    workers,
    async run(scenarioKey, scenario, replication) {
      const reply = await send({ scenarioKey, scenario, replication });
      return (reply as { record: ReplicationRecord }).record;
    },
    async runLine(scenarioKey, scenario, header) {
      const reply = await send({ scenarioKey, scenario, replication: header.replication, line: header });
      return (reply as { line: string }).line;
    },
    async close() {
      await pool.destroy();
    },
  };
}

/**
 * The same interface run in this thread, one replication at a time: for one worker (no
 * thread start-up), and for tests that bring their own setup (a policy built in the test).
 */
export function createInlinePool(prepare: (scenario: Scenario) => SimulationSetup = (scenario) => prepareSetup(scenario)): ReplicationPool {
  const setups = new Map<string, SimulationSetup>();
  return {
    workers: 1,
    async run(scenarioKey, scenario, replication) {
      let setup = setups.get(scenarioKey);
      if (!setup) setups.set(scenarioKey, (setup = prepare(scenario)));
      // Yield first, so that callers awaiting several runs see them one after another.
      await Promise.resolve();
      return checkedReplication(setup, replication);
    },
    async runLine(scenarioKey, scenario, header) {
      return runLine(header, scenario, await this.run(scenarioKey, scenario, header.replication));
    },
    async close() {
      setups.clear();
    },
  };
}
