/**
 * Sweep and size benchmarks: the same sweep plan on 1 and 2 worker threads (runs per
 * minute; the ratio shows how well the pool uses the cores), and the wall time of the
 * demo's sizing question. Each sweep starts in a fresh folder, so nothing is resumed.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
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
    // 2 fleets x 2 rates x 6 replications of 2 simulated hours: 24 runs of similar length.
    writeFileSync(planFile, `scenario: ${JSON.stringify(demo)}\nvary:\n  fleet.robots: [12, 24]\n  demand.tasksPerHour: [600, 900]\n  run.hours: [2]\nreplications: 6\n`);
    const plan = loadSweepPlan(planFile);
    const rows: Record<string, number | string>[] = [];
    for (const workers of workerCounts) {
      const started = performance.now();
      await runSweep(plan, { outDirectory: path.join(folder, `out-${workers}`), workers, shard: wholePlan });
      const minutes = (performance.now() - started) / 60_000;
      rows.push({ name: 'sweep', workers, runs: plan.runs.length, wallSeconds: Number((minutes * 60).toFixed(2)), runsPerMinute: Number((plan.runs.length / minutes).toFixed(1)) });
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
