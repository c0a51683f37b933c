/** `fleetwright run`: replications of one scenario, a table or one JSON document, optional result files. */
import { loadScenarioFile, type ScenarioOverrides } from '../../scenarios/load.ts';
import { prepareSetup, runReplications } from '../../experiments/replications.ts';
import { checkOutputFolder, writeOutputFolder } from '../../experiments/output-folder.ts';
import { summarize, toJson } from '../../reports/summary.ts';
import { renderRunTable, traceWarning } from '../../reports/console-table.ts';
import { replicationsCsv, stationsCsv, throughputSeriesCsv } from '../../reports/csv.ts';
import { reportInputContents, reportInputFiles } from '../../reports/report-inputs.ts';
import { prepareRecording } from '../../reports/recording/record-run.ts';
import { startProgress } from '../progress.ts';

const resultFiles = ['summary.json', 'replications.csv', 'throughput.csv', 'stations.csv', ...reportInputFiles];

export async function runCommand(scenarioPath: string, json: boolean, outDirectory: string | undefined, overrides: ScenarioOverrides, record?: { file: string; window?: string }): Promise<void> {
  const scenario = loadScenarioFile(scenarioPath, overrides);
  // Validate everything (policy name and options, output folder) before spending time.
  const setup = prepareSetup(scenario, overrides.policy !== undefined ? '--policy' : undefined);
  if (outDirectory !== undefined) checkOutputFolder(outDirectory, resultFiles);
  const recording = record ? prepareRecording(setup, record.file, record.window) : null;
  const started = performance.now();
  const progress = await startProgress(`${scenario.policy.name}, ${scenario.fleet.robots} robots`);
  let records;
  try {
    // The one replication loop (collisions and illegal steps fail the run); the recorder watches replication 1.
    records = runReplications(setup, (fraction, replication, n) => progress.update(fraction, `replication ${replication + 1}/${n}`), (replication) =>
      replication === 0 && recording ? recording.hooks : {},
    );
  } finally {
    progress.stop();
  }
  const wallSeconds = (performance.now() - started) / 1000;
  const parts = summarize(scenario, records, wallSeconds);
  const unreleased = traceWarning(parts.summary);
  if (unreleased !== null) process.stderr.write(`${unreleased}\n`);
  if (outDirectory !== undefined) {
    // Every file is written before anything is printed, and swapped in together.
    writeOutputFolder(outDirectory, [
      { name: 'summary.json', content: `${toJson(parts.summary)}\n` },
      { name: 'replications.csv', content: replicationsCsv(records, parts.perReplication) },
      { name: 'throughput.csv', content: throughputSeriesCsv(records, parts.cutIntervals) },
      { name: 'stations.csv', content: stationsCsv(parts.summary) },
      ...reportInputContents([{ scenario, records }], [parts.cutIntervals], process.argv.slice(2)),
    ]);
  }
  if (json) process.stdout.write(`${toJson(parts.summary)}\n`);
  else process.stdout.write(`${renderRunTable(parts.summary)}\n`);
  if (outDirectory !== undefined && !json) process.stderr.write(`results written to ${outDirectory}/ (${resultFiles.join(', ')})\n`);
  if (recording) {
    const bytes = recording.write(records[0]);
    if (!json) process.stderr.write(`motion of replication 1 recorded in ${recording.file} (${bytes} bytes); view it with: fleetwright replay ${recording.file}\n`);
  }
}
