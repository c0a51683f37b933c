/**
 * The `size` answer for the terminal: the recommendation and its reason, Groover's hand
 * formula beside it, capacity headroom, the knee, and the curve of every fleet evaluated.
 * Renders the document experiments/size.ts builds; units are tasks per hour and seconds.
 */
import type { Interval } from './stats/index.ts';
import { renderColumns } from './console-table.ts';

/** The parts of the size document this table reads (experiments/size.ts builds it). */
export interface SizeView {
  scenario: string;
  target: number;
  demand: string;
  policy: string;
  recommendedRobots: number | null;
  reason: string | null;
  handFormulaRobots: number;
  handFormula: {
    cycleSeconds: number;
    loadSeconds: number;
    loadedTravelSeconds: number;
    unloadSeconds: number;
    emptyTravelSeconds: number;
    perRobotPerHour: number;
    robotsExact: number;
    lowerBoundRobots: number;
    availability?: { total: number; charging: number; breakdowns: number };
  };
  knee: { robots: number; marginalPerAddedRobot: number; firstRobotsPerRobot: number; share: number } | null;
  congestionFrom: number | null;
  capacity: { robots: number; throughputPerHour: Interval; headroomPercent: number | null; poolAtCap?: boolean } | null;
  leadP95LimitSeconds: number | null;
  replications: number;
  hours: number;
  seed: number;
  confidence: number;
  curve: {
    robots: number;
    replications: number;
    throughputPerHour: Interval;
    throughputPerRobot: number;
    leadTimeSeconds: Interval;
    leadTimeP95Seconds: Interval;
    stationStarvedFraction: Interval;
    busyRobots: Interval | null;
    stable: boolean | null;
    stabilityVerdict?: 'stable' | 'unstable' | 'undetermined' | null;
    verdict: string;
    because: string;
  }[];
  capacityCurve: { robots: number; replications: number; throughputPerHour: Interval; throughputPerRobot: number; marginalPerAddedRobot: number | null }[];
  safety: string;
}

const fixed = (v: number | null | undefined, digits = 0) => (v === null || v === undefined || !Number.isFinite(v) ? '-' : v.toFixed(digits));
const withHalf = (i: Interval, digits = 0) => (Number.isFinite(i.mean) ? `${fixed(i.mean, digits)}${i.halfWidth === null ? '' : ` ± ${fixed(i.halfWidth, digits)}`}` : '-');

/** ", availability 0.77 (charging 0.80 x breakdowns 0.96)" when the hand formula's AT has one below 1. */
function availabilityText(a: SizeView['handFormula']['availability']): string {
  if (!a || a.total >= 1) return '';
  return `, available ${fixed(a.total * 100, 0)}% of the time (charging ${fixed(a.charging * 100, 0)}% x breakdowns ${fixed(a.breakdowns * 100, 0)}%)`;
}

export function renderSizeTable(d: SizeView): string {
  const out: string[] = [];
  const level = `${Math.round(d.confidence * 100)}%`;
  out.push(`${d.scenario} | ${d.policy} | target ${d.target} tasks/h (${d.demand}) | ${d.replications}+ x ${d.hours} h | seed ${d.seed}`);
  const service = d.leadP95LimitSeconds === null ? '' : ` and lead-time p95 within ${d.leadP95LimitSeconds} s`;
  if (d.recommendedRobots !== null) {
    out.push(`recommendation: ${d.recommendedRobots} robots (the smallest fleet tried that is stable at the target with its ${level} throughput interval reaching it${service})`);
  } else {
    out.push(`recommendation: none: ${d.reason}`);
  }
  const h = d.handFormula;
  const cost = d.recommendedRobots === null ? '' : d.recommendedRobots > d.handFormulaRobots ? `; congestion, queues and dispatch cost ${d.recommendedRobots - d.handFormulaRobots} robots more` : d.recommendedRobots === d.handFormulaRobots ? '; the simulation agrees' : '; the simulation needs fewer (dispatch shortens empty trips)';
  out.push(
    `hand formula (Groover): ${d.handFormulaRobots} robots (${fixed(h.robotsExact, 2)} exact): Tc = ${fixed(h.loadSeconds, 1)} s load + ${fixed(h.loadedTravelSeconds, 1)} s loaded + ${fixed(h.unloadSeconds, 1)} s unload + ${fixed(h.emptyTravelSeconds, 1)} s empty = ${fixed(h.cycleSeconds, 1)} s, ${fixed(h.perRobotPerHour, 1)} tasks/h per robot${availabilityText(h.availability)}${cost}`,
  );
  if (d.capacity) {
    out.push(`capacity of ${d.capacity.robots} robots (saturated demand): ${withHalf(d.capacity.throughputPerHour)} tasks/h, headroom ${fixed(d.capacity.headroomPercent, 0)}% over the target`);
    if (d.capacity.poolAtCap) out.push("  (an upper bound: the capacity run's pool of open tasks reached its cap with robots idle, so this policy's rate grows with the tasks waiting; the runs at the target decide)");
    if (d.capacity.headroomPercent !== null && d.capacity.headroomPercent < 0) {
      out.push('  (saturated demand keeps one task per robot to choose from; with a queue of waiting tasks the fleet picks nearer ones and does more, as its run at the target shows: little headroom either way)');
    }
  }
  if (d.knee) {
    out.push(
      `knee: beyond ${d.knee.robots} robots each added robot adds ${fixed(d.knee.marginalPerAddedRobot, 1)} tasks/h of capacity, under ${Math.round(d.knee.share * 100)}% of the ${fixed(d.knee.firstRobotsPerRobot, 1)} per robot of the smallest fleet`,
    );
  } else if (d.capacityCurve.length > 1) {
    out.push(`knee: not reached up to ${d.capacityCurve[d.capacityCurve.length - 1].robots} robots (each added robot still adds at least half the first robots' rate)`);
  }
  if (d.congestionFrom !== null) out.push(`congestion: capacity falls from ${d.congestionFrom} robots on (beyond its interval): more robots hurt`);

  out.push('', `fleets evaluated at ${d.target} tasks/h:`);
  out.push(
    renderColumns(
      d.curve.map((c) => [
        String(c.robots),
        String(c.replications),
        withHalf(c.throughputPerHour),
        fixed(c.throughputPerRobot, 1),
        withHalf(c.leadTimeSeconds),
        withHalf(c.leadTimeP95Seconds),
        Number.isFinite(c.stationStarvedFraction.mean) ? `${(c.stationStarvedFraction.mean * 100).toFixed(1)}%` : '-',
        c.busyRobots ? fixed(c.busyRobots.mean, 1) : '-',
        c.stable === null ? '-' : c.stabilityVerdict === 'undetermined' ? 'undetermined' : c.stable ? 'yes' : 'no',
        c.verdict === 'meets' ? 'meets' : `${c.verdict}: ${c.because}`,
      ]),
      ['robots', 'reps', 'throughput/h', 'per robot', 'lead mean s', 'lead p95 s', 'starved', 'busy', 'stable', 'verdict'],
    ),
  );
  if (d.capacityCurve.length > 0) {
    out.push('', 'capacity (saturated demand):');
    out.push(
      renderColumns(
        d.capacityCurve.map((c) => [String(c.robots), String(c.replications), withHalf(c.throughputPerHour), fixed(c.throughputPerRobot, 1), c.marginalPerAddedRobot === null ? '-' : fixed(c.marginalPerAddedRobot, 1)]),
        ['robots', 'reps', 'capacity/h', 'per robot', 'per added robot'],
      ),
    );
  }
  out.push('', `Note: ${d.safety}`);
  return out.join('\n');
}
