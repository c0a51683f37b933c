/** `fleetwright compare`: several policies on the same random tasks, paired differences. */
import { stringify } from 'csv-stringify/sync';
import { loadScenarioFile, type ScenarioOverrides } from '../../scenarios/load.ts';
import { prepareSetup, runReplications } from '../../experiments/replications.ts';
import { checkOutputFolder, writeOutputFolder } from '../../experiments/output-folder.ts';
import { compareRuns, type PolicyRun } from '../../reports/compare.ts';
import { renderComparison } from '../../reports/compare-table.ts';
import { toJson } from '../../reports/summary.ts';
import { reportInputContents, reportInputFiles } from '../../reports/report-inputs.ts';
import { InputError } from '../../sim/errors.ts';
import { startProgress } from '../progress.ts';

const resultFiles = ['comparison.json', 'differences.csv', ...reportInputFiles];

export async function compareCommand(scenarioPath: string, policyList: string, json: boolean, outDirectory: string | undefined, overrides: ScenarioOverrides): Promise<void> {
  const names = policyList.split(',').map((s) => s.trim()).filter((s) => s.length > 0);
  if (names.length < 2) throw new InputError(`--policies: got ${JSON.stringify(policyList)}, expected at least two comma-separated policy names`);
  const duplicate = names.find((n, i) => names.indexOf(n) !== i);
  if (duplicate) throw new InputError(`--policies: got ${JSON.stringify(duplicate)} twice, expected distinct policy names`);
  // Load and validate every policy's scenario before running anything.
  const setups = names.map((name) => prepareSetup(loadScenarioFile(scenarioPath, { ...overrides, policy: name }), '--policies'));
  const n = setups[0].scenario.run.replications;
  if (n < 2) throw new InputError(`--reps: got ${n}, expected at least 2 replications for paired intervals`);
  if (outDirectory !== undefined) checkOutputFolder(outDirectory, resultFiles);
  const progress = await startProgress('compare');
  const runs: PolicyRun[] = [];
  try {
    for (let p = 0; p < setups.length; p++) {
      const setup = setups[p];
      const started = performance.now();
      // The same loop as `run`: every replication is checked for collisions and illegal steps.
      const records = runReplications(setup, (fraction, replication) =>
        progress.update((p + fraction) / setups.length, `${setup.scenario.policy.name} ${replication + 1}/${n}`),
      );
      runs.push({ scenario: setup.scenario, records, wallSeconds: (performance.now() - started) / 1000 });
    }
  } finally {
    progress.stop();
  }
  const comparison = compareRuns(runs);
  const document = { policies: comparison.policies, differences: comparison.differences };
  if (outDirectory !== undefined) {
    writeOutputFolder(outDirectory, [
      { name: 'comparison.json', content: `${toJson(document)}\n` },
      { name: 'differences.csv', content: stringify(comparison.differences.map((d) => ({ ...d })), { header: true }) },
      ...reportInputContents(runs, comparison.policies.map((p) => p.warmup.intervals), process.argv.slice(2)),
    ]);
  }
  if (json) process.stdout.write(`${toJson(document)}\n`);
  else process.stdout.write(`${renderComparison(comparison)}\n`);
}
