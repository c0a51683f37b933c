/**
 * The fleet-size search: the smallest fleet in [min, max] that meets the target, over a
 * small interface (`evaluate(robots, replications)` returns the figures of that fleet at the
 * target rate), so the statistics behind a verdict can change without touching the search.
 *
 * A fleet meets the target when its run is stable (bounded backlog), its throughput
 * interval is not below the target (with Poisson demand at the target a stable fleet
 * delivers the target on average, so the interval straddles it; one wholly below it means
 * the fleet falls short; when the arrivals in the measured window fell short of the target,
 * as a trace's can, the bar is the work offered), and, with a service level, its lead-time p95 interval is not
 * above the limit. A verdict is unsure when an interval straddles its threshold in the way
 * that decides (the run is called stable but its backlog-growth interval still reaches the
 * growth the stability test calls material, the throughput estimate is materially short of
 * the target but its interval reaches it, the p95 interval holds the limit); an
 * unsure fleet gets more replications (doubling, up to `maxReplications`), and one still
 * unsure then counts as not meeting the target: a recommendation must rest on evidence.
 *
 * Search: start at the hand formula's fleet (never below the lower bound that zero empty
 * travel gives), bracket upwards by steps 1, 2, 4, ... until a fleet meets the target,
 * then bisect between the largest fleet known to fail and the smallest known to meet.
 * This assumes that, within the range, a fleet that meets the target is not followed by a
 * larger one that fails; the curve shows every fleet evaluated. Every run is kept, so a
 * fleet evaluated twice reuses its replications.
 */
import type { Interval } from '../reports/stats/index.ts';

export interface SizeFigures {
  robots: number;
  replications: number;
  throughputPerHour: Interval;
  /** Bounded backlog over the replications; null when not assessed. */
  stable: boolean | null;
  /** Trend of tasks in system after the warm-up (tasks/h) over the replications; null when not assessed. */
  backlogGrowthPerHour: Interval | null;
  /** Growth the stability verdict calls material (tasks/h); null when not assessed. */
  materialGrowthPerHour: number | null;
  leadTimeP95Seconds: Interval;
  /**
   * Tasks per hour released in the measured window (mean over replications). Random or
   * traced arrivals can fall short of the target there; a fleet can deliver no more.
   */
  offeredPerHour?: number;
}

export interface SizeEvaluator {
  evaluate(robots: number, replications: number): Promise<SizeFigures>;
}

export type Verdict = 'meets' | 'fails' | 'unsure';

/** A throughput estimate this far below the target (share of it) is a material shortfall. */
export const materialShortfallShare = 0.01;

export interface Judgement {
  verdict: Verdict;
  /** Why, in a few words (the curve shows it). */
  because: string;
}

export function judge(figures: SizeFigures, target: number, leadP95Limit: number | null): Judgement {
  const throughput = figures.throughputPerHour;
  if (figures.stable === false) return { verdict: 'fails', because: 'backlog grows' };
  // The bar: the target, or the work actually offered when the arrivals fell short of it.
  const offered = figures.offeredPerHour;
  const bar = offered !== undefined && Number.isFinite(offered) ? Math.min(target, offered) : target;
  const high = throughput.high ?? throughput.mean;
  if (high < bar) return { verdict: 'fails', because: `throughput interval below ${bar === target ? target : `the ${bar.toFixed(0)} tasks/h offered`}` };
  if (leadP95Limit !== null) {
    const p95 = figures.leadTimeP95Seconds;
    if (!Number.isFinite(p95.mean)) return { verdict: 'fails', because: 'no lead time measured' };
    if ((p95.low ?? p95.mean) > leadP95Limit) return { verdict: 'fails', because: `lead-time p95 above ${leadP95Limit} s` };
  }
  // Stable, but can material growth be excluded? Not while the growth interval reaches it.
  const growth = figures.backlogGrowthPerHour;
  const material = figures.materialGrowthPerHour;
  if (figures.stable === true && growth && material !== null && Number.isFinite(material) && growth.high !== null && growth.high > material) {
    return { verdict: 'unsure', because: `backlog growth interval reaches ${material.toFixed(1)} tasks/h` };
  }
  if (throughput.mean < bar * (1 - materialShortfallShare)) return { verdict: 'unsure', because: 'throughput estimate short of the target, interval reaches it' };
  if (leadP95Limit !== null) {
    const p95 = figures.leadTimeP95Seconds;
    if ((p95.high ?? p95.mean) > leadP95Limit) return { verdict: 'unsure', because: `lead-time p95 interval holds ${leadP95Limit} s` };
  }
  return { verdict: 'meets', because: figures.stable === null ? 'throughput reaches the target (stability not assessed)' : 'stable, throughput reaches the target' };
}

export interface SearchOptions {
  evaluator: SizeEvaluator;
  target: number;
  min: number;
  max: number;
  /** Where to start (the hand formula's fleet). */
  start: number;
  replications: number;
  maxReplications: number;
  leadP95Limit: number | null;
}

export interface EvaluatedFleet {
  figures: SizeFigures;
  verdict: 'meets' | 'fails' | 'undecided';
  because: string;
}

export interface SearchResult {
  recommended: number | null;
  /** Every fleet evaluated, by robots. */
  evaluated: Map<number, EvaluatedFleet>;
  /** The largest fleet evaluated that did not meet the target, if any. */
  largestFailing: number | null;
}

export async function searchFleetSize(options: SearchOptions): Promise<SearchResult> {
  const { evaluator, target, min, max, leadP95Limit } = options;
  const evaluated = new Map<number, EvaluatedFleet>();
  const meets = async (robots: number): Promise<boolean> => {
    const known = evaluated.get(robots);
    if (known) return known.verdict === 'meets';
    let replications = options.replications;
    for (;;) {
      const figures = await evaluator.evaluate(robots, replications);
      const judgement = judge(figures, target, leadP95Limit);
      if (judgement.verdict !== 'unsure' || replications >= options.maxReplications) {
        const verdict = judgement.verdict === 'unsure' ? 'undecided' : judgement.verdict;
        const because = judgement.verdict === 'unsure' ? `${judgement.because} after ${replications} replications: counted as not meeting` : judgement.because;
        evaluated.set(robots, { figures, verdict, because });
        return verdict === 'meets';
      }
      replications = Math.min(options.maxReplications, replications * 2);
    }
  };

  let failing = min - 1; // largest fleet known (or assumed, below min) not to meet the target
  let meeting: number | null = null;
  const first = Math.min(max, Math.max(min, options.start));
  if (await meets(first)) meeting = first;
  else {
    failing = first;
    for (let step = 1; failing < max; step *= 2) {
      const probe = Math.min(max, failing + step);
      if (await meets(probe)) {
        meeting = probe;
        break;
      }
      failing = probe;
    }
  }
  if (meeting !== null) {
    while (meeting - failing > 1) {
      const middle = Math.floor((failing + meeting) / 2);
      if (await meets(middle)) meeting = middle;
      else failing = middle;
    }
  }
  const fails = [...evaluated.entries()].filter(([, e]) => e.verdict !== 'meets').map(([n]) => n);
  return { recommended: meeting, evaluated, largestFailing: fails.length > 0 ? Math.max(...fails) : null };
}
