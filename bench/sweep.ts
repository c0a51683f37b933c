/**
 * Sweep and size benchmarks: the same sweep plan on 1 and 2 worker threads (runs per
 * minute; the ratio shows how well the pool uses the cores), and the wall time of the
 * demo's sizing question. Each sweep starts in a fresh folder, so nothing is resumed.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { loadSweepPlan } from '../experiments/sweep-plan.ts';
import { runSweep } from '../experiments/sweep.ts';
import { wholePlan } from '../experiments/shard.ts';
import { sizeFleet } from '../experiments/size.ts';
import { defaultWorkers } from '../experiments/pool.ts';
import { loadScenarioFile } from '../scenarios/load.ts';

const demo = path.resolve('scenarios/demo-sortation.yaml');

export async function benchSweep(workerCounts: number[]): Promise<Record<string, number | string>[]> {
  const folder = mkdtempSync(path.join(os.tmpdir(), 'fleetwright-bench-sweep-'));
  try {
    const planFile = path.join(folder, 'plan.yaml');
    // 2 fleets x 2 rates x 12 replications of 4 simulated hours: 48 runs of similar length,
    // enough that starting the worker threads (about half a second) is a small part.
    writeFileSync(planFile, `scenario: ${JSON.stringify(demo)}\nvary:\n  fleet.robots: [12, 24]\n  demand.tasksPerHour: [600, 900]\nreplications: 12\n`);
    const plan = loadSweepPlan(planFile);
    const rows: Record<string, number | string>[] = [];
    for (const workers of workerCounts) {
      const started = performance.now();
      const out = path.join(folder, `out-${workers}`);
      await runSweep(plan, { outDirectory: out, workers, shard: wholePlan });
      const minutes = (performance.now() - started) / 60_000;
      // Share of the workers' time spent simulating (engine wall time of every run over
      // workers x sweep wall time): near 1 when the pool keeps every thread busy, whatever
      // else slows the machine down.
      const engineSeconds = readFileSync(path.join(out, 'runs.jsonl'), 'utf8')
        .trimEnd()
        .split('\n')
        .reduce((sum, line) => sum + (JSON.parse(line).timing.wallSeconds as number), 0);
      rows.push({
        name: 'sweep',
        workers,
        runs: plan.runs.length,
        wallSeconds: Number((minutes * 60).toFixed(2)),
        runsPerMinute: Number((plan.runs.length / minutes).toFixed(1)),
        workerBusyShare: Number((engineSeconds / (workers * minutes * 60)).toFixed(3)),
        loadAverage: Number(os.loadavg()[0].toFixed(2)),
      });
    }
    const one = rows.find((r) => r.workers === 1);
    for (const row of rows) if (one) row.speedupOverOneWorker = Number(((row.runsPerMinute as number) / (one.runsPerMinute as number)).toFixed(2));
    return rows;
  } finally {
    rmSync(folder, { recursive: true, force: true });
  }
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
