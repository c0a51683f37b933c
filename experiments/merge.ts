/**
 * Joining sweep folders (shards of one plan, from `--shard` or an array job) into one:
 * the same runs.jsonl, runs.csv and summary.csv as the whole plan run in one place, byte
 * for byte outside `timing`, and a context.json with the merge's command. Refused (InputError, exit 2): folders of different plans; a
 * run of the plan that no folder holds, or one that two folders hold, unless `partial`
 * (then missing runs are left out and the first copy of a doubled run is kept).
 */
import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { InputError } from '../sim/errors.ts';
import { commandLine, type SweepContext } from '../reports/run-context.ts';
import { toJson } from '../reports/summary.ts';
import type { OutputFile } from './output-folder.ts';
import { RunJournal, type LineLocation } from './run-journal.ts';
import { readPlanDocument, sweepFiles, writeSweepOutputs, type PlanDocument } from './sweep.ts';
import type { PlannedRun } from './sweep-plan.ts';

export interface MergeResult {
  runs: number;
  missing: number;
  doubled: number;
  folders: number;
}

export function mergeSweeps(folders: readonly string[], outDirectory: string, partial: boolean, argv: readonly string[] = []): MergeResult {
  if (folders.length === 0) throw new InputError('merge: got no folders, expected one or more sweep output folders');
  const documents: { folder: string; plan: PlanDocument }[] = [];
  for (const folder of folders) {
    const plan = readPlanDocument(folder, 'merge');
    if (!plan) throw new InputError(`merge: ${JSON.stringify(folder)} has no ${sweepFiles.plan}, expected a folder written by fleetwright sweep`);
    documents.push({ folder, plan });
  }
  const first = documents[0];
  for (const other of documents.slice(1)) {
    if (other.plan.planHash !== first.plan.planHash || other.plan.resultFormat !== first.plan.resultFormat) {
      throw new InputError(
        `merge: ${JSON.stringify(other.folder)} holds another sweep plan than ${JSON.stringify(first.folder)} (${other.plan.sweepFile}: ${other.plan.points.length} points x ${other.plan.replications}, vs ${first.plan.sweepFile}: ${first.plan.points.length} points x ${first.plan.replications}), expected shards of one plan`,
      );
    }
  }
  const resolvedOut = path.resolve(outDirectory);
  if (documents.some((d) => path.resolve(d.folder) === resolvedOut)) throw new InputError(`--out: ${JSON.stringify(outDirectory)} is one of the folders to merge, expected a new folder`);

  const runs: PlannedRun[] = first.plan.runs.map(([id, point, replication], index) => ({ id, point, replication, index }));
  const planIds = new Set(runs.map((r) => r.id));
  const located = new Map<string, LineLocation>();
  const holder = new Map<string, string>();
  let doubled = 0;
  for (const { folder } of documents) {
    const journal = new RunJournal(path.join(folder, sweepFiles.runs), (id) => planIds.has(id));
    journal.close();
    if (journal.droppedBytes > 0 && !partial) {
      throw new InputError(`merge: ${JSON.stringify(folder)} ends in a cut-off run line (the sweep was stopped), expected finished shards: rerun its sweep command to resume it, or pass --partial`);
    }
    for (const [id, location] of journal.done) {
      const earlier = holder.get(id);
      if (earlier !== undefined) {
        doubled++;
        if (!partial) {
          const run = runs.find((r) => r.id === id)!;
          throw new InputError(`merge: run ${run.index} (id ${id}) is in both ${JSON.stringify(earlier)} and ${JSON.stringify(folder)}, expected each run in one folder (a shard given twice?), or pass --partial to keep the first`);
        }
        continue;
      }
      holder.set(id, folder);
      located.set(id, location);
    }
  }
  const missing = runs.filter((r) => !located.has(r.id));
  if (missing.length > 0 && !partial) {
    const example = missing[0];
    const shards = new Set(documents.map((d) => (d.plan.shard ? `${d.plan.shard.index}/${d.plan.shard.count}` : 'whole')));
    throw new InputError(
      `merge: ${missing.length} of ${runs.length} runs are in none of the folders (first: run ${example.index}, point ${JSON.stringify(first.plan.points[example.point])}, replication ${example.replication}; shards given: ${[...shards].join(', ')}), expected every run of the plan: add the missing shards, finish them, or pass --partial`,
    );
  }
  const plan: PlanDocument = { ...first.plan, shard: null };
  const extra: OutputFile[] = [{ name: sweepFiles.plan, content: `${JSON.stringify(plan)}\n` }];
  const context = mergedContext(documents.map((d) => d.folder), argv);
  if (context !== null) extra.push({ name: sweepFiles.context, content: `${toJson(context)}\n` });
  writeSweepOutputs(outDirectory, plan.vary, plan.points, runs, located, plan.confidence, '--out', extra);
  return { runs: runs.length - missing.length, missing: missing.length, doubled, folders: documents.length };
}

/**
 * The merged folder's context.json: the shards' context (the same plan, scenario and version
 * in each) with the merge's own command, no shard, and each folder's command in the order
 * given; null when no folder has one (shards written before sweeps wrote it).
 */
function mergedContext(folders: readonly string[], argv: readonly string[]): SweepContext | null {
  const contexts = folders.map((folder) => {
    const file = path.join(folder, sweepFiles.context);
    if (!existsSync(file)) return null;
    try {
      return JSON.parse(readFileSync(file, 'utf8')) as SweepContext;
    } catch (error) {
      throw new InputError(`merge: ${JSON.stringify(file)} is not valid JSON (${(error as Error).message.split('\n')[0]}), expected the context.json fleetwright sweep wrote`);
    }
  });
  const first = contexts.find((c) => c !== null);
  if (!first) return null;
  const { shardCommands: _shards, ...rest } = first;
  return { ...rest, command: commandLine(argv), shard: null, shardCommands: contexts.map((c) => c?.command ?? '(no context.json)') };
}
