/**
 * `npm run bench`: engine and policy throughput in agent-steps per wall second (an
 * agent-step is one robot over one simulated tick, whether or not it moved: robots x
 * simulated ticks), beside the real-time factor (simulated seconds per wall second) and the
 * tasks delivered, the planning share of wall time, the planners' search against the
 * `pathfinding` library and on token passing's workload (bench/search.ts), the assignment
 * solver against munkres-js on the same inputs, and peak memory against run length. Never
 * part of `npm test`.
 *
 *   npm run bench                 table on stdout
 *   npm run bench -- --json       one JSON array of rows
 *   npm run bench -- --quick      skip the slow rows (munkres-js at 1000, pibt at 1,000 and 10,000 robots, the replay viewer, memory, the 24 h sweep)
 *   npm run bench -- --only NAME  only rows whose name starts with NAME (engine, engine-steady, policy, pibt, replay, search, assignment, memory, sweep, size)
 *   npm run bench -- --robots N   engine and policy rows: only the rows with N robots
 *   npm run bench -- --policy P   policy rows: only policy P's rows
 *
 * `npm run bench` starts bench/start.js, which runs this file compiled (build/build.js) when
 * the build is current, else through tsx; every row says which in `loader`.
 */
import { loadScenarioFile } from '../scenarios/load.ts';
import { prepareSetup } from '../experiments/replications.ts';
import { runReplication } from '../sim/engine.ts';
import { policies } from '../policies/registry.ts';
import { quantileSorted } from '../reports/stats/quantile-sorted.ts';
import type { Scenario } from '../sim/model.ts';
import { SpaceTimeAStar, type SearchRequest } from '../sim/space-time-astar.ts';

const args = process.argv.slice(2);
const json = args.includes('--json');
const quick = args.includes('--quick');
const onlyIndex = args.indexOf('--only');
const only = onlyIndex >= 0 ? args[onlyIndex + 1] : null;
const wanted = (name: string) => only === null || name.startsWith(only);
const robotsIndex = args.indexOf('--robots');
const onlyRobots = robotsIndex >= 0 ? Number(args[robotsIndex + 1]) : null;
const fleetWanted = (robots: number) => onlyRobots === null || robots === onlyRobots;
const policyIndex = args.indexOf('--policy');
const onlyPolicy = policyIndex >= 0 ? args[policyIndex + 1] : null;

type Row = Record<string, string | number | boolean | null>;
const rows: Row[] = [];
/** Progress on stderr (the JSON document stays alone on stdout). */
const log = (text: string) => {
  process.stderr.write(`${text}\n`);
};

function measure(name: string, scenario: Scenario): Row {
  const setup = prepareSetup(scenario);
  const cpu = process.cpuUsage();
  const record = runReplication(setup, 0);
  const cpuUsed = process.cpuUsage(cpu);
  const row: Row = {
    name,
    policy: scenario.policy.name,
    robots: scenario.fleet.robots,
    simulatedHours: scenario.run.hours,
    agentSteps: record.agentSteps,
    wallSeconds: Number(record.timing.wallSeconds.toFixed(3)),
    // CPU seconds of this process over the run: on a shared machine wall time grows with
    // other processes' load, CPU time much less.
    cpuSeconds: Number(((cpuUsed.user + cpuUsed.system) / 1e6).toFixed(3)),
    agentStepsPerSecond: Math.round(record.agentSteps / record.timing.wallSeconds),
    planningShare: Number((record.timing.planningSeconds / record.timing.wallSeconds).toFixed(3)),
    realTimeFactor: Math.round((scenario.run.hours * 3600) / record.timing.wallSeconds),
    delivered: record.delivered,
    // Wall time per delivered task: the same work in the units a sizing run pays for.
    wallMsPerDelivered: record.delivered > 0 ? Number(((record.timing.wallSeconds * 1000) / record.delivered).toFixed(3)) : null,
    collisions: record.collisions,
    // Robots the planned policies rest on rest cells beyond the parking spots (sim/rest-cells.ts).
    restCells: record.policyCounters.restCells ?? 0,
    // Space-time searches of the planned policies (token passing, flow-batch), null for the others.
    searches: record.policyCounters.searches ?? null,
  };
  log(`${name} ${scenario.policy.name} ${scenario.fleet.robots} robots: ${row.agentStepsPerSecond} agent-steps/s`);
  return row;
}

/**
 * The same replication run `runs` times in this process: the first runs pay for the JIT
 * compiling the engine, policy and search, so a single row is part warm-up. A sizing or a
 * sweep runs dozens of replications per worker, so the later runs are what it pays per
 * run: the row gives each run's wall seconds and agent-steps per second over the median of
 * all runs but the first. Every run must deliver the same (same scenario, same seed).
 */
function steady(scenario: Scenario, runs: number): Row {
  const setup = prepareSetup(scenario);
  const wall: number[] = [];
  let delivered = -1;
  let agentSteps = 0;
  for (let i = 0; i < runs; i++) {
    const record = runReplication(setup, 0);
    if (delivered >= 0 && record.delivered !== delivered) throw new Error(`engine-steady: run ${i + 1} delivered ${record.delivered}, run 1 ${delivered}`);
    delivered = record.delivered;
    agentSteps = record.agentSteps;
    wall.push(record.timing.wallSeconds);
  }
  const median = quantileSorted(
    wall.slice(1).sort((a, b) => a - b),
    0.5,
  );
  const split = searchSplit(setup, delivered);
  const row: Row = {
    name: 'engine-steady',
    policy: scenario.policy.name,
    robots: scenario.fleet.robots,
    simulatedHours: scenario.run.hours,
    runs,
    wallSecondsPerRun: wall.map((w) => w.toFixed(3)).join(' '),
    wallSeconds: Number(median.toFixed(3)),
    agentStepsPerSecond: Math.round(agentSteps / median),
    realTimeFactor: Math.round((scenario.run.hours * 3600) / median),
    delivered,
    wallMsPerDelivered: delivered > 0 ? Number(((median * 1000) / delivered).toFixed(3)) : null,
    planningShare: Number(split.planningShare.toFixed(3)),
    searchShare: Number(split.searchShare.toFixed(3)),
    agentStepsPerSecondWithoutSearch: Math.round(agentSteps / (split.wallSeconds - split.searchSeconds)),
  };
  log(`engine-steady ${scenario.policy.name} ${scenario.fleet.robots} robots: ${row.agentStepsPerSecond} agent-steps/s (runs 2-${runs}, median)`);
  return row;
}

/**
 * Where a warm run's wall time goes: one more run of the same replication with the
 * space-time search timed (`SpaceTimeAStar.find` wrapped for this run only: two clock reads
 * per search, well under 1% of the run). Its planning share (the policy's steps) and search
 * share of wall time say what a faster search alone could give the row: agent-steps per
 * second over the wall time less the search's is the row with a search that costs nothing.
 */
function searchSplit(setup: ReturnType<typeof prepareSetup>, delivered: number): { wallSeconds: number; searchSeconds: number; planningShare: number; searchShare: number } {
  const prototype = SpaceTimeAStar.prototype as unknown as { find(request: SearchRequest): number };
  const find = prototype.find;
  let searchMs = 0;
  prototype.find = function timedFind(this: SpaceTimeAStar, request: SearchRequest): number {
    const start = performance.now();
    const length = find.call(this, request);
    searchMs += performance.now() - start;
    return length;
  };
  let record: ReturnType<typeof runReplication>;
  try {
    record = runReplication(setup, 0);
  } finally {
    prototype.find = find;
  }
  if (record.delivered !== delivered) throw new Error(`engine-steady: the timed run delivered ${record.delivered}, run 1 ${delivered}`);
  const wallSeconds = record.timing.wallSeconds;
  return { wallSeconds, searchSeconds: searchMs / 1000, planningShare: record.timing.planningSeconds / wallSeconds, searchShare: searchMs / 1000 / wallSeconds };
}

/** The demo hall under saturated demand: every robot always has work, the hardest case for planners. */
function demo(policy: string, robots: number, hours: number): Scenario {
  const scenario = loadScenarioFile('scenarios/demo-sortation.yaml', { policy, robots, hours, replications: 1 });
  return { ...scenario, demand: { kind: 'saturated', mode: 'delivery', pickups: { kind: 'uniform' }, drops: { skew: 0.6, kind: 'zipf' } } };
}

/** Which code ran: `build` (compiled by build/build.js) or `tsx` (the sources through the loader). */
const loader = process.env.FLEETWRIGHT_BENCH_LOADER ?? 'tsx';

async function main(): Promise<void> {
  if (wanted('engine')) {
    for (const robots of [10, 20, 40]) if (fleetWanted(robots)) rows.push(measure('engine', demo('token-passing', robots, 8)));
  }
  if (wanted('engine-steady') && fleetWanted(40)) rows.push(steady(demo('token-passing', 40, 8), 4));
  if (wanted('policy')) {
    for (const factory of policies) {
      if (onlyPolicy !== null && factory.name !== onlyPolicy) continue;
      for (const robots of [40, 100, 200]) {
        if (!fleetWanted(robots)) continue;
        // The demo hall has 38 parking spots: robots beyond them start on rest cells, where
        // token passing and flow-batch also rest them (pibt and greedy-reactive do not use them).
        rows.push(measure('policy', demo(factory.name, robots, 2)));
      }
    }
  }
  if (wanted('pibt') && !quick && policies.some((p) => p.name === 'pibt')) {
    const { benchPibt, benchPibt10k } = await import('./pibt.ts');
    rows.push(benchPibt() as unknown as Row);
    log(`pibt 1,000 robots: ${rows[rows.length - 1].realTimeFactor}x real time`);
    rows.push(benchPibt10k() as unknown as Row);
    log(`pibt-10k 10,000 robots: ${rows[rows.length - 1].realTimeFactor}x real time`);
  }
  if (wanted('replay') && !quick) {
    const { benchReplay } = await import('./replay.ts');
    rows.push((await benchReplay()) as unknown as Row);
  }
  if (wanted('search')) {
    const { benchSearch } = await import('./search.ts');
    for (const row of benchSearch(quick)) {
      rows.push(row);
      log(`${row.name} ${JSON.stringify(row)}`);
    }
  }
  if (wanted('memory') && !quick && policies.some((p) => p.name === 'pibt')) {
    const { benchMemory } = await import('./memory.ts');
    for (const row of benchMemory()) {
      log(`memory pibt ${row.robots} robots ${row.simulatedHours} h: peak RSS ${row.peakRssMb} MB`);
      rows.push(row as unknown as Row);
    }
  }
  if (wanted('assignment')) {
    const { benchAssignment } = await import('./assignment.ts');
    for (const row of await benchAssignment(quick ? [200, 500] : [200, 500, 1000])) rows.push(row as unknown as Row);
  }

  if (wanted('sweep')) {
    const { benchSweep } = await import('./sweep.ts');
    // --quick: only the 4 h runs (the 24 h plan takes about 40 s on two cores).
    for (const row of await benchSweep([1, 2], quick ? [4] : [4, 24])) {
      log(`${row.name} ${row.hoursPerRun} h runs, ${row.name === 'sweep' ? `${row.workers} worker${row.workers === 1 ? '' : 's'}` : `${row.processes} processes`}: ${row.runsPerMinute} runs/min`);
      rows.push(row as Row);
    }
  }
  if (wanted('size')) {
    const { benchSize } = await import('./sweep.ts');
    const row = await benchSize();
    log(`size: demo at ${row.target} tasks/h in ${row.wallSeconds} s`);
    rows.push(row as Row);
  }

  for (const row of rows) row.loader = loader;
  if (json) {
    process.stdout.write(`${JSON.stringify(rows, null, 2)}\n`);
  } else {
    const columns = [...new Set(rows.flatMap((r) => Object.keys(r)))];
    const table = [columns, ...rows.map((r) => columns.map((c) => (r[c] === undefined ? '' : String(r[c]))))];
    const widths = columns.map((_, i) => Math.max(...table.map((r) => r[i].length)));
    for (const r of table) process.stdout.write(`${r.map((v, i) => v.padStart(widths[i])).join('  ')}\n`);
  }
}

const memoryChildIndex = args.indexOf('--memory-child');
const sweepChildIndex = args.indexOf('--sweep-child');
if (sweepChildIndex >= 0) {
  // A child of the sweep-processes row (bench/sweep.ts): one shard of a sweep plan on one worker.
  const { sweepChild } = await import('./sweep.ts');
  await sweepChild(args[sweepChildIndex + 1], args[sweepChildIndex + 2], args[sweepChildIndex + 3]);
} else if (memoryChildIndex >= 0) {
  // A child of the memory rows (bench/memory.ts): one pibt run in a fresh process.
  const { memoryChild } = await import('./memory.ts');
  await memoryChild(Number(args[memoryChildIndex + 1]));
} else {
  await main();
}
