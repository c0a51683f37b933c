/** `fleetwright compare`: several policies on the same random tasks, paired differences. */
import path from 'node:path';
import { stringify } from 'csv-stringify/sync';
import { loadScenarioFile, type ScenarioOverrides } from '../../scenarios/load.ts';
import { prepareSetup } from '../../experiments/replications.ts';
import { runReplication, type ReplicationRecord } from '../../sim/engine.ts';
import { compareRuns, type PolicyRun } from '../../reports/compare.ts';
import { renderComparison } from '../../reports/compare-table.ts';
import { toJson } from '../../reports/summary.ts';
import { ensureDirectory, writeFileAtomic } from '../../reports/write-files.ts';
import { writeReportInputs } from '../../reports/report-inputs.ts';
import { InputError, RunError } from '../../sim/errors.ts';
import { startProgress } from '../progress.ts';

export async function compareCommand(scenarioPath: string, policyList: string, json: boolean, outDirectory: string | undefined, overrides: ScenarioOverrides): Promise<void> {
  const names = policyList.split(',').map((s) => s.trim()).filter((s) => s.length > 0);
  if (names.length < 2) throw new InputError(`--policies: got ${JSON.stringify(policyList)}, expected at least two comma-separated policy names`);
  const duplicate = names.find((n, i) => names.indexOf(n) !== i);
  if (duplicate) throw new InputError(`--policies: got ${JSON.stringify(duplicate)} twice, expected distinct policy names`);
  // Load and validate every policy's scenario before running anything.
  const setups = names.map((name) => prepareSetup(loadScenarioFile(scenarioPath, { ...overrides, policy: name }), '--policies'));
  const n = setups[0].scenario.run.replications;
  if (n < 2) throw new InputError(`--reps: got ${n}, expected at least 2 replications for paired intervals`);
  if (outDirectory !== undefined) ensureDirectory(outDirectory);
  const progress = await startProgress('compare');
  const runs: PolicyRun[] = [];
  try {
    for (let p = 0; p < setups.length; p++) {
      const setup = setups[p];
      const started = performance.now();
      const records: ReplicationRecord[] = [];
      for (let rep = 0; rep < n; rep++) {
        records.push(
          runReplication(setup, rep, {
            progress: (f) => progress.update((p * n + rep + f) / (setups.length * n), `${setup.scenario.policy.name} ${rep + 1}/${n}`),
          }),
        );
      }
      runs.push({ scenario: setup.scenario, records, wallSeconds: (performance.now() - started) / 1000 });
    }
  } finally {
    progress.stop();
  }
  const comparison = compareRuns(runs);
  const document = { policies: comparison.policies, differences: comparison.differences };
  if (json) process.stdout.write(`${toJson(document)}\n`);
  else process.stdout.write(`${renderComparison(comparison)}\n`);
  if (outDirectory !== undefined) {
    writeFileAtomic(path.join(outDirectory, 'comparison.json'), `${toJson(document)}\n`);
    writeFileAtomic(path.join(outDirectory, 'differences.csv'), stringify(comparison.differences.map((d) => ({ ...d })), { header: true }));
    writeReportInputs(outDirectory, runs, comparison.policies.map((p) => p.warmup.intervals), process.argv.slice(2));
  }
  const collided = runs.find((run) => run.records.some((r) => r.collisions > 0));
  if (collided) throw new RunError(`the collision validator counted collisions under policy ${collided.scenario.policy.name}; that policy is defective`);
}
