/**
 * The files beside a run's or a comparison's results that the HTML report draws from and
 * that `summary.json` / `comparison.json` do not hold: `cells.csv` (waiting per floor cell),
 * `lead-times.csv` (lead-time histogram after the warm-up) and `context.json` (command,
 * version, scenario and its hash). Each is written atomically.
 */
import path from 'node:path';
import type { Scenario } from '../sim/model.ts';
import type { ReplicationRecord } from '../sim/engine.ts';
import { parseLayout } from '../sim/layout.ts';
import { cellRows, cellsCsv } from './cells-csv.ts';
import { leadTimeHistogram, leadTimesAfterWarmup, leadTimesCsv } from './lead-time-histogram.ts';
import { runContext } from './run-context.ts';
import { toJson } from './summary.ts';
import { writeFileAtomic } from './write-files.ts';

export const reportInputFiles = ['cells.csv', 'lead-times.csv', 'context.json'] as const;

export interface ReportInputRun {
  scenario: Scenario;
  records: ReplicationRecord[];
}

/**
 * `runs` holds one run (`run --out`) or one per policy (`compare --out`, which adds a policy
 * column); `cutIntervals[i]` is the warm-up cut (in sample intervals) the summary of run i
 * used; `argv` the command's arguments.
 */
export function writeReportInputs(directory: string, runs: ReportInputRun[], cutIntervals: readonly number[], argv: readonly string[]): void {
  for (const file of reportInputContents(runs, cutIntervals, argv)) writeFileAtomic(path.join(directory, file.name), file.content);
}

/** The same files as name and text, for a caller that writes a whole result folder at once. */
export function reportInputContents(runs: ReportInputRun[], cutIntervals: readonly number[], argv: readonly string[]): { name: (typeof reportInputFiles)[number]; content: string }[] {
  const compare = runs.length > 1;
  const layout = parseLayout(runs[0].scenario.layoutText);
  const policy = (run: ReportInputRun) => (compare ? run.scenario.policy.name : undefined);
  return [
    { name: 'cells.csv', content: cellsCsv(runs.map((run) => ({ policy: policy(run), rows: cellRows(layout, run.records) }))) },
    {
      name: 'lead-times.csv',
      content: leadTimesCsv(runs.map((run, i) => ({ policy: policy(run), bins: leadTimeHistogram(leadTimesAfterWarmup(run.records, cutIntervals[i])) }))),
    },
    { name: 'context.json', content: `${toJson(runContext(runs[0].scenario, argv))}\n` },
  ];
}
