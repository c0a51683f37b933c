/**
 * The commander program. Commands are thin: they parse options, call library code
 * (experiments/, reports/*) and print. Every option is declared once with its default
 * in the description. Failures map to exit codes in cli/exit.ts.
 */
import { Command, Option } from 'commander';
import { reportFailure } from './exit.ts';
import type { ScenarioOverrides } from '../scenarios/load.ts';

const program = new Command();
program
  .name('fleetwright')
  .description('Simulate robot fleets doing lifelong pickup-and-delivery work on a grid floor: size fleets and compare dispatch policies with confidence intervals.')
  .version('0.1.0')
  .exitOverride()
  // One line per error (DESIGN §3): commander's message, its "did you mean" hint and the usage pointer joined.
  .configureOutput({ outputError: (text, write) => write(`fleetwright: ${text.trim().replace(/\s*\n\s*/g, ' ')} (run with --help for usage)\n`) });

/** Options shared by commands that run a scenario; each overrides the scenario field of the same meaning. */
function addRunOptions(command: Command): Command {
  return command
    .addOption(new Option('--robots <n>', 'fleet size (overrides fleet.robots)'))
    .addOption(new Option('--hours <h>', 'simulated hours per replication (overrides run.hours; default 4)'))
    .addOption(new Option('--reps <r>', 'replications (overrides run.replications; default 5)'))
    .addOption(new Option('--seed <s>', 'base random seed (overrides run.seed; default 1)'))
    .addOption(new Option('--rate <tph>', 'Poisson demand in tasks per hour (overrides demand.tasksPerHour)'))
    .addOption(new Option('--trace <file>', 'replay a task trace CSV: releaseSeconds,pickup,drop (cells as x:y)'))
    .addOption(new Option('--warmup <hours|auto>', "warm-up to cut: hours, or 'auto' for MSER-5 (overrides run.warmup)"))
    .addOption(new Option('--json', 'print one JSON document on stdout instead of the table'));
}

interface RunOptionValues {
  robots?: string;
  hours?: string;
  reps?: string;
  seed?: string;
  rate?: string;
  trace?: string;
  warmup?: string;
  json?: boolean;
  policy?: string;
  out?: string;
}

/** Option strings to overrides; the loader validates them and names the option in errors. */
export function overridesFrom(options: RunOptionValues): ScenarioOverrides {
  // Text that is not a number is passed through as text so the loader's message quotes what was typed.
  const number = (value: string | undefined): number | undefined => {
    if (value === undefined) return undefined;
    const parsed = value.trim() === '' ? NaN : Number(value);
    return (Number.isNaN(parsed) ? value : parsed) as number;
  };
  return {
    robots: number(options.robots),
    hours: number(options.hours),
    replications: number(options.reps),
    seed: number(options.seed),
    tasksPerHour: number(options.rate),
    trace: options.trace,
    policy: options.policy,
    warmup: options.warmup === undefined ? undefined : options.warmup === 'auto' ? 'auto' : number(options.warmup),
  };
}

addRunOptions(
  program
    .command('run')
    .description('simulate a scenario and print throughput, station idle and starved time, lead time, robot time and deadlocks with intervals')
    .argument('<scenario>', 'scenario YAML file')
    .addOption(new Option('--policy <name>', 'dispatch-and-routing policy (overrides policy.name; see `fleetwright policies`)'))
    .addOption(new Option('--out <dir>', 'also write summary.json, replications.csv, throughput.csv, stations.csv, lead-time-split.csv, cells.csv, lead-times.csv, context.json and, with a demand profile, hourly.csv into this folder'))
    .addOption(new Option('--record <file>', 'record robot motion of replication 1 for `fleetwright replay` (a .fwr file)'))
    .addOption(new Option('--record-window <from:to>', 'simulated seconds to record (default 0:1800)')),
).action(async (scenarioPath: string, options: RunOptionValues & { record?: string; recordWindow?: string }) => {
  const { runCommand } = await import('./commands/run.ts');
  if (options.recordWindow !== undefined && options.record === undefined) {
    const { InputError } = await import('../sim/errors.ts');
    throw new InputError(`--record-window: got ${JSON.stringify(options.recordWindow)} without --record, expected --record FILE beside it`);
  }
  await runCommand(scenarioPath, options.json === true, options.out, overridesFrom(options), options.record === undefined ? undefined : { file: options.record, window: options.recordWindow });
});

addRunOptions(
  program
    .command('compare')
    .description('run several policies on the same random tasks (common random numbers) and test their differences with paired, Bonferroni-adjusted intervals')
    .argument('<scenario>', 'scenario YAML file')
    .requiredOption('--policies <a,b,...>', 'comma-separated policy names (at least two)')
    .addOption(new Option('--out <dir>', 'also write comparison.json and differences.csv into this folder')),
).action(async (scenarioPath: string, options: RunOptionValues & { policies: string }) => {
  const { compareCommand } = await import('./commands/compare.ts');
  await compareCommand(scenarioPath, options.policies, options.json === true, options.out, overridesFrom(options));
});

program
  .command('report')
  .description('write one self-contained HTML report (charts, floor heatmap, no network) from a folder of run --out, compare --out, size --out or sweep --out')
  .argument('<results-dir>', 'results folder')
  .addOption(new Option('--html <file>', 'HTML file to write (default: report.html in the results folder)'))
  .action(async (folder: string, options: { html?: string }) => {
    const { reportCommand } = await import('./commands/report.ts');
    reportCommand(folder, options.html);
  });

program
  .command('replay')
  .description('write a self-contained replay viewer (canvas, play/pause, speed, scrubber, robot states, waiting heatmap, deadlock episodes) for a motion recording of run --record')
  .argument('<recording>', 'recording file (.fwr)')
  .addOption(new Option('--html <file>', 'HTML file to write (default: the recording name with .html, beside it)'))
  .action(async (file: string, options: { html?: string }) => {
    const { replayCommand } = await import('./commands/replay.ts');
    replayCommand(file, options.html);
  });

program
  .command('size')
  .description('the smallest fleet that is stable at a target rate with its throughput interval reaching it; with the hand formula, capacity headroom and the knee')
  .argument('<scenario>', 'scenario YAML file')
  .requiredOption('--target <tph>', 'target rate in tasks per hour (Poisson with the scenario profile, pickups and drops; a trace is scaled to it)')
  .addOption(new Option('--min <n>', 'smallest fleet to consider (default 1; fleets below the hand-formula lower bound are never run)'))
  .addOption(new Option('--max <n>', 'largest fleet to consider (default max(2 x hand formula, hand formula + 10))'))
  .addOption(new Option('--policy <name>', 'dispatch-and-routing policy (overrides policy.name)'))
  .addOption(new Option('--lead-p95 <seconds>', 'service level: lead-time p95 must not exceed this'))
  .addOption(new Option('--hours <h>', 'simulated hours per replication (overrides run.hours)'))
  .addOption(new Option('--reps <r>', 'replications per fleet to start with, doubled where a verdict is unsure (overrides run.replications; default 5)'))
  .addOption(new Option('--seed <s>', 'base random seed (overrides run.seed)'))
  .addOption(new Option('--confidence <c>', 'confidence level of the intervals (overrides run.confidence; default 0.95)'))
  .addOption(new Option('--warmup <hours|auto>', "warm-up to cut (overrides run.warmup)"))
  .addOption(new Option('--workers <k>', 'worker threads (default: one per core)'))
  .addOption(new Option('--json', 'print one JSON document on stdout instead of the table'))
  .addOption(new Option('--out <dir>', 'also write size.json (the --json document) and context.json into this folder, for `fleetwright report`'))
  .action(async (scenarioPath: string, options: RunOptionValues & { target: string; min?: string; max?: string; leadP95?: string; confidence?: string; workers?: string }) => {
    const { sizeCommand } = await import('./commands/size.ts');
    await sizeCommand(scenarioPath, options, overridesFrom({ hours: options.hours, reps: options.reps, seed: options.seed, warmup: options.warmup, policy: options.policy }));
  });

program
  .command('sweep')
  .description('run every point of a sweep plan (DESIGN §8) on worker threads, appending each finished run to runs.jsonl; rerun to resume after a crash')
  .argument('<plan>', 'sweep plan YAML file: scenario, vary (dotted paths to lists), replications')
  .requiredOption('--out <dir>', 'results folder: plan.json, runs.jsonl, runs.csv, summary.csv')
  .addOption(new Option('--workers <k>', 'worker threads (default: one per core)'))
  .addOption(new Option('--shard <i/n>', 'run only shard i of n (runs k with k mod n = i); default from SLURM_ARRAY_TASK_ID/COUNT or JOB_COMPLETION_INDEX/JOB_COMPLETIONS, else the whole plan'))
  .action(async (planPath: string, options: { out: string; workers?: string; shard?: string }) => {
    const { sweepCommand } = await import('./commands/sweep.ts');
    await sweepCommand(planPath, options);
  });

program
  .command('merge')
  .description('join sweep shard folders of one plan into one folder (refuses different plans, missing or doubled runs)')
  .argument('<dirs...>', 'sweep output folders (shards)')
  .requiredOption('--out <dir>', 'merged results folder')
  .addOption(new Option('--partial', 'allow missing runs and keep the first copy of a doubled one'))
  .action(async (folders: string[], options: { out: string; partial?: boolean }) => {
    const { mergeCommand } = await import('./commands/merge.ts');
    mergeCommand(folders, options);
  });

program
  .command('check')
  .description('summarize a layout and test it: connected, well-formed (Ma et al. 2017), and if not, which two endpoints break it')
  .argument('<scenario>', 'scenario YAML file')
  .addOption(new Option('--robots <n>', 'fleet size to check parking against (overrides fleet.robots)'))
  .addOption(new Option('--json', 'print one JSON document on stdout'))
  .action(async (scenarioPath: string, options: { json?: boolean; robots?: string }) => {
    const { checkCommand } = await import('./commands/check.ts');
    checkCommand(scenarioPath, options.json === true, overridesFrom({ robots: options.robots }));
  });

program
  .command('policies')
  .description('list the dispatch-and-routing policies with their options')
  .addOption(new Option('--json', 'print one JSON document on stdout'))
  .action(async (options: { json?: boolean }) => {
    const { policiesCommand } = await import('./commands/policies.ts');
    policiesCommand(options.json === true);
  });

try {
  await program.parseAsync(process.argv);
} catch (error) {
  process.exitCode = reportFailure(error);
}
