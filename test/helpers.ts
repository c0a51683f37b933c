/** Scenario objects built in code for tests (no file, no loader). */
import type { Scenario, DemandSpec, DelaySpec, HandlingSpec } from '../sim/model.ts';
import { defaultRun } from '../sim/model.ts';

export function makeScenario(parts: {
  layout: string;
  robots: number;
  policy?: string;
  policyOptions?: Record<string, unknown>;
  demand?: DemandSpec;
  pickupSeconds?: HandlingSpec | number;
  dropSeconds?: HandlingSpec | number;
  hours?: number;
  replications?: number;
  seed?: number;
  warmup?: 'auto' | number;
  sampleSeconds?: number;
  deadlockSeconds?: number;
  recoverySeconds?: number;
  cellMeters?: number;
  robotSpeedMps?: number;
  /** units.turnSeconds (absent: robots turn in no time). */
  turnSeconds?: number;
  /** faults.delays (absent: no delays). */
  delays?: DelaySpec;
}): Scenario {
  const handling = (h: HandlingSpec | number | undefined): HandlingSpec =>
    h === undefined ? { dist: 'fixed', seconds: 0 } : typeof h === 'number' ? { dist: 'fixed', seconds: h } : h;
  return {
    name: 'test',
    sourcePath: null,
    units: { cellMeters: parts.cellMeters ?? 1, robotSpeedMps: parts.robotSpeedMps ?? 1, ...(parts.turnSeconds === undefined ? {} : { turnSeconds: parts.turnSeconds }) },
    layoutText: parts.layout,
    handling: { pickupSeconds: handling(parts.pickupSeconds), dropSeconds: handling(parts.dropSeconds) },
    fleet: { robots: parts.robots },
    ...(parts.delays === undefined ? {} : { faults: { delays: parts.delays } }),
    demand: parts.demand ?? { kind: 'saturated', mode: 'delivery', pickups: { kind: 'uniform' }, drops: { kind: 'uniform' } },
    policy: { name: parts.policy ?? 'token-passing', options: parts.policyOptions ?? {} },
    run: {
      ...defaultRun,
      hours: parts.hours ?? 1,
      replications: parts.replications ?? 1,
      seed: parts.seed ?? 1,
      warmup: parts.warmup ?? 0,
      sampleSeconds: parts.sampleSeconds ?? 60,
      deadlockSeconds: parts.deadlockSeconds ?? defaultRun.deadlockSeconds,
      recoverySeconds: parts.recoverySeconds ?? defaultRun.recoverySeconds,
    },
  };
}
