/** `fleetwright sweep`: every run of a sweep plan on all cores (or one shard of it), resumable. */
import { loadSweepPlan } from '../../experiments/sweep-plan.ts';
import { runSweep } from '../../experiments/sweep.ts';
import { shardFrom } from '../../experiments/shard.ts';
import { parseWorkers } from '../../experiments/pool.ts';
import { startProgress } from '../progress.ts';

export async function sweepCommand(planPath: string, options: { out: string; workers?: string; shard?: string }): Promise<void> {
  const workers = parseWorkers(options.workers);
  const shard = shardFrom(options.shard);
  const plan = loadSweepPlan(planPath);
  const progress = await startProgress(`sweep${shard.count > 1 ? ` shard ${shard.index}/${shard.count}` : ''}`);
  let result;
  try {
    result = await runSweep(plan, {
      outDirectory: options.out,
      workers,
      shard,
      argv: process.argv.slice(2),
      progress: (done, total, resumed) => progress.update(total > 0 ? done / total : 1, `${done}/${total} runs${resumed > 0 ? ` (${resumed} resumed)` : ''}`),
    });
  } finally {
    progress.stop();
  }
  const resumedText = result.resumed > 0 ? `, ${result.resumed} already done` : '';
  process.stderr.write(`sweep: ${result.total} runs (${result.ran} run now${resumedText}) of ${plan.runs.length} in the plan, ${shard.source}; results in ${options.out}/ (runs.jsonl, runs.csv, summary.csv, context.json; fleetwright report ${options.out} draws them)\n`);
}
