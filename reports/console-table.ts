/**
 * Human-readable tables for the terminal: one row per metric with its mean, half-width and
 * interval, in the units planners use (tasks per hour, seconds, percent).
 */
import type { Interval } from './stats/index.ts';
import type { RunSummary } from './summary.ts';
import { safetyNote } from './safety.ts';

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
  const how = w.method === 'mser-5' ? 'MSER-5' : 'fixed';
  return `warm-up ${hours} h (${how})${w.tooShort ? ' - MSER-5 cut near half the run: lengthen --hours for a trustworthy steady state' : ''}`;
}

export function renderRunTable(summary: RunSummary): string {
  const pct = Math.round(summary.confidence * 100);
  const how = summary.intervalMethod === 'replications' ? `over ${summary.replications} replications` : 'by batch means of one replication';
  const lines: string[] = [];
  lines.push(`${summary.scenario} | ${summary.policy} | ${summary.robots} robots | ${summary.replications} x ${summary.hours} h | seed ${summary.seed}`);
  lines.push(`${describeWarmup(summary)}; ${pct}% intervals ${how}`);
  lines.push('');
  const rows = [
    intervalRow('throughput (tasks/h)', summary.throughputPerHour, 'rate'),
    intervalRow('lead time, mean (s)', summary.leadTimeSeconds, 'seconds'),
    intervalRow('lead time, p50 (s)', summary.leadTimeP50Seconds, 'seconds'),
    intervalRow('lead time, p95 (s)', summary.leadTimeP95Seconds, 'seconds'),
    intervalRow('tasks in system', summary.tasksInSystem, 'count'),
    intervalRow('station idle', summary.stationIdleFraction, 'percent'),
    intervalRow('station starved', summary.stationStarvedFraction, 'percent'),
    intervalRow('robot time: loaded travel', summary.robotTime.loaded, 'percent'),
    intervalRow('robot time: empty travel', summary.robotTime.empty, 'percent'),
    intervalRow('robot time: handling', summary.robotTime.handling, 'percent'),
    intervalRow('robot time: waiting/blocked', summary.robotTime.waiting, 'percent'),
    intervalRow('robot time: parked', summary.robotTime.parked, 'percent'),
    intervalRow('deadlock episodes', summary.deadlocks, 'count'),
    intervalRow('robot-hours lost to deadlocks', summary.deadlockRobotHoursLost, 'hours'),
  ];
  lines.push(renderColumns(rows, ['metric', 'mean', `± half-width`, `${pct}% interval`]));
  lines.push('');
  lines.push(
    `collisions ${summary.collisions} | tasks released ${summary.tasks.released}, delivered ${summary.tasks.delivered}, open at end ${summary.tasks.open} (all replications, whole run)`,
  );
  const little = summary.littlesLaw;
  if (Number.isFinite(little.tasksInSystem) && Number.isFinite(little.throughputTimesLeadTime)) {
    lines.push(
      `Little's law check: tasks in system ${little.tasksInSystem.toFixed(2)} vs throughput x lead time ${little.throughputTimesLeadTime.toFixed(2)} (gap ${(little.relativeGap * 100).toFixed(1)}%${little.relativeGap > 0.1 ? '; a large gap means the run is not in steady state or demand exceeds capacity' : ''})`,
    );
  }
  if (!summary.wellFormed) {
    lines.push(`warning: the floor is not well-formed for ${summary.robots} robots (${summary.wellFormedViolation}); planned policies may stall and leave tasks undone`);
  }
  const worst = [...summary.stations].sort((a, b) => b.starvedFraction - a.starvedFraction).slice(0, 3);
  if (worst.length > 0) {
    lines.push(`most starved stations: ${worst.map((s) => `${s.kind} ${s.cell} ${(s.starvedFraction * 100).toFixed(1)}%`).join(', ')}`);
  }
  lines.push(
    `speed: ${Math.round(summary.timing.agentStepsPerSecond).toLocaleString('en-US')} agent-steps/s, planning ${(summary.timing.planningShare * 100).toFixed(0)}% of ${summary.timing.wallSeconds.toFixed(1)} s`,
  );
  lines.push('');
  lines.push(`Note: ${safetyNote}`);
  return lines.join('\n');
}
