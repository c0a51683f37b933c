/**
 * Running a sweep plan (DESIGN §8) into an output folder, resumably:
 *
 *   plan.json   what this folder holds: the plan's hash, its runs, and the shard; a folder
 *               of another plan (or shard) is refused rather than mixed;
 *   runs.jsonl  the journal (experiments/run-journal.ts): each finished run appended and
 *               fsynced; rerunning the same command skips the runs already there;
 *   at the end, runs.jsonl rewritten in plan order, runs.csv, summary.csv and context.json
 *               (command, plan and scenario hashes, version: reports/run-context.ts),
 *               swapped in together (experiments/output-folder.ts).
 *
 * Runs go to a worker-thread pool, at most two per worker in flight, so memory does not
 * grow with the plan; each run is summarized to its line in the worker that ran it. A run line
 * holds the run's id, plan position, parameters and its run summary (one replication, its
 * own warm-up cut); wall-clock figures only under `timing`. Lines are byte-identical
 * outside `timing` whatever the worker count or sharding.
 */
import { closeSync, existsSync, openSync, readFileSync, renameSync, rmSync, writeSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { InputError } from '../sim/errors.ts';
import { sweepContext } from '../reports/run-context.ts';
import { toJson } from '../reports/summary.ts';
import { PointAccumulator, runsCsvHeader, runsCsvRow, summaryCsvHeader, summaryCsvRow, type RunLine } from '../reports/sweep-tables.ts';
import { ensureOutputFolder, writeDurable, writeOutputFolder, type OutputFile } from './output-folder.ts';
import { createPool } from './pool.ts';
import { readLineAt, RunJournal, type LineLocation } from './run-journal.ts';
import { resultFormat } from './run-id.ts';
import type { Shard } from './shard.ts';
import type { PlannedRun, SweepPlan } from './sweep-plan.ts';

export interface SweepProgress {
  (done: number, total: number, resumed: number): void;
}

export interface SweepOptions {
  outDirectory: string;
  workers: number;
  shard: Shard;
  progress?: SweepProgress;
  /** The command's arguments (after `fleetwright`), for context.json. */
  argv?: readonly string[];
}

export interface SweepResult {
  total: number;
  resumed: number;
  ran: number;
  droppedBytes: number;
}

/** The plan document stored in the folder: enough for `merge` to check shards without the sweep file. */
export interface PlanDocument {
  resultFormat: number;
  planHash: string;
  sweepFile: string;
  scenario: string;
  vary: string[];
  replications: number;
  confidence: number;
  shard: { index: number; count: number } | null;
  points: Record<string, unknown>[];
  runs: [id: string, point: number, replication: number][];
}

export const sweepFiles = { plan: 'plan.json', runs: 'runs.jsonl', runsCsv: 'runs.csv', summaryCsv: 'summary.csv', context: 'context.json' } as const;

export function planDocument(plan: SweepPlan, shard: { index: number; count: number } | null): PlanDocument {
  return {
    resultFormat,
    planHash: plan.hash,
    sweepFile: plan.file,
    scenario: path.relative(process.cwd(), plan.scenarioPath) || plan.scenarioPath,
    vary: plan.vary.map((v) => v.path),
    replications: plan.replications,
    confidence: plan.points[0].scenario.run.confidence,
    shard: shard && shard.count > 1 ? { index: shard.index, count: shard.count } : null,
    points: plan.points.map((p) => p.parameters),
    runs: plan.runs.map((r) => [r.id, r.point, r.replication]),
  };
}

export function readPlanDocument(directory: string, option: string): PlanDocument | null {
  const file = path.join(directory, sweepFiles.plan);
  if (!existsSync(file)) return null;
  try {
    const document = JSON.parse(readFileSync(file, 'utf8')) as PlanDocument;
    if (typeof document.planHash !== 'string' || !Array.isArray(document.runs)) throw new Error('fields missing');
    return document;
  } catch (error) {
    throw new InputError(`${option}: ${JSON.stringify(file)} is not a fleetwright sweep plan (${error instanceof Error ? error.message : error}), expected a folder written by fleetwright sweep`);
  }
}

/** Takes the folder for this process, or says who holds it. A lock left by a killed process is taken over. */
function lockFolder(directory: string): () => void {
  const lock = path.join(directory, '.lock');
  const me = `${os.hostname()} ${process.pid}`;
  for (let attempt = 0; attempt < 2; attempt++) {
    try {
      const fd = openSync(lock, 'wx');
      writeSync(fd, me);
      closeSync(fd);
      return () => rmSync(lock, { force: true });
    } catch (error) {
      if ((error as NodeJS.ErrnoException).code !== 'EEXIST') throw new InputError(`--out: cannot write into ${JSON.stringify(directory)} (${(error as NodeJS.ErrnoException).code}), expected a writable folder`);
      const [host, pidText] = readFileSync(lock, 'utf8').split(' ');
      const pid = Number(pidText);
      let alive = host !== os.hostname();
      if (!alive && Number.isSafeInteger(pid)) {
        try {
          process.kill(pid, 0);
          alive = true;
        } catch (probe) {
          alive = (probe as NodeJS.ErrnoException).code === 'EPERM';
        }
      }
      if (alive) {
        throw new InputError(`--out: ${JSON.stringify(directory)} is in use by another sweep (process ${pidText} on ${host}), expected a folder no other sweep writes to (delete ${lock} if that process is gone)`);
      }
      rmSync(lock, { force: true });
    }
  }
  throw new InputError(`--out: cannot lock ${JSON.stringify(directory)}, expected a folder no other sweep writes to`);
}

function checkSameSweep(stored: PlanDocument, wanted: PlanDocument, directory: string): void {
  if (stored.planHash !== wanted.planHash || stored.resultFormat !== wanted.resultFormat) {
    const shape = (d: PlanDocument) => `${d.points.length} points x ${d.replications} replications varying ${d.vary.join(', ') || 'nothing'}`;
    const what = shape(stored) !== shape(wanted) ? `it holds ${shape(stored)}, this plan has ${shape(wanted)}` : `same shape, but other values or a changed scenario (${stored.scenario})`;
    throw new InputError(`--out: ${JSON.stringify(directory)} holds results of another sweep plan (${what}): expected a new --out folder, or the unchanged plan and scenario to resume`);
  }
  const shardText = (s: PlanDocument['shard']) => (s ? `shard ${s.index}/${s.count}` : 'the whole plan');
  if ((stored.shard?.index ?? 0) !== (wanted.shard?.index ?? 0) || (stored.shard?.count ?? 1) !== (wanted.shard?.count ?? 1)) {
    throw new InputError(`--out: ${JSON.stringify(directory)} holds ${shardText(stored.shard)} of this plan, this process runs ${shardText(wanted.shard)}: expected one folder per shard`);
  }
}

export async function runSweep(plan: SweepPlan, options: SweepOptions): Promise<SweepResult> {
  const directory = options.outDirectory;
  const { shard } = options;
  ensureOutputFolder(directory);
  const unlock = lockFolder(directory);
  try {
    const wanted = planDocument(plan, shard);
    const stored = readPlanDocument(directory, '--out');
    if (stored) checkSameSweep(stored, wanted, directory);
    else {
      const temporary = path.join(directory, `.${sweepFiles.plan}.${process.pid}.tmp`);
      writeDurable(temporary, `${JSON.stringify(wanted)}\n`);
      renameSync(temporary, path.join(directory, sweepFiles.plan));
    }
    const selected = plan.runs.filter((run) => run.index % shard.count === shard.index);
    const selectedIds = new Set(selected.map((r) => r.id));
    const journal = new RunJournal(path.join(directory, sweepFiles.runs), (id) => selectedIds.has(id));
    const resumed = selected.filter((r) => journal.done.has(r.id)).length;
    const todo = selected.filter((r) => !journal.done.has(r.id));
    let done = resumed;
    options.progress?.(done, selected.length, resumed);
    try {
      if (todo.length > 0) {
        const pool = createPool(Math.min(options.workers, todo.length));
        try {
          await runAll(todo, pool.workers * 2, async (run) => {
            const point = plan.points[run.point];
            const line = await pool.runLine(point.key, point.scenario, { id: run.id, run: run.index, point: run.point, replication: run.replication, parameters: point.parameters });
            journal.append(run.id, line);
            options.progress?.(++done, selected.length, resumed);
          });
        } finally {
          await pool.close();
        }
      }
    } finally {
      journal.close();
    }
    const context = sweepContext(plan.scenario, options.argv ?? [], { sweepFile: plan.file, planHash: plan.hash, vary: wanted.vary, replications: plan.replications, runs: plan.runs.length, shard: wanted.shard });
    writeSweepOutputs(directory, wanted.vary, wanted.points, selected, journal.done, wanted.confidence, '--out', [{ name: sweepFiles.context, content: `${toJson(context)}\n` }]);
    return { total: selected.length, resumed, ran: todo.length, droppedBytes: journal.droppedBytes };
  } finally {
    unlock();
  }
}

/** Runs `work` over the items with at most `limit` in flight; the first failure stops new starts and is rethrown once the others settle. */
async function runAll<T>(items: readonly T[], limit: number, work: (item: T) => Promise<void>): Promise<void> {
  let next = 0;
  let failure: unknown = null;
  const lane = async () => {
    while (failure === null && next < items.length) {
      const item = items[next++];
      try {
        await work(item);
      } catch (error) {
        if (failure === null) failure = error;
      }
    }
  };
  await Promise.all(Array.from({ length: Math.min(limit, items.length) }, lane));
  if (failure !== null) throw failure;
}

/**
 * Writes runs.jsonl (in plan order), runs.csv and summary.csv from the lines at `located`,
 * all or nothing. Used by sweeps (their own journal) and merge (lines from many shards).
 */
export function writeSweepOutputs(
  directory: string,
  parameters: string[],
  points: Record<string, unknown>[],
  runs: readonly PlannedRun[],
  located: ReadonlyMap<string, LineLocation>,
  confidence: number,
  option: string,
  extra: OutputFile[] = [],
): void {
  const present = runs.filter((r) => located.has(r.id));
  const lines: OutputFile = {
    name: sweepFiles.runs,
    content: (write) => {
      for (const run of present) write(`${readLineAt(located.get(run.id)!)}\n`);
    },
  };
  const runsCsv: OutputFile = {
    name: sweepFiles.runsCsv,
    content: (write) => {
      write(runsCsvHeader(parameters));
      for (const run of present) write(runsCsvRow(JSON.parse(readLineAt(located.get(run.id)!)) as RunLine, parameters));
    },
  };
  const summaryCsv: OutputFile = {
    name: sweepFiles.summaryCsv,
    content: (write) => {
      write(summaryCsvHeader(parameters));
      // Runs are in plan order, so each point's replications are contiguous and in order.
      let current: PointAccumulator | null = null;
      for (const run of present) {
        if (current === null || current.point !== run.point) {
          if (current) write(summaryCsvRow(current, parameters, confidence));
          current = new PointAccumulator(run.point, points[run.point]);
        }
        current.add(JSON.parse(readLineAt(located.get(run.id)!)) as RunLine);
      }
      if (current) write(summaryCsvRow(current, parameters, confidence));
    },
  };
  writeOutputFolder(directory, [...extra, lines, runsCsv, summaryCsv], option);
}
