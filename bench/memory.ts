/**
 * Benchmark: peak resident memory of one replication against its simulated length. Runs
 * the pibt row (bench/pibt.ts: 1,000 robots on a generated 150 x 80 hall, saturated
 * demand) for 1, 6 and 24 simulated hours, each in a fresh process so every peak is its own
 * (VmHWM, the kernel's high-water mark of the child's own address space). The first row is the
 * baseline: per-run memory that grows with run length shows as a ratio above 1. What grows
 * by design: one sample per `run.sampleSeconds` (per station: 8 bytes per sample) and one
 * 32-bit lead time per delivered task; task slots are reused after delivery.
 *
 * Run directly: `npx tsx bench/memory.ts [--json] [hours,hours,...]`, or in the bench table
 * with `npm run bench -- --only memory`.
 */
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

export interface MemoryBenchRow {
  name: 'memory';
  policy: 'pibt';
  robots: number;
  simulatedHours: number;
  peakRssMb: number;
  /** Peak RSS over the first row's. */
  ratioToFirst: number;
  delivered: number;
  agentSteps: number;
  realTimeFactor: number;
}

const self = fileURLToPath(import.meta.url);
const runDirectly = process.argv[1] === self;

/**
 * The child's command line: this file under the loader it was started with (`npx tsx
 * bench/memory.ts`), or, inside `npm run bench`, the bench's own entry (bench/start.js: the
 * build when it is current, else tsx), which hands `--memory-child` to `memoryChild`.
 */
function childArguments(hours: number): string[] {
  return runDirectly ? [...process.execArgv, self, '--child', String(hours)] : [path.join(path.dirname(self), 'start.js'), '--memory-child', String(hours)];
}

/**
 * The process's own peak resident set in kB. On Linux, VmHWM of /proc/self/status: the
 * high-water mark of this address space, which starts afresh at exec. getrusage's maxRSS
 * (`process.resourceUsage().maxRSS`) survives fork and exec, so a child spawned by a bench
 * process that had grown to 300 MB reported 300 MB however little it used itself (measured:
 * 291 MB for every run length in the full bench, 123 MB for the same child started alone).
 */
function peakResidentKilobytes(): number {
  try {
    const match = /^VmHWM:\s+(\d+) kB$/m.exec(readFileSync('/proc/self/status', 'utf8'));
    if (match) return Number(match[1]);
  } catch {
    // not Linux: fall back below
  }
  return process.resourceUsage().maxRSS;
}

/** Child mode: one pibt run, then its own peak RSS as one JSON line. */
export async function memoryChild(hours: number): Promise<void> {
  const { benchPibt } = await import('./pibt.ts');
  const row = benchPibt(hours);
  const peakRssMb = peakResidentKilobytes() / 1024;
  process.stdout.write(`${JSON.stringify({ robots: row.robots, delivered: row.delivered, realTimeFactor: row.realTimeFactor, agentSteps: row.robots * hours * 3600, peakRssMb })}\n`);
}

export function benchMemory(hoursList: number[] = [1, 6, 24]): MemoryBenchRow[] {
  const rows: MemoryBenchRow[] = [];
  for (const hours of hoursList) {
    const result = spawnSync(process.execPath, childArguments(hours), { encoding: 'utf8', maxBuffer: 1 << 20 });
    if (result.status !== 0) throw new Error(`memory bench child (${hours} h) failed: ${result.stderr}`);
    const measured = JSON.parse(result.stdout.trim().split('\n').pop()!) as { robots: number; delivered: number; realTimeFactor: number; agentSteps: number; peakRssMb: number };
    rows.push({
      name: 'memory',
      policy: 'pibt',
      robots: measured.robots,
      simulatedHours: hours,
      peakRssMb: Math.round(measured.peakRssMb),
      ratioToFirst: rows.length === 0 ? 1 : Number((measured.peakRssMb / rows[0].peakRssMb).toFixed(2)),
      delivered: measured.delivered,
      agentSteps: measured.agentSteps,
      realTimeFactor: measured.realTimeFactor,
    });
  }
  return rows;
}

if (runDirectly) {
  const args = process.argv.slice(2);
  const childIndex = args.indexOf('--child');
  if (childIndex >= 0) {
    await memoryChild(Number(args[childIndex + 1]));
  } else {
    const list = args.find((a) => !a.startsWith('--'));
    const rows = benchMemory(list === undefined ? undefined : list.split(',').map(Number));
    if (args.includes('--json')) process.stdout.write(`${JSON.stringify(rows, null, 2)}\n`);
    else for (const r of rows) process.stdout.write(`pibt, ${r.robots} robots, ${r.simulatedHours} h: peak RSS ${r.peakRssMb} MB (x${r.ratioToFirst}), ${r.delivered} delivered, ${r.realTimeFactor}x real time\n`);
  }
}
