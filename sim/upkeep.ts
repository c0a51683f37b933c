/**
 * The fleet's upkeep during a replication: batteries and chargers, breakdowns and repairs.
 * The engine owns the clock and the event queue; this class owns the rules and the state,
 * and is called at its own events and just before every policy step.
 *
 * Charging (linear battery, sim/battery.ts; chargers as single servers with one FIFO queue,
 * sim/charger-pool.ts): when a robot's charge falls to `chargeBelow` it finishes the task it
 * holds, then takes the nearest free charger (phase ToCharger, its goal is the charger) or
 * joins the queue (WaitingForCharger: it rests like an idle robot and takes no task). On the
 * charger it charges (phase Charging, it cannot move) up to `chargeUpTo`, then is idle
 * again and its charger goes to the head of the queue. A robot whose charge reaches 0 before
 * it is plugged in "ran flat": counted (the run's figures are then optimistic: a real robot
 * would stop), and it keeps going at 0.
 *
 * Breakdowns (an alternating renewal process per robot, sim/breakdowns.ts): at a failure the
 * robot stops where it stands and blocks its cell until repaired; a task not yet picked up
 * goes back to the open list (another robot can take it), a load on board stays with the
 * robot. Handling and charging under way finish on time (the station crew or the charger
 * keeps working); the robot moves again only after its repair. A policy that cannot stop a
 * robot at once (`Policy.canStop`: planned policies until the robot's reserved path has
 * ended) defers the failure to that point; the deferral is counted and reported, and the
 * next time to failure still counts from the end of the repair.
 *
 * Random streams: breakdowns draw from one stream per robot (the engine passes them), the
 * battery is deterministic, so common random numbers across policies hold.
 */
import type { Scenario } from './model.ts';
import type { Layout } from './layout.ts';
import type { DistanceTables } from './distance-table.ts';
import type { Rng } from './demand.ts';
import { Phase, isChargingPhase, type World } from './world.ts';
import { BatteryBank } from './battery.ts';
import { ChargerPool } from './charger-pool.ts';
import { BreakdownClock } from './breakdowns.ts';
import { UpkeepMetrics } from './upkeep-metrics.ts';

/** Kinds of upkeep event; the engine schedules one event kind with payload robot * 8 + kind. */
export const UpkeepEvent = { BatteryLow: 0, BatteryFlat: 1, ChargeDone: 2, Failure: 3, Repair: 4 } as const;

/** What the engine lends the upkeep. */
export interface UpkeepHost {
  /** Schedules an upkeep event at `tick`. */
  schedule(tick: number, robot: number, kind: number): void;
  /** The robot made progress (a phase change, a repair): its stall clock restarts. */
  progressed(robot: number, tick: number): void;
  /** The policy's answer to "may robot r stop here now?" (Policy.canStop, default true). */
  canStop(robot: number, tick: number): boolean;
}

/** Robot categories for the robot-time split: not upkeep, charging (at, to or queued for a charger), broken. */
export const UpkeepCategory = { None: 0, Charging: 1, Broken: 2 } as const;

export class Upkeep {
  readonly battery: BatteryBank | null;
  readonly pool: ChargerPool | null;
  readonly clock: BreakdownClock | null;
  readonly metrics: UpkeepMetrics;
  /** UpkeepCategory per robot; the engine leaves robots with a category out of its own split. */
  readonly category: Uint8Array;
  /** Robots whose charge reached 0 at least once (whole run). */
  readonly ranFlatRobots = new Set<number>();

  private readonly below: number;
  private readonly upTo: number;
  private readonly needsCharge: Uint8Array;
  private readonly lowAt: Float64Array;
  private readonly flatAt: Float64Array;
  private readonly chargeDoneAt: Float64Array;
  private readonly failAt: Float64Array;
  private readonly repairAt: Float64Array;
  private readonly pendingSince: Float64Array;
  private readonly chargerIndex: Int32Array;
  /** 1 while a robot that broke down during its charge keeps its charger until repaired. */
  private readonly keepsCharger: Uint8Array;
  private needy = 0;
  private pending = 0;

  constructor(
    scenario: Scenario,
    private readonly world: World,
    layout: Layout,
    private readonly distances: DistanceTables,
    tickSeconds: number,
    intervalTicks: number,
    endTick: number,
    breakdownStream: (robot: number) => Rng,
    private readonly host: UpkeepHost,
  ) {
    const robots = world.robotCount;
    const battery = scenario.fleet.battery;
    const breakdowns = scenario.faults?.breakdowns;
    this.battery = battery ? new BatteryBank(battery, tickSeconds, robots) : null;
    this.pool = battery ? new ChargerPool(layout.chargers, robots) : null;
    this.clock = breakdowns ? new BreakdownClock(breakdowns, tickSeconds, robots, breakdownStream) : null;
    this.below = battery?.chargeBelow ?? 0;
    this.upTo = battery?.chargeUpTo ?? 1;
    this.metrics = new UpkeepMetrics(intervalTicks, endTick, battery ? layout.chargers.length : 0);
    this.category = new Uint8Array(robots);
    this.needsCharge = new Uint8Array(robots);
    this.lowAt = new Float64Array(robots).fill(-1);
    this.flatAt = new Float64Array(robots).fill(-1);
    this.chargeDoneAt = new Float64Array(robots).fill(-1);
    this.failAt = new Float64Array(robots).fill(-1);
    this.repairAt = new Float64Array(robots).fill(-1);
    this.pendingSince = new Float64Array(robots);
    this.keepsCharger = new Uint8Array(robots);
    this.chargerIndex = new Int32Array(layout.cellCount).fill(-1);
    layout.chargers.forEach((cell, i) => (this.chargerIndex[cell] = i));
  }

  /** True when the scenario has a battery or breakdowns. */
  static needed(scenario: Scenario): boolean {
    return scenario.fleet.battery !== undefined || scenario.faults?.breakdowns !== undefined;
  }

  /** Schedules the first battery and breakdown events. */
  start(tick: number): void {
    for (let r = 0; r < this.world.robotCount; r++) {
      if (this.battery) this.scheduleLow(r, tick);
      if (this.clock) this.scheduleFailure(r, this.clock.nextFailure(r, tick));
    }
  }

  /** Handles an upkeep event; returns true (the policy must be called). */
  handle(robot: number, kind: number, tick: number): boolean {
    switch (kind) {
      case UpkeepEvent.BatteryLow:
        if (this.lowAt[robot] !== tick) return false;
        this.lowAt[robot] = -1;
        if (!this.needsCharge[robot]) {
          this.needsCharge[robot] = 1;
          this.needy++;
        }
        this.flatAt[robot] = this.battery!.tickAtOrBelow(robot, tick, 0);
        this.host.schedule(this.flatAt[robot], robot, UpkeepEvent.BatteryFlat);
        return true;
      case UpkeepEvent.BatteryFlat:
        if (this.flatAt[robot] !== tick) return false;
        this.flatAt[robot] = -1;
        this.metrics.flat(tick);
        this.ranFlatRobots.add(robot);
        return false;
      case UpkeepEvent.ChargeDone:
        if (this.chargeDoneAt[robot] !== tick) return false;
        this.chargeDoneAt[robot] = -1;
        this.finishCharging(robot, tick);
        return true;
      case UpkeepEvent.Failure:
        if (this.failAt[robot] !== tick) return false;
        this.failAt[robot] = -1;
        if (this.host.canStop(robot, tick)) this.breakDown(robot, tick);
        else {
          this.world.robotStopPending[robot] = 1;
          this.world.version++;
          this.pendingSince[robot] = tick;
          this.pending++;
        }
        return true;
      case UpkeepEvent.Repair:
        if (this.repairAt[robot] !== tick) return false;
        this.repairAt[robot] = -1;
        this.repair(robot, tick);
        return true;
    }
    return false;
  }

  /**
   * Just before a policy step at `tick`: pending breakdowns the policy can now take, and idle
   * robots that need a charge sent to a charger (or queued).
   */
  beforePolicy(tick: number): void {
    const world = this.world;
    if (this.pending > 0) {
      for (let r = 0; r < world.robotCount; r++) {
        if (!world.robotStopPending[r] || !this.host.canStop(r, tick)) continue;
        this.metrics.deferredFailures++;
        this.metrics.deferredTicks += tick - this.pendingSince[r];
        this.breakDown(r, tick);
      }
    }
    if (this.needy > 0) {
      for (let r = 0; r < world.robotCount; r++) {
        if (!this.needsCharge[r] || world.robotPhase[r] !== Phase.Idle || world.robotTask[r] >= 0 || world.robotBroken[r]) continue;
        this.sendToCharge(r, tick);
      }
    }
  }

  /** The engine saw robot r (phase ToCharger) reach its charger at `tick`. */
  arrived(robot: number, tick: number): void {
    const world = this.world;
    world.robotPhase[robot] = Phase.Charging;
    world.version++;
    this.needsCharge[robot] = 0;
    this.needy--;
    const battery = this.battery!;
    if (this.flatAt[robot] >= 0) this.flatAt[robot] = -1;
    battery.startCharging(robot, tick);
    this.metrics.chargerChange(this.chargerIndex[world.robotCharger[robot]], tick, true);
    this.chargeDoneAt[robot] = battery.tickAtOrAbove(robot, tick, this.upTo);
    this.host.schedule(this.chargeDoneAt[robot], robot, UpkeepEvent.ChargeDone);
    this.host.progressed(robot, tick);
  }

  private sendToCharge(robot: number, tick: number): void {
    const world = this.world;
    const from = world.robotCell[robot];
    const table = this.distances.to(from);
    const occupant = world.occupant;
    const broken = world.robotBroken;
    const charger = this.pool!.request(
      robot,
      (cell) => table[cell],
      (cell) => occupant[cell] >= 0 && occupant[cell] !== robot && broken[occupant[cell]] === 1,
    );
    const before = this.category[robot];
    if (charger >= 0) {
      world.robotPhase[robot] = Phase.ToCharger;
      world.robotCharger[robot] = charger;
    } else {
      world.robotPhase[robot] = Phase.WaitingForCharger;
    }
    world.version++;
    this.setCategory(robot, tick, before, charger < 0 ? 1 : 0);
    this.host.progressed(robot, tick);
    if (charger === from) this.arrived(robot, tick);
  }

  private finishCharging(robot: number, tick: number): void {
    const world = this.world;
    const battery = this.battery!;
    battery.stopCharging(robot, tick, this.upTo);
    this.metrics.chargerChange(this.chargerIndex[world.robotCharger[robot]], tick, false);
    world.robotPhase[robot] = Phase.Idle;
    world.robotCharger[robot] = -1;
    world.version++;
    this.setCategory(robot, tick, this.category[robot], 0);
    this.host.progressed(robot, tick);
    this.scheduleLow(robot, tick);
    // A robot that broke down while charging still stands on its charger: the next robot in
    // the queue gets it at the repair, not now (it would drive up to a robot that cannot move).
    if (world.robotBroken[robot]) this.keepsCharger[robot] = 1;
    else this.handOff(this.pool!.release(robot), tick);
  }

  /** Robot `next` (or -1: nobody) was given a charger: it drives there, or starts if on it. */
  private handOff(next: number, tick: number): void {
    if (next < 0) return;
    const world = this.world;
    const before = this.category[next];
    world.robotPhase[next] = Phase.ToCharger;
    world.robotCharger[next] = this.pool!.chargerOf(next);
    this.setCategory(next, tick, before, -1);
    this.host.progressed(next, tick);
    if (world.robotCell[next] === world.robotCharger[next]) this.arrived(next, tick);
  }

  private breakDown(robot: number, tick: number): void {
    const world = this.world;
    if (world.robotStopPending[robot]) {
      world.robotStopPending[robot] = 0;
      this.pending--;
    }
    const before = this.category[robot];
    world.robotBroken[robot] = 1;
    // A task not yet picked up goes back to the open list; a load on board stays.
    if (world.robotPhase[robot] === Phase.ToPickup) world.unassign(robot);
    world.version++;
    this.setCategory(robot, tick, before, 0);
    this.metrics.failed(tick);
    this.repairAt[robot] = tick + this.clock!.repairTicks(robot);
    this.host.schedule(this.repairAt[robot], robot, UpkeepEvent.Repair);
    this.host.progressed(robot, tick);
  }

  private repair(robot: number, tick: number): void {
    const world = this.world;
    const before = this.category[robot];
    world.robotBroken[robot] = 0;
    world.version++;
    this.setCategory(robot, tick, before, 0);
    this.host.progressed(robot, tick);
    this.scheduleFailure(robot, this.clock!.nextFailure(robot, tick));
    if (this.pool) {
      // The charger it stood on broken is usable again: kept through the repair (it broke
      // down charging), or a free one it happened to stand on.
      if (this.keepsCharger[robot]) {
        this.keepsCharger[robot] = 0;
        this.handOff(this.pool.release(robot), tick);
      } else if (this.chargerIndex[world.robotCell[robot]] >= 0 && world.robotCharger[robot] < 0) {
        this.handOff(this.pool.offer(world.robotCell[robot]), tick);
      }
    }
  }

  private scheduleLow(robot: number, tick: number): void {
    const at = this.battery!.tickAtOrBelow(robot, tick, this.below);
    this.lowAt[robot] = at;
    this.host.schedule(at, robot, UpkeepEvent.BatteryLow);
  }

  private scheduleFailure(robot: number, at: number): void {
    this.failAt[robot] = at;
    this.host.schedule(at, robot, UpkeepEvent.Failure);
  }

  /**
   * Recomputes robot r's category after a change at `tick` and moves the counts; `queuedDelta`
   * is the change of robots queued for a charger (+1 joined, -1 left, 0 no change).
   */
  private setCategory(robot: number, tick: number, before: number, queuedDelta: number): void {
    const world = this.world;
    const after = world.robotBroken[robot] ? UpkeepCategory.Broken : isChargingPhase(world.robotPhase[robot]) ? UpkeepCategory.Charging : UpkeepCategory.None;
    this.category[robot] = after;
    const charging = (after === UpkeepCategory.Charging ? 1 : 0) - (before === UpkeepCategory.Charging ? 1 : 0);
    const broken = (after === UpkeepCategory.Broken ? 1 : 0) - (before === UpkeepCategory.Broken ? 1 : 0);
    if (charging !== 0 || broken !== 0 || queuedDelta !== 0) this.metrics.change(tick, charging, queuedDelta, broken);
  }
}
