/**
 * The linear battery model (sim/battery.ts) and the charger pool (sim/charger-pool.ts),
 * against values worked by hand from the definitions: drain 1 / runTicks per tick, charge
 * 1 / chargeTicks per tick, a charger serves one robot, first come first served.
 */
import { describe, expect, it } from 'vitest';
import { BatteryBank } from '../sim/battery.ts';
import { ChargerPool } from '../sim/charger-pool.ts';

describe('BatteryBank', () => {
  // runHours 1 at 1 s per tick: 3600 ticks from full to empty; chargeHours 0.5: 1800 ticks empty to full.
  const spec = { runHours: 1, chargeHours: 0.5, chargeBelow: 0.2, chargeUpTo: 0.9 };

  it('starts one robot full and spreads a fleet between chargeBelow and full', () => {
    expect(new BatteryBank(spec, 1, 1).levelAt(0, 0)).toBe(1);
    const fleet = new BatteryBank(spec, 1, 4);
    // 0.2 + 0.8 (r + 1) / 4 = 0.4, 0.6, 0.8, 1.0
    [0.4, 0.6, 0.8, 1].forEach((level, r) => expect(fleet.levelAt(r, 0)).toBeCloseTo(level, 12));
  });

  it('drains at one rate: full to chargeBelow 0.2 takes 0.8 x 3600 = 2880 ticks, to empty 3600', () => {
    const bank = new BatteryBank(spec, 1, 1);
    expect(bank.tickAtOrBelow(0, 0, 0.2)).toBe(2880);
    expect(bank.tickAtOrBelow(0, 0, 0)).toBe(3600);
    expect(bank.levelAt(0, 1800)).toBeCloseTo(0.5, 12);
    // From a later tick the answer is the same absolute tick.
    expect(bank.tickAtOrBelow(0, 1000, 0.2)).toBe(2880);
    expect(bank.levelAt(0, 5000)).toBe(0);
  });

  it('charges linearly: 0.2 to 0.9 with 1800 ticks per full charge takes 0.7 x 1800 = 1260 ticks', () => {
    const bank = new BatteryBank(spec, 1, 1);
    bank.startCharging(0, 2880);
    expect(bank.isCharging(0)).toBe(true);
    expect(bank.tickAtOrBelow(0, 2880, 0.2)).toBe(Infinity);
    expect(bank.tickAtOrAbove(0, 2880, 0.9)).toBe(2880 + 1260);
    bank.stopCharging(0, 2880 + 1260);
    expect(bank.levelAt(0, 4140)).toBeCloseTo(0.9, 12);
    // Then 0.7 x 3600 = 2520 ticks of work until it is back at 0.2.
    expect(bank.tickAtOrBelow(0, 4140, 0.2)).toBe(4140 + 2520);
  });

  it('rounds a crossing between ticks up to the first whole tick at or below the level', () => {
    // 7 s per tick: drain 7 / 3600 per tick; from 1.0 to 0.2 takes 2880 / 7 = 411.43 ticks, so tick 412.
    const bank = new BatteryBank(spec, 7, 1);
    expect(bank.tickAtOrBelow(0, 0, 0.2)).toBe(412);
    expect(bank.levelAt(0, 411)).toBeGreaterThan(0.2);
    expect(bank.levelAt(0, 412)).toBeLessThanOrEqual(0.2);
  });
});

describe('ChargerPool', () => {
  it('gives the nearest free charger, queues when all are taken, and hands a freed charger to the head of the queue', () => {
    const pool = new ChargerPool(Int32Array.of(10, 20), 4);
    const distance = (from: number) => (cell: number) => Math.abs(cell - from);
    expect(pool.request(0, distance(19))).toBe(20);
    expect(pool.request(1, distance(19))).toBe(10);
    expect(pool.request(2, distance(0))).toBe(-1);
    expect(pool.request(3, distance(0))).toBe(-1);
    expect(pool.queueLength).toBe(2);
    expect(pool.request(2, distance(0))).toBe(-1);
    expect(pool.queueLength).toBe(2);
    // Robot 0 leaves charger 20: robot 2 (first in the queue) gets it, robot 3 still waits.
    expect(pool.release(0)).toBe(2);
    expect(pool.chargerOf(2)).toBe(20);
    expect(pool.chargerOf(0)).toBe(-1);
    expect(pool.queueLength).toBe(1);
    expect(pool.release(1)).toBe(3);
    expect(pool.chargerOf(3)).toBe(10);
    expect(pool.release(2)).toBe(-1);
    expect(pool.release(2)).toBe(-1);
    expect(pool.request(0, distance(0))).toBe(20);
  });

  it('breaks distance ties in reading order', () => {
    const pool = new ChargerPool(Int32Array.of(4, 8), 1);
    expect(pool.request(0, () => 3)).toBe(4);
  });
});
