/**
 * Sweep and size benchmarks: the same sweep plan on 1 and 2 worker threads (runs per
 * minute; the ratio shows how well the pool uses the cores) beside the same plan as 2
 * shards in 2 separate processes (what the machine gives independent jobs), at two run
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

/** Engine wall seconds of every run in a runs.jsonl (timing.wallSeconds). */
function engineSeconds(runsFile: string): number {
  return readFileSync(runsFile, 'utf8')
    .trimEnd()
    .split('\n')
    .reduce((sum, line) => sum + (JSON.parse(line).timing.wallSeconds as number), 0);
}

/**
 * The sweep rows: for each run length, the same plan on each worker count (one pool of
 * worker threads in this process), then the same plan split into as many shards as the
 * largest worker count, each shard a separate process with one worker, all started at once
 * (`sweep-processes`). The separate processes share nothing but the machine, so their
 * speed-up over one worker is what this machine gives that many independent jobs: the
 * ceiling for the thread pool, measured in the same run (`shareOfProcesses` on the pool's
 * row). Each sweep starts in a fresh folder, so nothing is resumed.
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
          // Share of the workers' time spent simulating (engine wall time of every run over
          // workers x sweep wall time): near 1 when the pool keeps every thread busy, whatever
          // else slows the machine down.
          workerBusyShare: Number((engineSeconds(path.join(out, 'runs.jsonl')) / (workers * seconds)).toFixed(3)),
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
  const busy = outs.reduce((sum, out) => sum + engineSeconds(path.join(out, 'runs.jsonl')), 0);
  return {
    name: 'sweep-processes',
    hoursPerRun: hours,
    processes: count,
    workers: 1,
    runs,
    wallSeconds: Number(seconds.toFixed(2)),
    runsPerMinute: Number(((runs * 60) / seconds).toFixed(1)),
    workerBusyShare: Number((busy / (count * seconds)).toFixed(3)),
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
