/**
 * Sweeps, shards and merge (DESIGN §8), through the real program: bad plans exit 2 with one
 * line; 1 worker, 2 workers and merged shards give byte-identical runs.jsonl (outside
 * `timing`) and summary.csv; a sweep killed with SIGKILL at random moments resumes to
 * exactly the runs of an uninterrupted one; merge refuses what it must. Also the
 * all-or-nothing `run --out` folder and the memory refusals.
 */
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import seedrandom from 'seedrandom';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { shardFrom } from '../experiments/shard.ts';

const repositoryRoot = path.resolve(import.meta.dirname, '..');
const smallHall = path.join(repositoryRoot, 'test/fixtures/cli-small-hall.yaml');
const temporary = mkdtempSync(path.join(os.tmpdir(), 'fleetwright-sweep-'));
afterAll(() => rmSync(temporary, { recursive: true, force: true }));
let folders = 0;
const fresh = (name = 'case') => {
  const folder = path.join(temporary, `${name}-${++folders}`);
  mkdirSync(folder, { recursive: true });
  return folder;
};

function fleetwright(args: string[], env: NodeJS.ProcessEnv = {}) {
  const result = spawnSync(process.execPath, ['bin/fleetwright.js', ...args], { cwd: repositoryRoot, encoding: 'utf8', timeout: 120_000, env: { ...process.env, ...env } });
  if (result.error) throw result.error;
  return result;
}

/** A plan over the small hall: 2 x 2 points, 3 replications, quarter-hour runs. */
const planText = `scenario: ${JSON.stringify(smallHall)}
vary:
  fleet.robots: [1, 2]
  demand.tasksPerHour: [120, 240]
replications: 3
`;

function writePlan(text = planText): string {
  const file = path.join(fresh('plan'), 'plan.yaml');
  writeFileSync(file, text);
  return file;
}

/** runs.jsonl without each line's timing block: the part that must be byte-identical. */
function linesWithoutTiming(folder: string): string {
  const text = readFileSync(path.join(folder, 'runs.jsonl'), 'utf8');
  return text
    .trimEnd()
    .split('\n')
    .map((line) => {
      const parsed = JSON.parse(line);
      expect(parsed.timing).toBeTypeOf('object');
      delete parsed.timing;
      return JSON.stringify(parsed);
    })
    .join('\n');
}

describe('bad sweep files exit 2 with one clear line', () => {
  const cases: [string, string, RegExp][] = [
    ['unknown path', planText.replace('fleet.robots', 'fleet.robotz'), /plan\.yaml: vary\.fleet\.robotz\[0\] \(line 3\): got unknown key "robotz", expected one of robots/],
    ['unknown top-level path', planText.replace('fleet.robots', 'colour'), /plan\.yaml: vary\.colour\[0\] \(line 3\): got unknown key "colour"/],
    ['empty list', planText.replace('[1, 2]', '[]'), /plan\.yaml: vary\.fleet\.robots \(line 3\): got an empty list, expected at least one value/],
    ['not a list', planText.replace('[1, 2]', '2'), /plan\.yaml: vary\.fleet\.robots \(line 3\): got 2, expected a list of values/],
    ['wrong type', planText.replace('[1, 2]', '[1, two]'), /plan\.yaml: vary\.fleet\.robots\[1\] \(line 3\): got "two", expected a positive integer/],
    ['a value the scenario schema rejects', planText.replace('[1, 2]', '[1, 0]'), /plan\.yaml: vary\.fleet\.robots\[1\] \(line 3\): got 0, expected a positive integer/],
    ['more robots than the floor holds', planText.replace('[1, 2]', '[1, 50]'), /plan\.yaml: vary\.fleet\.robots\[1\] \(line 3\): got 50, expected at most 21/],
    ['a policy option the policy rejects', planText.replace('fleet.robots: [1, 2]', 'policy.maxExpansions: [-3]'), /plan\.yaml: point \{"policy\.maxExpansions":-3,"demand\.tasksPerHour":120\}: policy\.maxExpansions: .*-3/],
    ['an unknown policy', planText.replace('fleet.robots: [1, 2]', 'policy.name: [token-passing, nope]'), /plan\.yaml: .*got "nope", expected one of token-passing/],
    ['unknown key in the plan', `${planText}colour: blue\n`, /plan\.yaml: colour \(line 6\): got unknown key "colour", expected one of scenario, vary, replications/],
    ['bad replications', planText.replace('replications: 3', 'replications: 0'), /plan\.yaml: replications \(line 5\): got 0, expected a whole number of replications/],
    ['missing scenario file', planText.replace(JSON.stringify(smallHall), 'no-such.yaml'), /plan\.yaml: scenario \(line 1\): got "no-such\.yaml", expected a readable scenario file/],
    ['a duplicated value', planText.replace('[1, 2]', '[2, 2]'), /plan\.yaml: vary\.fleet\.robots\[1\] \(line 3\): got 2 twice, expected each value once/],
    ['a path into a value that is not a mapping', planText.replace('fleet.robots', 'layout.width'), /plan\.yaml: vary\.layout\.width\[0\] \(line 3\): got a path through layout/],
    ['invalid YAML', 'vary: [', /plan\.yaml \(line \d\): got invalid YAML/],
  ];
  it.each(cases)('%s', (_name, text, message) => {
    const plan = writePlan(text);
    const out = path.join(path.dirname(plan), 'out');
    const result = fleetwright(['sweep', plan, '--out', out]);
    expect(result.stdout).toBe('');
    expect(result.stderr).toMatch(/^fleetwright: error: [^\n]+\n$/);
    expect(result.stderr).toMatch(message);
    expect(result.status).toBe(2);
    // Nothing ran, nothing was written.
    expect(existsSync(out)).toBe(false);
  });

  it('bad --workers and --shard values exit 2', () => {
    const plan = writePlan();
    const out = path.join(path.dirname(plan), 'out');
    expect(fleetwright(['sweep', plan, '--out', out, '--workers', '0']).stderr).toMatch(/--workers: got "0", expected a whole number/);
    expect(fleetwright(['sweep', plan, '--out', out, '--shard', '3/3']).stderr).toMatch(/--shard: got "3\/3", expected i\/n with 0 <= i < n/);
    expect(fleetwright(['sweep', plan, '--out', out], { JOB_COMPLETION_INDEX: '2' }).stderr).toMatch(/JOB_COMPLETION_INDEX: got "2" with JOB_COMPLETIONS undefined/);
  });
});

describe('the example plan', () => {
  it('examples/sweep-demo.yaml is the README plan: its scenario resolves from the plan file, 3 x 2 x 2 points x 5 replications', async () => {
    const { loadSweepPlan } = await import('../experiments/sweep-plan.ts');
    const plan = loadSweepPlan(path.join(repositoryRoot, 'examples', 'sweep-demo.yaml'));
    expect(plan.scenarioPath).toBe(path.join(repositoryRoot, 'scenarios', 'demo-sortation.yaml'));
    expect(plan.vary.map((v) => [v.path, v.values])).toEqual([
      ['fleet.robots', [10, 20, 30]],
      ['policy.name', ['token-passing', 'flow-batch']],
      ['demand.tasksPerHour', [800, 1200]],
    ]);
    expect([plan.points.length, plan.runs.length]).toEqual([12, 60]);
    expect(readFileSync(path.join(repositoryRoot, 'README.md'), 'utf8')).toContain('examples/sweep-demo.yaml');
  });
});

describe('shards from the scheduler environment', () => {
  it('reads --shard, Slurm array variables (from SLURM_ARRAY_TASK_MIN) and Kubernetes completion indexes', () => {
    expect(shardFrom('2/5', {})).toMatchObject({ index: 2, count: 5 });
    expect(shardFrom(undefined, { SLURM_ARRAY_TASK_ID: '7', SLURM_ARRAY_TASK_COUNT: '16', SLURM_ARRAY_TASK_MIN: '0' })).toMatchObject({ index: 7, count: 16 });
    // sbatch --array=1-16: task ids 1..16 are shards 0..15.
    expect(shardFrom(undefined, { SLURM_ARRAY_TASK_ID: '16', SLURM_ARRAY_TASK_COUNT: '16', SLURM_ARRAY_TASK_MIN: '1' })).toMatchObject({ index: 15, count: 16 });
    expect(shardFrom(undefined, { JOB_COMPLETION_INDEX: '3', JOB_COMPLETIONS: '4' })).toMatchObject({ index: 3, count: 4 });
    expect(shardFrom('0/1', { SLURM_ARRAY_TASK_ID: '7', SLURM_ARRAY_TASK_COUNT: '16' })).toMatchObject({ index: 0, count: 1 });
    expect(shardFrom(undefined, {})).toMatchObject({ index: 0, count: 1 });
    expect(() => shardFrom(undefined, { SLURM_ARRAY_TASK_ID: '16', SLURM_ARRAY_TASK_COUNT: '16' })).toThrow(/SLURM_ARRAY_TASK_ID: got "16"/);
  });
});

describe('one worker, two workers and merged shards give the same results', () => {
  let plan: string;
  let root: string;
  beforeAll(() => {
    plan = writePlan();
    root = path.dirname(plan);
    for (const args of [
      ['--out', path.join(root, 'one'), '--workers', '1'],
      ['--out', path.join(root, 'two'), '--workers', '2'],
      ['--out', path.join(root, 'shard-0'), '--shard', '0/3', '--workers', '2'],
      ['--out', path.join(root, 'shard-1'), '--shard', '1/3', '--workers', '1'],
      ['--out', path.join(root, 'shard-2'), '--shard', '2/3', '--workers', '2'],
    ]) {
      const result = fleetwright(['sweep', plan, ...args]);
      expect(result.status, result.stderr).toBe(0);
    }
    const merged = fleetwright(['merge', path.join(root, 'shard-0'), path.join(root, 'shard-1'), path.join(root, 'shard-2'), '--out', path.join(root, 'merged')]);
    expect(merged.status, merged.stderr).toBe(0);
  });

  it('runs.jsonl (outside timing) and summary.csv are byte-identical', () => {
    const reference = linesWithoutTiming(path.join(root, 'one'));
    expect(reference.split('\n')).toHaveLength(12);
    for (const other of ['two', 'merged']) {
      expect(linesWithoutTiming(path.join(root, other)), other).toBe(reference);
      expect(readFileSync(path.join(root, other, 'summary.csv'), 'utf8'), other).toBe(readFileSync(path.join(root, 'one', 'summary.csv'), 'utf8'));
      expect(readFileSync(path.join(root, other, 'runs.csv'), 'utf8'), other).toBe(readFileSync(path.join(root, 'one', 'runs.csv'), 'utf8'));
    }
  });

  it('each shard holds every 3rd run, lines in plan order, each run once', () => {
    for (let shard = 0; shard < 3; shard++) {
      const lines = readFileSync(path.join(root, `shard-${shard}`, 'runs.jsonl'), 'utf8').trimEnd().split('\n').map((l) => JSON.parse(l));
      expect(lines.map((l) => l.run)).toEqual([0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11].filter((k) => k % 3 === shard));
    }
    const all = readFileSync(path.join(root, 'merged', 'runs.jsonl'), 'utf8').trimEnd().split('\n').map((l) => JSON.parse(l));
    expect(new Set(all.map((l) => l.id)).size).toBe(12);
    expect(all.map((l) => [l.parameters['fleet.robots'], l.parameters['demand.tasksPerHour'], l.replication])).toEqual(
      [1, 2].flatMap((robots) => [120, 240].flatMap((rate) => [0, 1, 2].map((rep) => [robots, rate, rep]))),
    );
  });

  it('summary.csv has one row per point whose interval is the Student-t interval of its replications', () => {
    const rows = readFileSync(path.join(root, 'one', 'summary.csv'), 'utf8').trimEnd().split('\n').map((l) => l.split(','));
    const header = rows[0];
    expect(rows).toHaveLength(1 + 4);
    const column = (name: string) => header.indexOf(name);
    const lines = readFileSync(path.join(root, 'one', 'runs.jsonl'), 'utf8').trimEnd().split('\n').map((l) => JSON.parse(l));
    const first = lines.filter((l) => l.point === 0).map((l) => l.summary.throughputPerHour.mean as number);
    const mean = first.reduce((s, v) => s + v, 0) / 3;
    const sd = Math.sqrt(first.reduce((s, v) => s + (v - mean) ** 2, 0) / 2);
    // Student t, 2 degrees of freedom, 95%: 4.303 (NIST/SEMATECH e-Handbook, table 1.3.6.7.2).
    expect(Number(rows[1][column('throughputPerHourMean')])).toBeCloseTo(mean, 5);
    expect(Number(rows[1][column('throughputPerHourHalfWidth')])).toBeCloseTo((4.303 * sd) / Math.sqrt(3), 1);
    expect(rows[1][column('replications')]).toBe('3');
  });

  it('summary.csv intervals are clipped to what each figure can take, as in the run summary', () => {
    const rows: Record<string, string>[] = parse(readFileSync(path.join(root, 'one', 'summary.csv'), 'utf8'), { columns: true });
    const lines = readFileSync(path.join(root, 'one', 'runs.jsonl'), 'utf8').trimEnd().split('\n').map((l) => JSON.parse(l));
    // Shares lie in [0, 1]; counts, rates and times at or above 0 (README "What the outputs mean").
    const fractions = ['stationStarvedFraction', 'stationIdleFraction', 'robotParkedFraction', 'robotWaitingFraction', 'parkedWhileTasksOpenFraction'];
    const nonNegative = ['throughputPerHour', 'tasksInSystem', 'busyRobots', 'deadlocks', 'warmupSeconds'];
    // Where each figure sits in a run line's summary (the run --json document).
    const pick: Record<string, (summary: any) => number> = {
      robotParkedFraction: (summary) => summary.robotTime.parked.mean,
      robotWaitingFraction: (summary) => summary.robotTime.waiting.mean,
      warmupSeconds: (summary) => summary.warmupSeconds,
    };
    for (const name of [...fractions, ...nonNegative]) pick[name] ??= (summary) => summary[name].mean;
    let clipped = 0;
    for (const row of rows) {
      expect(row.stable).toBe('true');
      for (const [name, upper] of [...fractions.map((f) => [f, 1] as const), ...nonNegative.map((f) => [f, Infinity] as const)]) {
        const values = lines.filter((l) => l.point === Number(row.point)).map((l) => pick[name](l.summary));
        expect(values).toHaveLength(3);
        const mean = values.reduce((s, v) => s + v, 0) / 3;
        const sd = Math.sqrt(values.reduce((s, v) => s + (v - mean) ** 2, 0) / 2);
        // Student t, 2 degrees of freedom, 95%: 4.303 (NIST/SEMATECH e-Handbook, table 1.3.6.7.2).
        const halfWidth = (4.303 * sd) / Math.sqrt(3);
        if (mean - halfWidth < -1e-3 || mean + halfWidth > upper + 1e-3) clipped++;
        expect(Number(row[`${name}Mean`]), `${name} at point ${row.point}`).toBeCloseTo(mean, 4);
        expect(Number(row[`${name}HalfWidth`]), `${name} at point ${row.point}`).toBeCloseTo(halfWidth, 1);
        expect(Number(row[`${name}Low`]), `${name} at point ${row.point}`).toBeCloseTo(Math.max(0, mean - halfWidth), 1);
        expect(Number(row[`${name}High`]), `${name} at point ${row.point}`).toBeCloseTo(Math.min(upper, mean + halfWidth), 1);
      }
      // No column other than the backlog trend (which may fall) goes below 0.
      for (const [column, value] of Object.entries(row)) if (column.endsWith('Low') && column !== 'backlogGrowthPerHourLow' && value !== '') expect(Number(value), column).toBeGreaterThanOrEqual(0);
    }
    // The plan is chosen so that plain Student-t ends leave the range somewhere (else this checks nothing).
    expect(clipped).toBeGreaterThan(0);
  });

  it('context.json names the command, the plan and scenario hashes and the version; shards and the merge agree', () => {
    const context = (folder: string) => JSON.parse(readFileSync(path.join(root, folder, 'context.json'), 'utf8'));
    const one = context('one');
    const planDocument = JSON.parse(readFileSync(path.join(root, 'one', 'plan.json'), 'utf8'));
    expect(one.command).toBe(`fleetwright sweep ${plan} --out ${path.join(root, 'one')} --workers 1`);
    expect(one.planSha256).toBe(planDocument.planHash);
    expect(one.planSha256).toMatch(/^[0-9a-f]{64}$/);
    expect(one.sweepFile).toBe('plan.yaml');
    expect(one.vary).toEqual(['fleet.robots', 'demand.tasksPerHour']);
    expect([one.replications, one.runs, one.shard]).toEqual([3, 12, null]);
    expect(one.fleetwrightVersion).toBe(JSON.parse(readFileSync(path.join(repositoryRoot, 'package.json'), 'utf8')).version);
    // The scenario hash is the scenario file's own, as `run --out` hashes the same file without overrides.
    const run = path.join(fresh('context-run'), 'out');
    expect(fleetwright(['run', smallHall, '--out', run]).status).toBe(0);
    expect(one.scenarioSha256).toBe(JSON.parse(readFileSync(path.join(run, 'context.json'), 'utf8')).scenarioSha256);
    // Every shard writes the same context apart from its command and shard; the merge keeps it, with its own command.
    const { command: _c, shard: _s, ...shared } = one;
    for (let shard = 0; shard < 3; shard++) {
      const { command, shard: which, ...rest } = context(`shard-${shard}`);
      expect(rest).toEqual(shared);
      expect(which).toEqual({ index: shard, count: 3 });
      expect(command).toContain(`--shard ${shard}/3`);
    }
    const merged = context('merged');
    const { command, shard, shardCommands, ...rest } = merged;
    expect(rest).toEqual(shared);
    expect(shard).toBeNull();
    expect(command).toBe(`fleetwright merge ${path.join(root, 'shard-0')} ${path.join(root, 'shard-1')} ${path.join(root, 'shard-2')} --out ${path.join(root, 'merged')}`);
    expect(shardCommands).toEqual([0, 1, 2].map((i) => context(`shard-${i}`).command));
    // Nothing in it depends on the clock: a second run of the same command writes the same bytes.
    expect(readFileSync(path.join(root, 'two', 'context.json'), 'utf8')).toBe(readFileSync(path.join(root, 'one', 'context.json'), 'utf8').replace('--workers 1', '--workers 2').replace(`${path.sep}one`, `${path.sep}two`));
  });

  it('rerunning a finished sweep runs nothing and changes nothing', () => {
    const before = readFileSync(path.join(root, 'one', 'runs.jsonl'), 'utf8');
    const context = readFileSync(path.join(root, 'one', 'context.json'), 'utf8');
    const result = fleetwright(['sweep', plan, '--out', path.join(root, 'one'), '--workers', '1']);
    expect(result.status, result.stderr).toBe(0);
    expect(result.stderr).toMatch(/12 runs \(0 run now, 12 already done\)/);
    expect(readFileSync(path.join(root, 'one', 'runs.jsonl'), 'utf8')).toBe(before);
    expect(readFileSync(path.join(root, 'one', 'context.json'), 'utf8')).toBe(context);
  });

  it('a changed plan in an old folder is refused, and the folder is left as it was', () => {
    const changed = path.join(root, 'changed.yaml');
    writeFileSync(changed, planText.replace('[120, 240]', '[120, 360]'));
    const before = readFileSync(path.join(root, 'one', 'runs.jsonl'), 'utf8');
    const result = fleetwright(['sweep', changed, '--out', path.join(root, 'one')]);
    expect(result.status).toBe(2);
    expect(result.stderr).toMatch(/^fleetwright: error: --out: ".*one" holds results of another sweep plan \(same shape, but other values or a changed scenario/);
    expect(readFileSync(path.join(root, 'one', 'runs.jsonl'), 'utf8')).toBe(before);
  });

  it('merge refuses shards of different plans, a missing shard and a doubled one; --partial takes what there is', () => {
    const s = (i: number) => path.join(root, `shard-${i}`);
    const missing = fleetwright(['merge', s(0), s(1), '--out', path.join(root, 'm1')]);
    expect(missing.status).toBe(2);
    expect(missing.stderr).toMatch(/merge: 4 of 12 runs are in none of the folders \(first: run 2, .*replication 2; shards given: 0\/3, 1\/3\)/);
    const doubled = fleetwright(['merge', s(0), s(1), s(2), s(1), '--out', path.join(root, 'm2')]);
    expect(doubled.status).toBe(2);
    expect(doubled.stderr).toMatch(/merge: run 1 \(id [0-9a-f]{16}\) is in both ".*shard-1" and ".*shard-1"/);
    const otherPlan = path.join(root, 'other.yaml');
    writeFileSync(otherPlan, planText.replace('replications: 3', 'replications: 2'));
    expect(fleetwright(['sweep', otherPlan, '--out', path.join(root, 'other'), '--workers', '1']).status).toBe(0);
    const different = fleetwright(['merge', s(0), path.join(root, 'other'), '--out', path.join(root, 'm3')]);
    expect(different.status).toBe(2);
    expect(different.stderr).toMatch(/merge: ".*other" holds another sweep plan than ".*shard-0"/);
    for (const folder of ['m1', 'm2', 'm3']) expect(existsSync(path.join(root, folder))).toBe(false);

    const partial = fleetwright(['merge', s(0), s(1), s(1), '--out', path.join(root, 'partial'), '--partial']);
    expect(partial.status, partial.stderr).toBe(0);
    expect(partial.stderr).toMatch(/8 runs from 3 folders \(4 missing, 4 doubled, first kept\)/);
    const kept = readFileSync(path.join(root, 'partial', 'runs.jsonl'), 'utf8').trimEnd().split('\n').map((l) => JSON.parse(l).run);
    expect(kept).toEqual([0, 1, 3, 4, 6, 7, 9, 10]);
  });
});

describe('an unstable point in summary.csv', () => {
  it('is flagged, and its lead times are lower bounds without an interval; a stable point keeps its interval', () => {
    // One robot on the small hall delivers about 190 tasks/h (test/size.test.ts, hand formula): 900 offered is an overload, 60 is not.
    const plan = writePlan(planText.replace('fleet.robots: [1, 2]', 'fleet.robots: [1]').replace('[120, 240]', '[60, 900]\n  run.hours: [0.5]'));
    const out = path.join(path.dirname(plan), 'out');
    const result = fleetwright(['sweep', plan, '--out', out, '--workers', '2']);
    expect(result.status, result.stderr).toBe(0);
    const rows: Record<string, string>[] = parse(readFileSync(path.join(out, 'summary.csv'), 'utf8'), { columns: true });
    const lines = readFileSync(path.join(out, 'runs.jsonl'), 'utf8').trimEnd().split('\n').map((l) => JSON.parse(l));
    const [light, heavy] = rows;
    expect([light['demand.tasksPerHour'], heavy['demand.tasksPerHour']]).toEqual(['60', '900']);
    // Every replication of the overload is unstable on its own, so the point is (reports/stability.ts: "or when every replication on its own is").
    expect(lines.filter((l) => l.point === 1).map((l) => l.summary.stable)).toEqual([false, false, false]);
    expect([heavy.stable, heavy.stabilityVerdict, heavy.stableShare, heavy.leadTimeIsLowerBound]).toEqual(['false', 'unstable', '0', 'true']);
    const leads = lines.filter((l) => l.point === 1).map((l) => l.summary.leadTimeSeconds.mean as number);
    expect(Number(heavy.leadTimeSecondsMean)).toBeCloseTo(leads.reduce((s, v) => s + v, 0) / 3, 4);
    for (const figure of ['leadTimeSeconds', 'leadTimeP50Seconds', 'leadTimeP95Seconds']) expect([heavy[`${figure}HalfWidth`], heavy[`${figure}Low`], heavy[`${figure}High`]]).toEqual(['', '', '']);
    // Throughput of the overload still has its interval (it is what one robot delivers), and the backlog grows.
    expect(Number(heavy.throughputPerHourHalfWidth)).toBeGreaterThan(0);
    expect(Number(heavy.backlogGrowthPerHourLow)).toBeGreaterThan(0);
    expect([light.stable, light.leadTimeIsLowerBound]).toEqual(['true', 'false']);
    expect(Number(light.leadTimeSecondsHalfWidth)).toBeGreaterThan(0);
  });
});

describe('kill -9 at random moments, then resume', () => {
  it('the final runs.jsonl holds exactly the runs of an uninterrupted sweep, none lost, none doubled', async () => {
    // 2 points x 8 replications of a 12-hour run: long enough to be killed mid-sweep.
    const plan = writePlan(planText.replace('demand.tasksPerHour: [120, 240]', 'run.hours: [12]').replace('replications: 3', 'replications: 8'));
    const root = path.dirname(plan);
    const reference = path.join(root, 'reference');
    expect(fleetwright(['sweep', plan, '--out', reference, '--workers', '2']).status).toBe(0);

    const out = path.join(root, 'killed');
    const journal = path.join(out, 'runs.jsonl');
    const completeIds = (): string[] => {
      if (!existsSync(journal)) return [];
      const text = readFileSync(journal, 'utf8');
      return text.slice(0, text.lastIndexOf('\n') + 1).split('\n').filter(Boolean).map((l) => JSON.parse(l).id);
    };
    const rng = seedrandom('kill-9');
    // Kill points: once during start-up, then each time a few more runs are in the journal,
    // plus a random few milliseconds (so that some kills land in the middle of a write).
    const killAt = [0, 3, 7, 11];
    for (const after of killAt) {
      const child = spawn(process.execPath, ['bin/fleetwright.js', 'sweep', plan, '--out', out, '--workers', '2'], { cwd: repositoryRoot, stdio: 'ignore' });
      const started = Date.now();
      while (after > 0 && completeIds().length < after && Date.now() - started < 60_000) await new Promise((resolve) => setTimeout(resolve, 5));
      await new Promise((resolve) => setTimeout(resolve, after === 0 ? 100 + rng() * 300 : rng() * 40));
      child.kill('SIGKILL');
      await new Promise((resolve) => child.once('exit', resolve));
      const ids = completeIds();
      // No run twice in the journal, whatever the moment of the kill; and work was interrupted.
      expect(new Set(ids).size).toBe(ids.length);
      expect(ids.length).toBeLessThan(16);
    }
    const resumed = fleetwright(['sweep', plan, '--out', out, '--workers', '2']);
    expect(resumed.status, resumed.stderr).toBe(0);
    expect(linesWithoutTiming(out)).toBe(linesWithoutTiming(reference));
    expect(readFileSync(path.join(out, 'summary.csv'), 'utf8')).toBe(readFileSync(path.join(reference, 'summary.csv'), 'utf8'));
    expect(readdirSync(out).filter((name) => name.startsWith('.fleetwright-tmp'))).toEqual([]);
  });
});

describe('result folders are all-or-nothing (run --out)', () => {
  it('a folder where stations.csv should go: exit 2 naming it, the other files untouched', () => {
    const out = path.join(fresh('run-out'), 'results');
    const first = fleetwright(['run', smallHall, '--out', out, '--json']);
    expect(first.status, first.stderr).toBe(0);
    const written = readdirSync(out).sort();
    expect(written).toEqual(['cells.csv', 'context.json', 'lead-time-split.csv', 'lead-times.csv', 'replications.csv', 'stations.csv', 'summary.json', 'throughput.csv']);
    const before = Object.fromEntries(written.filter((n) => n !== 'stations.csv').map((n) => [n, readFileSync(path.join(out, n), 'utf8')]));
    rmSync(path.join(out, 'stations.csv'));
    mkdirSync(path.join(out, 'stations.csv'));
    const result = fleetwright(['run', smallHall, '--out', out, '--json', '--seed', '9']);
    expect(result.status).toBe(2);
    expect(result.stdout).toBe('');
    expect(result.stderr).toMatch(/^fleetwright: error: --out: ".*results\/stations\.csv" is a folder, expected a file path fleetwright may replace \(nothing was written\)\n$/);
    for (const [name, text] of Object.entries(before)) expect(readFileSync(path.join(out, name), 'utf8'), name).toBe(text);
    expect(readdirSync(out).sort()).toEqual(written);
  });
});

describe('runs that could not fit in memory are refused before they start', () => {
  it('--rate 1e9 names the task limit; a sample longer than the run names run.sampleSeconds', () => {
    const rate = fleetwright(['run', smallHall, '--rate', '1e9']);
    expect(rate.status).toBe(2);
    expect(rate.stderr).toMatch(/--rate: got 1000000000, expected a rate that releases at most 10,000,000 tasks per replication \(the memory limit/);
    const folder = fresh('sample');
    const scenario = path.join(folder, 'scenario.yaml');
    writeFileSync(scenario, readFileSync(smallHall, 'utf8').replace('seed: 3', 'seed: 3, sampleSeconds: 7200'));
    const sample = fleetwright(['run', scenario]);
    expect(sample.status).toBe(2);
    expect(sample.stderr).toMatch(/run\.sampleSeconds \(line \d+\): got 7200, expected a number of seconds > 0 and at most the run's length \(run\.hours 0\.25 = 900 s\)/);
  });
});

describe('the run journal', () => {
  it('drops a last line cut short by a kill and indexes the complete ones', async () => {
    const { RunJournal } = await import('../experiments/run-journal.ts');
    const file = path.join(fresh('journal'), 'runs.jsonl');
    writeFileSync(file, '{"id":"a","x":1}\n{"id":"b","x":2}\n{"id":"c","x"');
    const journal = new RunJournal(file, (id) => ['a', 'b', 'c'].includes(id));
    expect([...journal.done.keys()]).toEqual(['a', 'b']);
    expect(journal.droppedBytes).toBe('{"id":"c","x"'.length);
    journal.append('c', '{"id":"c","x":3}');
    journal.close();
    expect(readFileSync(file, 'utf8')).toBe('{"id":"a","x":1}\n{"id":"b","x":2}\n{"id":"c","x":3}\n');
    // A line of another plan is refused, naming the line.
    expect(() => new RunJournal(file, (id) => id !== 'b')).toThrow(/runs\.jsonl: line 2 holds run "b", which is not a run of this sweep plan/);
  });
});

describe('sweep CSV cells stay text in a spreadsheet', () => {
  it('writes a cell x:y as xX:yY, also as a key of weights written as JSON', async () => {
    const { spreadsheetValue } = await import('../reports/sweep-tables.ts');
    // Spreadsheet programs read "17:10" as a clock time (common practice).
    expect(spreadsheetValue('17:10')).toBe('x17:y10');
    expect(spreadsheetValue({ weights: { '7:1': 3, '7:2': 1 } })).toBe('{"weights":{"x7:y1":3,"x7:y2":1}}');
    expect(spreadsheetValue('token-passing')).toBe('token-passing');
    expect(spreadsheetValue(12)).toBe(12);
  });
});

describe('replication records are plain data', () => {
  it('a record survives structured cloning (worker threads) and JSON with every metric', async () => {
    const { runReplications } = await import('../experiments/replications.ts');
    const { loadScenarioFile } = await import('../scenarios/load.ts');
    const [record] = runReplications(loadScenarioFile(smallHall, { replications: 1 }));
    expect(Object.getPrototypeOf(record.metrics)).toBe(Object.prototype);
    const cloned = structuredClone(record);
    expect(cloned.metrics.leadTicks.length).toBe(record.metrics.leadTicks.length);
    expect(cloned.metrics.leadTicks.length).toBeGreaterThan(0);
    expect(Array.from(cloned.metrics.deliveries)).toEqual(Array.from(record.metrics.deliveries));
    expect(record.recordVersion).toBe(1);
    expect(Object.keys(record.timing).sort()).toEqual(['planningSeconds', 'wallSeconds']);
    expect(record).not.toHaveProperty('wallSeconds');
  });
});
