/**
 * A sweep as a real Slurm array job (single-node cluster from Debian's slurm-wlm and
 * munge, started by .ci/start-slurm.sh; see DEVELOPERS.md): the repository's example
 * sbatch script submitted with `sbatch --wait --array=0-3`, its shards merged, equals the
 * same sweep run locally (runs.jsonl outside `timing`, and summary.csv).
 *
 * Runs when Slurm answers; CI sets FLEETWRIGHT_SLURM=1 after starting it, and then a
 * missing cluster fails the test instead of skipping it.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';

const repositoryRoot = path.resolve(import.meta.dirname, '..');
const required = process.env.FLEETWRIGHT_SLURM === '1';
const available = spawnSync('sinfo', ['-h', '-o', '%t'], { encoding: 'utf8' }).status === 0;
const temporary = mkdtempSync(path.join(os.tmpdir(), 'fleetwright-slurm-'));
afterAll(() => rmSync(temporary, { recursive: true, force: true }));

function withoutTiming(file: string): string {
  return readFileSync(file, 'utf8')
    .trimEnd()
    .split('\n')
    .map((line) => {
      const parsed = JSON.parse(line);
      delete parsed.timing;
      return JSON.stringify(parsed);
    })
    .join('\n');
}

describe.skipIf(!available && !required)('Slurm array job', () => {
  it('a sweep submitted as sbatch --array=0-3, merged, equals the same sweep run locally', () => {
    expect(available, 'FLEETWRIGHT_SLURM=1 but sinfo does not answer: run .ci/start-slurm.sh').toBe(true);
    const plan = path.join(temporary, 'plan.yaml');
    writeFileSync(
      plan,
      `scenario: ${JSON.stringify(path.join(repositoryRoot, 'test/fixtures/cli-small-hall.yaml'))}\nvary:\n  fleet.robots: [1, 2]\n  demand.tasksPerHour: [120, 240, 360]\nreplications: 3\n`,
    );
    const results = path.join(temporary, 'results');
    const submitted = spawnSync(
      'sbatch',
      ['--wait', '--array=0-3', '--cpus-per-task=1', `--output=${path.join(temporary, 'slurm-%A_%a.out')}`, '--export=ALL', path.join(repositoryRoot, 'examples/slurm/sweep-array.sbatch')],
      {
        cwd: repositoryRoot,
        encoding: 'utf8',
        timeout: 300_000,
        env: { ...process.env, PLAN: plan, RESULTS: results, FLEETWRIGHT: `${process.execPath} ${path.join(repositoryRoot, 'bin/fleetwright.js')}` },
      },
    );
    const logs = readdirSync(temporary).filter((n) => n.startsWith('slurm-')).map((n) => readFileSync(path.join(temporary, n), 'utf8')).join('\n');
    expect(submitted.status, `${submitted.stdout}${submitted.stderr}${logs}`).toBe(0);
    expect(readdirSync(results).sort()).toEqual(['shard-0', 'shard-1', 'shard-2', 'shard-3']);
    // Each task ran its own shard of 4, as Slurm numbered it.
    for (let shard = 0; shard < 4; shard++) {
      expect(JSON.parse(readFileSync(path.join(results, `shard-${shard}`, 'plan.json'), 'utf8')).shard).toEqual({ index: shard, count: 4 });
    }

    const fleetwright = (args: string[]) => spawnSync(process.execPath, ['bin/fleetwright.js', ...args], { cwd: repositoryRoot, encoding: 'utf8', timeout: 120_000 });
    const merged = fleetwright(['merge', ...[0, 1, 2, 3].map((i) => path.join(results, `shard-${i}`)), '--out', path.join(results, 'all')]);
    expect(merged.status, merged.stderr).toBe(0);
    const local = fleetwright(['sweep', plan, '--out', path.join(temporary, 'local'), '--workers', '2']);
    expect(local.status, local.stderr).toBe(0);

    expect(withoutTiming(path.join(results, 'all', 'runs.jsonl'))).toBe(withoutTiming(path.join(temporary, 'local', 'runs.jsonl')));
    expect(withoutTiming(path.join(results, 'all', 'runs.jsonl')).split('\n')).toHaveLength(18);
    expect(readFileSync(path.join(results, 'all', 'summary.csv'), 'utf8')).toBe(readFileSync(path.join(temporary, 'local', 'summary.csv'), 'utf8'));
  });
});

describe('the cluster examples in the repository', () => {
  it('the Kubernetes Indexed Job sets JOB_COMPLETIONS to its completions, and each pod runs its shard into its own folder', async () => {
    const { parse } = await import('yaml');
    const job = parse(readFileSync(path.join(repositoryRoot, 'examples/kubernetes/sweep-indexed-job.yaml'), 'utf8'));
    expect(job.kind).toBe('Job');
    expect(job.spec.completionMode).toBe('Indexed');
    const container = job.spec.template.spec.containers[0];
    const completions = container.env.find((e: { name: string }) => e.name === 'JOB_COMPLETIONS');
    expect(Number(completions.value)).toBe(job.spec.completions);
    expect(container.args.join(' ')).toMatch(/fleetwright sweep plan\.yaml --out "shard-\$JOB_COMPLETION_INDEX"/);
  });

  it('the sbatch script is a 16-task array whose tasks write shard-$SLURM_ARRAY_TASK_ID', () => {
    const script = readFileSync(path.join(repositoryRoot, 'examples/slurm/sweep-array.sbatch'), 'utf8');
    expect(script).toMatch(/^#SBATCH --array=0-15$/m);
    expect(script).toMatch(/sweep "\$PLAN" --out "\$RESULTS\/shard-\$SLURM_ARRAY_TASK_ID"/);
  });
});
