/** `fleetwright run`: replications of one scenario, a table or one JSON document, optional result files. */
import path from 'node:path';
import { loadScenarioFile, type ScenarioOverrides } from '../../scenarios/load.ts';
import { prepareSetup } from '../../experiments/replications.ts';
import { runReplication, type ReplicationRecord } from '../../sim/engine.ts';
import { summarize, toJson } from '../../reports/summary.ts';
import { renderRunTable, traceWarning } from '../../reports/console-table.ts';
import { replicationsCsv, stationsCsv, throughputSeriesCsv } from '../../reports/csv.ts';
import { ensureDirectory, writeFileAtomic } from '../../reports/write-files.ts';
import { writeReportInputs } from '../../reports/report-inputs.ts';
import { prepareRecording } from '../../reports/recording/record-run.ts';
import { startProgress } from '../progress.ts';
import { RunError } from '../../sim/errors.ts';

export async function runCommand(scenarioPath: string, json: boolean, outDirectory: string | undefined, overrides: ScenarioOverrides, record?: { file: string; window?: string }): Promise<void> {
  const scenario = loadScenarioFile(scenarioPath, overrides);
  // Validate everything (policy name and options, output folder) before spending time.
  const setup = prepareSetup(scenario, overrides.policy !== undefined ? '--policy' : undefined);
  if (outDirectory !== undefined) ensureDirectory(outDirectory);
  const recording = record ? prepareRecording(setup, record.file, record.window) : null;
  const started = performance.now();
  const n = scenario.run.replications;
  const progress = await startProgress(`${scenario.policy.name}, ${scenario.fleet.robots} robots`);
  const records: ReplicationRecord[] = [];
  try {
    for (let rep = 0; rep < n; rep++) {
      const hooks = rep === 0 && recording ? recording.hooks : {};
      records.push(runReplication(setup, rep, { ...hooks, progress: (f) => progress.update((rep + f) / n, `replication ${rep + 1}/${n}`) }));
    }
  } finally {
    progress.stop();
  }
  const wallSeconds = (performance.now() - started) / 1000;
  const parts = summarize(scenario, records, wallSeconds);
  const unreleased = traceWarning(parts.summary);
  if (unreleased !== null) process.stderr.write(`${unreleased}\n`);
  const collided = records.find((r) => r.collisions > 0 || r.illegalSteps > 0);
  if (json) process.stdout.write(`${toJson(parts.summary)}\n`);
  else process.stdout.write(`${renderRunTable(parts.summary)}\n`);
  if (outDirectory !== undefined) {
    writeFileAtomic(path.join(outDirectory, 'summary.json'), `${toJson(parts.summary)}\n`);
    writeFileAtomic(path.join(outDirectory, 'replications.csv'), replicationsCsv(records, parts.perReplication));
    writeFileAtomic(path.join(outDirectory, 'throughput.csv'), throughputSeriesCsv(records, parts.cutIntervals));
    writeFileAtomic(path.join(outDirectory, 'stations.csv'), stationsCsv(parts.summary));
    writeReportInputs(outDirectory, [{ scenario, records }], [parts.cutIntervals], process.argv.slice(2));
    if (!json) process.stderr.write(`results written to ${outDirectory}/ (summary.json, replications.csv, throughput.csv, stations.csv, cells.csv, lead-times.csv, context.json)\n`);
  }
  if (recording) {
    const bytes = recording.write(records[0]);
    if (!json) process.stderr.write(`motion of replication 1 recorded in ${recording.file} (${bytes} bytes); view it with: fleetwright replay ${recording.file}\n`);
  }
  if (collided) {
    throw new RunError(
      `the collision validator counted ${collided.collisions} collisions and ${collided.illegalSteps} illegal steps in replication ${collided.replication} (policy ${scenario.policy.name} is defective): ${collided.collisionExamples.join('; ')}`,
    );
  }
}
