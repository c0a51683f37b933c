/** `fleetwright run`: replications of one scenario, a table or one JSON document, optional result files. */
import { loadScenarioFile, type ScenarioOverrides } from '../../scenarios/load.ts';
import { prepareSetup, runReplications } from '../../experiments/replications.ts';
import { checkOutputFolder, writeOutputFolder } from '../../experiments/output-folder.ts';
import { breakdownBaseline, delayBaseline } from '../../experiments/fault-baselines.ts';
import { summarize, toJson, warmupCut, type WarmupInfo } from '../../reports/summary.ts';
import { renderRunTable, traceWarning } from '../../reports/console-table.ts';
import { replicationsCsv, stationsCsv, throughputSeriesCsv } from '../../reports/csv.ts';
import { hourlyCsv, leadTimeSplitCsv } from '../../reports/realism-csv.ts';
import { reportInputContents, reportInputFiles } from '../../reports/report-inputs.ts';
import { prepareRecording } from '../../reports/recording/record-run.ts';
import { startProgress } from '../progress.ts';

const resultFiles = ['summary.json', 'replications.csv', 'throughput.csv', 'stations.csv', 'lead-time-split.csv', 'hourly.csv', ...reportInputFiles];

export async function runCommand(scenarioPath: string, json: boolean, outDirectory: string | undefined, overrides: ScenarioOverrides, record?: { file: string; window?: string }): Promise<void> {
  const scenario = loadScenarioFile(scenarioPath, overrides);
  // Validate everything (policy name and options, output folder) before spending time.
  const setup = prepareSetup(scenario, overrides.policy !== undefined ? '--policy' : undefined);
  if (outDirectory !== undefined) checkOutputFolder(outDirectory, resultFiles);
  const recording = record ? prepareRecording(setup, record.file, record.window) : null;
  const started = performance.now();
  const progress = await startProgress(`${scenario.policy.name}, ${scenario.fleet.robots} robots`);
  let records;
  // With breakdowns or delays, the same replications run again without each (same seeds) for the paired throughput lost.
  const passes = 1 + (scenario.faults?.breakdowns ? 1 : 0) + (scenario.faults?.delays ? 1 : 0);
  let baseline: number[] | null = null;
  let withoutDelays: number[] | null = null;
  let warmup: WarmupInfo | undefined;
  try {
    // The one replication loop (collisions and illegal steps fail the run); the recorder watches replication 1.
    records = runReplications(setup, (fraction, replication, n) => progress.update(fraction / passes, `replication ${replication + 1}/${n}`), (replication) =>
      replication === 0 && recording ? recording.hooks : {},
    );
    if (passes > 1) {
      warmup = warmupCut(scenario, records);
      let pass = 1;
      if (scenario.faults?.breakdowns) {
        const done = pass++;
        baseline = breakdownBaseline(scenario, records, warmup.intervals, (fraction) => progress.update((done + fraction) / passes, 'the same replications without breakdowns'));
      }
      if (scenario.faults?.delays) {
        const done = pass++;
        withoutDelays = delayBaseline(scenario, records, warmup.intervals, (fraction) => progress.update((done + fraction) / passes, 'the same replications without delays'));
      }
    }
  } finally {
    progress.stop();
  }
  const wallSeconds = (performance.now() - started) / 1000;
  const parts = summarize(scenario, records, wallSeconds, warmup, baseline, withoutDelays);
  const unreleased = traceWarning(parts.summary);
  if (unreleased !== null) process.stderr.write(`${unreleased}\n`);
  const hourly = hourlyCsv(parts.summary);
  if (outDirectory !== undefined) {
    // Every file is written before anything is printed, and swapped in together.
    writeOutputFolder(outDirectory, [
      { name: 'summary.json', content: `${toJson(parts.summary)}\n` },
      { name: 'replications.csv', content: replicationsCsv(records, parts.perReplication, parts.summary) },
      { name: 'throughput.csv', content: throughputSeriesCsv(records, parts.cutIntervals) },
      { name: 'stations.csv', content: stationsCsv(parts.summary) },
      { name: 'lead-time-split.csv', content: leadTimeSplitCsv(parts.perReplication) },
      ...(hourly === null ? [] : [{ name: 'hourly.csv', content: hourly }]),
      ...reportInputContents([{ scenario, records }], [parts.cutIntervals], process.argv.slice(2)),
    ], '--out', ['hourly.csv']);
  }
  if (json) process.stdout.write(`${toJson(parts.summary)}\n`);
  else process.stdout.write(`${renderRunTable(parts.summary)}\n`);
  if (outDirectory !== undefined && !json) process.stderr.write(`results written to ${outDirectory}/ (${resultFiles.filter((name) => name !== 'hourly.csv' || hourly !== null).join(', ')})\n`);
  if (recording) {
    const bytes = recording.write(records[0]);
    if (!json) process.stderr.write(`motion of replication 1 recorded in ${recording.file} (${bytes} bytes); view it with: fleetwright replay ${recording.file}\n`);
  }
}
