/**
 * Sweep and size benchmarks: the same sweep plan on 1 and 2 worker threads (runs per
 * minute; the ratio shows how well the pool uses the cores) beside the same plan as 2
 * shards in 2 separate processes (independent jobs on the same machine), at two run
 * lengths; and the wall time of the demo's sizing question. Each sweep starts in a fresh
 * folder, so nothing is resumed.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { spawn } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { loadSweepPlan } from '../experiments/sweep-plan.ts';
import { runSweep } from '../experiments/sweep.ts';
import { wholePlan } from '../experiments/shard.ts';
import { sizeFleet } from '../experiments/size.ts';
import { defaultWorkers } from '../experiments/pool.ts';
import { loadScenarioFile } from '../scenarios/load.ts';
import { quantileSorted } from '../reports/stats/quantile-sorted.ts';

const demo = path.resolve('scenarios/demo-sortation.yaml');

const self = fileURLToPath(import.meta.url);

/**
 * One plan of 2 fleets x 2 rates x 12 replications (48 runs of similar length), each run
 * `hours` simulated hours long. At 4 h a run takes about 75 ms, so starting the worker
 * threads and each thread's own JIT warm-up are a visible part of the 2-worker row; at 24 h
 * (an operating day, as in an overnight sweep) they are a small part.
 */
function writePlan(folder: string, hours: number): string {
  const planFile = path.join(folder, `plan-${hours}h.yaml`);
  writeFileSync(planFile, `scenario: ${JSON.stringify(demo)}\nvary:\n  fleet.robots: [12, 24]\n  demand.tasksPerHour: [600, 900]\n  run.hours: [${hours}]\nreplications: 12\n`);
  return planFile;
}

/** Engine wall seconds of each run in runs.jsonl files (timing.wallSeconds). */
function runSeconds(runsFiles: string[]): number[] {
  return runsFiles.flatMap((file) =>
    readFileSync(file, 'utf8')
      .trimEnd()
      .split('\n')
      .map((line) => JSON.parse(line).timing.wallSeconds as number),
  );
}

/** The busy share and a run's median engine time, from the runs' own timings. */
function runFigures(runsFiles: string[], lanes: number, seconds: number): { workerBusyShare: number; medianRunSeconds: number } {
  const times = runSeconds(runsFiles);
  const median = quantileSorted(
    [...times].sort((a, b) => a - b),
    0.5,
  );
  return {
    // Share of the lanes' time spent simulating (engine wall time of every run over lanes x
    // sweep wall time): near 1 when every thread or process is kept busy, whatever else
    // slows the machine down.
    workerBusyShare: Number((times.reduce((a, b) => a + b, 0) / (lanes * seconds)).toFixed(3)),
    // One run's engine time, its median over the plan: the first runs of a fresh thread are
    // slower (JIT warm-up), so the median shows the steady state; against the 1-worker row
    // it shows how much slower a run is while the other core is busy too.
    medianRunSeconds: Number(median.toFixed(4)),
  };
}

/**
 * The sweep rows: for each run length, the same plan on each worker count (one pool of
 * worker threads in this process), then the same plan split into as many shards as the
 * largest worker count, each shard a separate process with one worker, all started at once
 * (`sweep-processes`, as shards on a cluster or in two terminals would run it). The
 * separate processes share nothing but the machine: a reference for the pool measured in
 * the same run (`shareOfProcesses` on the pool's row: its runs per minute over theirs; they
 * also pay each process's start-up). Each sweep starts in a fresh folder, so nothing is
 * resumed.
 */
export async function benchSweep(workerCounts: number[], hoursList: number[] = [4, 24]): Promise<Record<string, number | string>[]> {
  const folder = mkdtempSync(path.join(os.tmpdir(), 'fleetwright-bench-sweep-'));
  try {
    const rows: Record<string, number | string>[] = [];
    for (const hours of hoursList) {
      const planFile = writePlan(folder, hours);
      const plan = loadSweepPlan(planFile);
      const planRows: Record<string, number | string>[] = [];
      for (const workers of workerCounts) {
        const started = performance.now();
        const out = path.join(folder, `out-${hours}h-${workers}`);
        await runSweep(plan, { outDirectory: out, workers, shard: wholePlan });
        const seconds = (performance.now() - started) / 1000;
        planRows.push({
          name: 'sweep',
          hoursPerRun: hours,
          workers,
          runs: plan.runs.length,
          wallSeconds: Number(seconds.toFixed(2)),
          runsPerMinute: Number(((plan.runs.length * 60) / seconds).toFixed(1)),
          ...runFigures([path.join(out, 'runs.jsonl')], workers, seconds),
          loadAverage: Number(os.loadavg()[0].toFixed(2)),
        });
      }
      const processes = Math.max(...workerCounts);
      if (processes > 1) planRows.push(await separateProcesses(planFile, plan.runs.length, hours, processes, folder));
      const one = planRows.find((r) => r.name === 'sweep' && r.workers === 1);
      const apart = planRows.find((r) => r.name === 'sweep-processes');
      for (const row of planRows) {
        if (one) row.speedupOverOneWorker = Number(((row.runsPerMinute as number) / (one.runsPerMinute as number)).toFixed(2));
        if (apart && row.name === 'sweep' && row.workers === processes) row.shareOfProcesses = Number(((row.runsPerMinute as number) / (apart.runsPerMinute as number)).toFixed(3));
      }
      rows.push(...planRows);
    }
    return rows;
  } finally {
    rmSync(folder, { recursive: true, force: true });
  }
}

/** The plan as `count` shards, each in its own process (one worker), all at once. */
async function separateProcesses(planFile: string, runs: number, hours: number, count: number, folder: string): Promise<Record<string, number | string>> {
  const started = performance.now();
  const outs = Array.from({ length: count }, (_, i) => path.join(folder, `out-${hours}h-shard-${i}`));
  await Promise.all(
    outs.map(
      (out, i) =>
        new Promise<void>((resolve, reject) => {
          // Under the bench's own entry (bench/start.js: the build when current, else tsx), as the memory rows' children.
          const child = spawn(process.execPath, [path.join(path.dirname(self), 'start.js'), '--sweep-child', planFile, out, `${i}/${count}`], { stdio: ['ignore', 'ignore', 'pipe'] });
          let stderr = '';
          child.stderr.on('data', (chunk) => (stderr += chunk));
          child.on('error', reject);
          child.on('exit', (code) => (code === 0 ? resolve() : reject(new Error(`sweep bench shard ${i}/${count} failed (exit ${code}): ${stderr.trim()}`))));
        }),
    ),
  );
  const seconds = (performance.now() - started) / 1000;
  return {
    name: 'sweep-processes',
    hoursPerRun: hours,
    processes: count,
    workers: 1,
    runs,
    wallSeconds: Number(seconds.toFixed(2)),
    runsPerMinute: Number(((runs * 60) / seconds).toFixed(1)),
    ...runFigures(
      outs.map((out) => path.join(out, 'runs.jsonl')),
      count,
      seconds,
    ),
    loadAverage: Number(os.loadavg()[0].toFixed(2)),
  };
}

/** Child mode of `sweep-processes`: one shard of the plan on one worker, in this process. */
export async function sweepChild(planFile: string, outDirectory: string, shardText: string): Promise<void> {
  const [index, count] = shardText.split('/').map(Number);
  await runSweep(loadSweepPlan(planFile), { outDirectory, workers: 1, shard: { index, count, source: `--shard ${shardText}` } });
}

/** The demo's sizing question as `npm start` asks it: 900 tasks/h on the demo hall. */
export async function benchSize(): Promise<Record<string, number | string | null>> {
  const target = 900;
  const scenario = loadScenarioFile(demo, { tasksPerHour: target });
  const workers = defaultWorkers();
  const started = performance.now();
  const document = await sizeFleet(scenario, { target, replications: scenario.run.replications, leadP95Limit: null, workers });
  const wallSeconds = (performance.now() - started) / 1000;
  return {
    name: 'size',
    target,
    workers,
    wallSeconds: Number(wallSeconds.toFixed(2)),
    recommendedRobots: document.recommendedRobots,
    handFormulaRobots: document.handFormulaRobots,
    runs: document.runs.atTarget + document.runs.capacity,
  };
}
