/**
 * Human-readable tables for the terminal: one row per metric with its mean, half-width and
 * interval, in the units planners use (tasks per hour, seconds, percent).
 */
import type { Interval } from './stats/index.ts';
import type { RunSummary } from './summary.ts';
import { safetyNote } from './safety.ts';
import { realismLines, realismRows } from './realism-table.ts';
import { executionLines, executionRows } from './execution-table.ts';

type Unit = 'count' | 'seconds' | 'percent' | 'rate' | 'hours';

function formatNumber(value: number | null, unit: Unit): string {
  if (value === null || !Number.isFinite(value)) return '-';
  switch (unit) {
    case 'percent':
      return `${(value * 100).toFixed(1)}%`;
    case 'seconds':
      return value.toFixed(1);
    case 'rate':
      return value.toFixed(1);
    case 'hours':
      return value.toFixed(2);
    default:
      return value.toFixed(2);
  }
}

export function intervalRow(label: string, interval: Interval, unit: Unit): string[] {
  const half = interval.halfWidth === null ? '-' : `± ${formatNumber(interval.halfWidth, unit)}`;
  const range = interval.low === null || interval.high === null ? '-' : `${formatNumber(interval.low, unit)} .. ${formatNumber(interval.high, unit)}`;
  return [label, formatNumber(interval.mean, unit), half, range];
}

/** Pads columns to equal width; first column left-aligned, others right-aligned. */
export function renderColumns(rows: string[][], header?: string[]): string {
  const all = header ? [header, ...rows] : rows;
  const widths = all[0].map((_, c) => Math.max(...all.map((r) => (r[c] ?? '').length)));
  const line = (r: string[]) => r.map((cell, c) => (c === 0 ? cell.padEnd(widths[c]) : cell.padStart(widths[c]))).join('   ');
  const out = all.map(line);
  if (header) out.splice(1, 0, widths.map((w) => '-'.repeat(w)).join('   '));
  return out.join('\n');
}

export function describeWarmup(summary: RunSummary): string {
  const w = summary.warmup;
  const hours = (w.seconds / 3600).toFixed(2);
  const how = w.method === 'mser-5' ? 'MSER-5' : w.method === 'fixed' ? 'fixed' : 'none';
  const note = w.note !== null ? ` - ${w.note}` : '';
  return `warm-up ${hours} h (${how})${note}${w.tooShort ? ' - MSER-5 cut near half the run: lengthen --hours for a trustworthy steady state' : ''}`;
}

const signed = (v: number, digits = 1): string => `${v >= 0 ? '+' : ''}${v.toFixed(digits)}`;

/** The stability verdict in one line: a warning for an unstable run. */
export function describeStability(summary: RunSummary): string {
  const pct = Math.round(summary.confidence * 100);
  const g = summary.backlogGrowthPerHour;
  const range = g.low !== null && g.high !== null ? `, ${pct}% interval ${signed(g.low)} .. ${signed(g.high)}` : '';
  if (summary.stable === null) return 'backlog: not assessed (saturated demand keeps an artificial pool of tasks: a capacity run)';
  if (summary.stable && summary.stabilityVerdict === 'undetermined') {
    const material = summary.stability.materialGrowthPerHour;
    return `backlog: undetermined (trend ${Number.isFinite(g.mean) ? signed(g.mean) : '-'} tasks/h after the warm-up${range}; the interval cannot rule out growth above ${Number.isFinite(material) ? material.toFixed(1) : '-'} tasks/h, 1% of throughput): run more replications or longer before trusting lead times`;
  }
  if (summary.stable) {
    return `backlog: bounded (trend ${Number.isFinite(g.mean) ? signed(g.mean) : '-'} tasks/h after the warm-up${range})`;
  }
  return `warning: UNSTABLE - the backlog grows by about ${signed(g.mean, 0)} tasks/h${range}: demand exceeds what this fleet delivers. Lead times count the ages of tasks still open, are lower bounds and have no interval`;
}

/** Served-vs-released mix gap above which the table warns (common practice: in-flight tasks alone stay well below it). */
const mixGapWarning = 0.05;

/** A trace longer than the run: how many of its tasks were never released (also written to stderr by `run`). */
export function traceWarning(summary: RunSummary): string | null {
  const trace = summary.trace;
  if (trace === null || trace.notReleased === 0) return null;
  return `warning: ${trace.notReleased} of ${trace.tasks} trace tasks fall after the run's end (${summary.hours} h) and were never released`;
}

export function renderRunTable(summary: RunSummary): string {
  const pct = Math.round(summary.confidence * 100);
  const how = summary.intervalMethod === 'replications' ? `over ${summary.replications} replications` : 'by batch means of one replication (lag-1 checked); deadlocks per replication';
  const open = summary.leadTimeIncludesOpenTasks ? ' (incl. open)' : '';
  const lines: string[] = [];
  lines.push(`${summary.scenario} | ${summary.policy} | ${summary.robots} robots | ${summary.replications} x ${summary.hours} h | seed ${summary.seed}`);
  lines.push(`${describeWarmup(summary)}; ${pct}% intervals ${how}`);
  lines.push('');
  const work = summary.stationGroups.pickup;
  const workName = summary.stations.some((s) => s.group === 'pickup' && s.kind === 'drop') ? 'pick stations' : 'pickup stations';
  const rows = [
    intervalRow(summary.capacityRun ? 'capacity (tasks/h)' : 'throughput (tasks/h)', summary.throughputPerHour, 'rate'),
    ...(summary.capacityRun
      ? []
      : [
          intervalRow(`lead time, mean (s)${open}`, summary.leadTimeSeconds, 'seconds'),
          intervalRow(`lead time, p50 (s)${open}`, summary.leadTimeP50Seconds, 'seconds'),
          intervalRow(`lead time, p95 (s)${open}`, summary.leadTimeP95Seconds, 'seconds'),
          intervalRow('tasks in system', summary.tasksInSystem, 'count'),
          intervalRow('backlog growth (tasks/h)', summary.backlogGrowthPerHour, 'rate'),
        ]),
    intervalRow(`${workName}: utilisation`, work.utilisation, 'percent'),
    intervalRow(`${workName}: idle`, work.idleFraction, 'percent'),
    ...(work.noRobotWhileWorkWaitsFraction && work.robotTravellingWhileWorkWaitsFraction
      ? [
          intervalRow(`  idle, work waits, no robot assigned`, work.noRobotWhileWorkWaitsFraction, 'percent'),
          intervalRow(`  idle, work waits, robot on its way`, work.robotTravellingWhileWorkWaitsFraction, 'percent'),
        ]
      : []),
    intervalRow(`${workName}: queue (robot-s/h)`, work.queueSecondsPerHour, 'rate'),
    ...(summary.stations.some((s) => s.group === 'drop') ? [intervalRow('drops: utilisation', summary.stationGroups.drop.utilisation, 'percent')] : []),
    intervalRow('robots busy (holding a task)', summary.busyRobots, 'count'),
    intervalRow('robot time parked while tasks open', summary.parkedWhileTasksOpenFraction, 'percent'),
    intervalRow('robot time: loaded travel', summary.robotTime.loaded, 'percent'),
    intervalRow('robot time: empty travel', summary.robotTime.empty, 'percent'),
    intervalRow('robot time: handling', summary.robotTime.handling, 'percent'),
    intervalRow('robot time: waiting/blocked', summary.robotTime.waiting, 'percent'),
    intervalRow('robot time: parked', summary.robotTime.parked, 'percent'),
    ...realismRows(summary, intervalRow),
    ...executionRows(summary, intervalRow),
    intervalRow('deadlock episodes (per replication)', summary.deadlocks, 'count'),
    intervalRow('livelock episodes (per replication)', summary.livelocks, 'count'),
    intervalRow('fleet gridlock episodes (per rep.)', summary.gridlocks, 'count'),
    intervalRow('robot-hours lost to deadlocks (per rep.)', summary.deadlockRobotHoursLost, 'hours'),
  ];
  lines.push(renderColumns(rows, ['metric', 'mean', `± half-width`, `${pct}% interval`]));
  lines.push('');
  lines.push(
    `collisions ${summary.collisions} | tasks released ${summary.tasks.released}, delivered ${summary.tasks.delivered}, open at end ${summary.tasks.open} (all replications, whole run)`,
  );
  lines.push(describeStability(summary));
  lines.push(...realismLines(summary, renderColumns));
  lines.push(...executionLines(summary));
  if (summary.batchMeans !== null && summary.batchMeans.unreliable.length > 0) {
    lines.push(
      `note: batch-means intervals not reliable for ${summary.batchMeans.unreliable.join(', ')} (lag-1 correlation of batch means still above ${summary.batchMeans.maximumLag1} at ${summary.batchMeans.minimumBatches} batches); use --reps 2 or more, or a longer run`,
    );
  }
  const little = summary.littlesLaw;
  if (!little.applicable) {
    if (summary.stable === false) lines.push("Little's law check: not applicable (the backlog grows; no steady state)");
  } else if (Number.isFinite(little.tasksInSystem) && Number.isFinite(little.throughputTimesLeadTime)) {
    lines.push(
      `Little's law check: tasks in system ${little.tasksInSystem.toFixed(2)} vs throughput x lead time ${little.throughputTimesLeadTime.toFixed(2)} (gap ${(little.relativeGap * 100).toFixed(1)}%${little.relativeGap > 0.1 ? '; a large gap means the run is not in steady state or demand exceeds capacity' : ''})`,
    );
  }
  if (!summary.wellFormed && summary.wellFormedWithRestCells) {
    lines.push(`${summary.robots} robots on fewer parking spots: the policy rests ${summary.restCellsUsed} of them on rest cells that keep the floor well-formed (see check)`);
  } else if (!summary.wellFormed) {
    lines.push(`warning: the floor is not well-formed for ${summary.robots} robots (${summary.wellFormedViolation}); planned policies may stall and leave tasks undone`);
  }
  const held = summary.policyLimits?.heldBackTaskSecondsPerHour;
  if (held) {
    const half = held.halfWidth === null ? '' : ` ± ${Math.round(held.halfWidth).toLocaleString('en-US')}`;
    lines.push(
      `held back by the policy's rules: ${Math.round(held.mean).toLocaleString('en-US')}${half} task-s/h (on average ${(held.mean / 3600).toFixed(1)} open tasks no robot may take ${heldBackRule(summary.policy)}; whole run)`,
    );
  }
  const busiest = [
    work.busiest ? `${workName.replace(/s$/, '')} ${work.busiest.cell} ${(work.busiest.utilisation * 100).toFixed(1)}%` : null,
    summary.stationGroups.drop.busiest ? `drop ${summary.stationGroups.drop.busiest.cell} ${(summary.stationGroups.drop.busiest.utilisation * 100).toFixed(1)}%` : null,
  ].filter((v) => v !== null);
  if (busiest.length > 0) lines.push(`busiest: ${busiest.join('; ')}`);
  const worst = summary.stations
    .filter((s): s is typeof s & { noRobotFraction: number } => s.noRobotFraction !== null && s.noRobotFraction > 0)
    .sort((a, b) => b.noRobotFraction - a.noRobotFraction)
    .slice(0, 3);
  if (worst.length > 0) {
    lines.push(`most starved ${workName} (idle, work waiting, no robot assigned): ${worst.map((s) => `${s.cell} ${(s.noRobotFraction * 100).toFixed(1)}%`).join(', ')}`);
  }
  const gap = summary.demandMixGap;
  const gapText = [gap.pickup === null ? null : `${(gap.pickup * 100).toFixed(1)}% at ${workName}`, gap.drop === null ? null : `${(gap.drop * 100).toFixed(1)}% at drops`].filter((v) => v !== null).join(', ');
  if (Math.max(gap.pickup ?? 0, gap.drop ?? 0) > mixGapWarning) {
    lines.push(
      `warning: tasks served stray from the demand's mix (total variation distance ${gapText}): some stations' work is left waiting, so this throughput is not sustainable for this demand (stations.csv: tasksReleased, tasksServed)`,
    );
  } else if (summary.capacityRun && gapText !== '') {
    lines.push(`tasks served follow the demand's mix (total variation distance ${gapText})`);
  }
  if (summary.capacityRun) {
    const served = summary.loadedMetersPerTask.delivered.mean;
    const offered = summary.loadedMetersPerTask.released.mean;
    lines.push(
      `capacity run: saturated demand kept a pool of ${summary.capacityPoolDepth} open tasks (robots + task endpoints, grown while the policy left robots idle); lead time and tasks in system are not measured. Loaded distance per task served ${formatNumber(served, 'seconds')} m vs released ${formatNumber(offered, 'seconds')} m`,
    );
    if (summary.capacityPoolAtCap) {
      lines.push(
        `warning: the pool reached its cap of ${summary.capacityPoolDepth} open tasks with robots still idle: the policy's rules held most tasks back, so its throughput grows with the tasks waiting and this capacity needs a queue that deep. It is an upper bound, not a rate the fleet sustains; judge the fleet at the target rate (run --rate, size)`,
      );
    }
  }
  const unreleased = traceWarning(summary);
  if (unreleased !== null) lines.push(unreleased);
  if (summary.trace && summary.trace.endedAtLastTaskSeconds !== null) {
    lines.push(`the run ended when the trace's last task was done (${summary.trace.endedAtLastTaskSeconds.toFixed(0)} s): throughput is over that span`);
  }
  lines.push(
    `speed: ${Math.round(summary.timing.agentStepsPerSecond).toLocaleString('en-US')} agent-steps/s, planning ${(summary.timing.planningShare * 100).toFixed(0)}% of ${summary.timing.wallSeconds.toFixed(1)} s`,
  );
  lines.push('');
  lines.push(`Note: ${safetyNote}`);
  return lines.join('\n');
}

/** Why a policy's held-back tasks could not be taken (README, "held back by the policy's rules"). */
function heldBackRule(policy: string): string {
  if (policy.startsWith('token-passing')) return "because their pickup or drop ends another robot's path";
  if (policy === 'flow-batch') return "because their pickup's queue is full (pickupQueueLimit)";
  return 'under its rules';
}
