/**
 * The validated, normalized scenario the engine runs. The loader (scenarios/load.ts) turns
 * the YAML contract of DESIGN §3 into this shape; nothing downstream re-validates.
 * All user quantities stay in seconds, meters and tasks per hour here; the engine converts
 * to ticks.
 */

export type HandlingSpec =
  | { dist: 'fixed'; seconds: number }
  | { dist: 'uniform'; min: number; max: number }
  | { dist: 'exponential'; mean: number };

/** How a pickup or drop point is chosen for a new task. Weights are keyed by cell index. */
export type PointChoice =
  | { kind: 'uniform' }
  | { kind: 'weights'; weights: Map<number, number> }
  | { kind: 'zipf'; skew: number };

/**
 * `delivery`: pickup at a P point, drop at a D point (parcel sortation).
 * `round-trip`: goods-to-person; take a shelf from an S point to a D pick station, wait the
 * pick, return the shelf to the same S point.
 */
export type DemandMode = 'delivery' | 'round-trip';

export type DemandSpec =
  | { kind: 'poisson'; mode: DemandMode; tasksPerHour: number; profile: number[] | null; pickups: PointChoice; drops: PointChoice }
  | { kind: 'saturated'; mode: DemandMode; pickups: PointChoice; drops: PointChoice }
  | { kind: 'trace'; mode: DemandMode; tracePath: string; tasks: TraceTask[] };

export interface TraceTask {
  releaseSeconds: number;
  pickup: number;
  drop: number;
}

export interface RunSpec {
  hours: number;
  /** 'auto' = MSER-5 on the throughput series; a number = fixed warm-up in hours. */
  warmup: 'auto' | number;
  replications: number;
  seed: number;
  confidence: number;
  /** Length of one metric sample interval (the throughput series), seconds. */
  sampleSeconds: number;
  /** A robot holding a goal that makes no progress this long is in a deadlock episode. */
  deadlockSeconds: number;
  /** Seconds after detection until a modelled operator clears the deadlocked robots to parking; 0 disables clearing. */
  recoverySeconds: number;
}

/** Handling overrides of one station (a P, D or S cell); a field left out keeps the default. */
export interface StationHandling {
  pickupSeconds?: HandlingSpec;
  dropSeconds?: HandlingSpec;
}

/**
 * Battery of every robot (`fleet.battery`). One drain rate for everything a robot does
 * except charging (driving, handling, waiting, parked, broken): a full charge lasts
 * `runHours`; charging is linear, `chargeHours` from empty to full.
 */
export interface BatterySpec {
  runHours: number;
  chargeHours: number;
  /** At or below this fraction a robot finishes its task and goes to charge. */
  chargeBelow: number;
  /** The fraction it charges to. */
  chargeUpTo: number;
}

/**
 * Breakdowns (`faults.breakdowns`): time to failure counted in calendar time from the end of
 * the last repair, then a repair time; both as duration specs in seconds (the loader turns
 * the user's hours and minutes into seconds).
 */
export interface BreakdownSpec {
  timeToFailure: HandlingSpec;
  repair: HandlingSpec;
}

/**
 * Execution delays (`faults.delays`, Ma, Kumar & Koenig, "Multi-Agent Path Finding with
 * Delay Probabilities", AAAI 2017): every time a robot starts a move, with probability
 * `probabilityPerMove` the move is held back for a duration drawn from `seconds` (rounded
 * to whole ticks like handling times); the robot then tries again.
 */
export interface DelaySpec {
  probabilityPerMove: number;
  seconds: HandlingSpec;
}

export interface Scenario {
  name: string;
  /** Absolute path of the scenario file, or null when built in code. */
  sourcePath: string | null;
  /** `turnSeconds`: time of a 90-degree turn in place (forward-only robots, sim/headings.ts); absent or 0: robots turn in no time. */
  units: { cellMeters: number; robotSpeedMps: number; turnSeconds?: number };
  layoutText: string;
  /** `stations`: per-station overrides keyed by cell index (absent: none). */
  handling: { pickupSeconds: HandlingSpec; dropSeconds: HandlingSpec; stations?: Map<number, StationHandling> };
  /** `battery` absent: robots never charge. */
  fleet: { robots: number; battery?: BatterySpec };
  /** Absent: no faults. */
  faults?: { breakdowns?: BreakdownSpec; delays?: DelaySpec };
  demand: DemandSpec;
  policy: { name: string; options: Record<string, unknown> };
  run: RunSpec;
}

/** Defaults of the optional battery fields (common practice for opportunity charging: keep the charge between about 20% and 90%). */
export const defaultBattery = { chargeBelow: 0.2, chargeUpTo: 0.9 } as const;

export const defaultRun: RunSpec = {
  hours: 4,
  warmup: 'auto',
  replications: 5,
  seed: 1,
  confidence: 0.95,
  sampleSeconds: 60,
  deadlockSeconds: 120,
  recoverySeconds: 300,
};

/** Seconds per tick: the time a robot needs to cross one cell at nominal speed. */
export function tickSecondsOf(scenario: Pick<Scenario, 'units'>): number {
  return scenario.units.cellMeters / scenario.units.robotSpeedMps;
}
