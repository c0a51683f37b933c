/**
 * The motion recording (reports/recording): positions read back from the file equal the
 * positions the engine executed, tick by tick (watched through a second, independent
 * afterMotion hook); states follow the robots' phases; the window bounds the file; and a
 * truncated, damaged, foreign or newer file is refused with one line (RecordingError).
 */
import { describe, expect, it } from 'vitest';
import { runReplication, type ReplicationRecord } from '../sim/engine.ts';
import { prepareSetup } from '../experiments/replications.ts';
import { MotionRecorder, parseRecordingWindow } from '../reports/recording/recorder.ts';
import { decodeRecording, encodeRecording, RecordingError, type Recording } from '../reports/recording/format.ts';
import { FrameIndex } from '../reports/recording/frames.ts';
import { RobotState, loadBit, stateOfCode } from '../reports/recording/robot-state.ts';
import { InputError } from '../sim/errors.ts';
import { makeScenario } from './helpers.ts';
import type { Scenario } from '../sim/model.ts';

// The one-lane corridor of test/greedy-reactive.test.ts (hand trace there): both robots step
// onto their pickups at tick 1, handle through tick 3, meet head-on at tick 6 on (4,2) and
// (5,2); detected at 126; with clearing, the operator drives robot 1 to H(8,1) at tick 426.
const corridor = ['##########', '#HPD##DPH#', '#........#', '#####.####', '##########'].join('\n');
const width = 10;
const cell = (x: number, y: number) => y * width + x;

function corridorScenario(recoverySeconds: number): Scenario {
  return makeScenario({
    layout: corridor,
    robots: 2,
    policy: 'greedy-reactive',
    pickupSeconds: 2,
    dropSeconds: 2,
    hours: 1,
    recoverySeconds,
    demand: {
      kind: 'trace',
      mode: 'delivery',
      tracePath: 'inline',
      tasks: [
        { releaseSeconds: 0, pickup: cell(2, 1), drop: cell(6, 1) },
        { releaseSeconds: 0, pickup: cell(7, 1), drop: cell(3, 1) },
      ],
    },
  });
}

/** Runs replication 0 with the recorder and a watcher that copies the executed positions. */
function recordRun(scenario: Scenario, window: string, mutate?: (record: ReplicationRecord) => void) {
  const setup = prepareSetup(scenario);
  const recorder = new MotionRecorder({
    layout: setup.layout,
    robots: scenario.fleet.robots,
    tickSeconds: 1,
    endTick: scenario.run.hours * 3600,
    window: parseRecordingWindow(window),
    scenario: scenario.name,
    policy: scenario.policy.name,
    seed: 1,
    replication: 0,
    cellMeters: 1,
    fleetwrightVersion: 'test',
  });
  const executed = new Map<number, Int32Array>();
  const record = runReplication(setup, 0, {
    afterMotion: (tick, world) => {
      recorder.hooks.afterMotion!(tick, world);
      executed.set(tick, Int32Array.from(world.robotCell));
    },
  });
  mutate?.(record);
  const recording = recorder.finish(record);
  return { recording, record, executed, setup };
}

/** Positions the engine held at every tick: the last executed motion tick at or before it. */
function truthAt(executed: Map<number, Int32Array>, start: Int32Array, tick: number): Int32Array {
  let best = start;
  let bestTick = -1;
  for (const [t, cells] of executed) if (t <= tick && t > bestTick) [best, bestTick] = [cells, t];
  return best;
}

function readBack(recording: Recording) {
  const bytes = encodeRecording(recording);
  return { bytes, decoded: decodeRecording(bytes, 'motion.fwr') };
}

describe('motion recording', () => {
  it('reads back the executed positions at every tick of the window, including an operator clearing (a jump)', () => {
    const { recording, executed } = recordRun(corridorScenario(300), '0:600');
    const { decoded } = readBack(recording);
    expect(decoded.header.frames).toBe(601);
    expect(decoded.header.jumps).toBeGreaterThanOrEqual(1);
    const index = new FrameIndex(decoded.data, 32);
    const cells = new Int32Array(2);
    // Start: robot 0 on H(1,1), robot 1 on H(8,1) (placement in reading order).
    const start = Int32Array.from([cell(1, 1), cell(8, 1)]);
    for (let tick = 0; tick <= 600; tick++) {
      index.cellsAt(tick, cells);
      expect(Array.from(cells), `tick ${tick}`).toEqual(Array.from(truthAt(executed, start, tick)));
    }
    // The hand trace: head-on at (4,2) and (5,2) from tick 6, still there at the motion tick
    // 426; then cleared to H(8,1), from where robot 1 at once steps down to (8,2), the first
    // cell of its shortest path west to its drop D(3,1), free at 427: a jump of 4 cells.
    index.cellsAt(6, cells);
    expect(Array.from(cells)).toEqual([cell(4, 2), cell(5, 2)]);
    index.cellsAt(426, cells);
    expect(cells[1]).toBe(cell(5, 2));
    index.cellsAt(427, cells);
    expect(cells[1]).toBe(cell(8, 2));
  });

  it('marks handling, loaded and waiting from the robot phases', () => {
    const { recording } = recordRun(corridorScenario(0), '0:300');
    const { decoded } = readBack(recording);
    const code = (frame: number, robot: number) => decoded.data.codes[frame * 2 + robot];
    // Handling at the pickups through tick 3 (hand trace), no load yet while the pickup is handled.
    expect(stateOfCode(code(2, 0))).toBe(RobotState.Handling);
    expect(stateOfCode(code(2, 1))).toBe(RobotState.Handling);
    expect(code(2, 0) & loadBit).toBe(0);
    // Driving to the drop with the parcel at tick 5.
    expect(stateOfCode(code(5, 0))).toBe(RobotState.Loaded);
    expect(code(5, 0) & loadBit).toBe(loadBit);
    // Blocked head-on from tick 6, still carrying. Until detection (tick 126) it is waiting.
    expect(stateOfCode(code(7, 0))).toBe(RobotState.Waiting);
    expect(code(7, 0) & loadBit).toBe(loadBit);
    expect(stateOfCode(code(125, 1))).toBe(RobotState.Waiting);
  });

  it('lists episodes without named robots (today) and marks named members stalled from detection (shared contract)', () => {
    const plain = readBack(recordRun(corridorScenario(0), '0:300').recording).decoded;
    expect(plain.header.episodes).toHaveLength(1);
    const [episode] = plain.header.episodes;
    expect(episode.stallSeconds).toBe(6);
    expect(episode.detectSeconds).toBe(126);
    expect(episode.robots).toBe(2);
    const namedByEngine = Array.isArray(episode.members);
    // With members named, robots 0 and 1 are stalled from 126 on; without, they stay waiting.
    expect(stateOfCode(plain.data.codes[200 * 2])).toBe(namedByEngine ? RobotState.Stalled : RobotState.Waiting);

    // The contract's members field (robot indices), as the engine will fill it.
    const named = readBack(
      recordRun(corridorScenario(0), '0:300', (record) => {
        for (const e of record.metrics.episodes as unknown as { members?: number[] }[]) e.members = [0, 1];
      }).recording,
    ).decoded;
    expect(named.header.episodes[0].members).toEqual([0, 1]);
    expect(stateOfCode(named.data.codes[125 * 2])).toBe(RobotState.Waiting);
    expect(stateOfCode(named.data.codes[126 * 2])).toBe(RobotState.Stalled);
    expect(stateOfCode(named.data.codes[300 * 2 + 1])).toBe(RobotState.Stalled);
    // The load bit survives the overlay.
    expect(named.data.codes[200 * 2] & loadBit).toBe(loadBit);
  });

  it('holds only the window: frames = window ticks + 1, clipped to the run, about a byte per robot-tick before compression', () => {
    const scenario = corridorScenario(0);
    const { recording } = recordRun(scenario, '100:160');
    const { bytes, decoded } = readBack(recording);
    expect(decoded.header.startSeconds).toBe(100);
    expect(decoded.header.frames).toBe(61);
    // 61 frames x 2 robots of codes + 2 start cells, compressed: smaller than the raw body.
    expect(bytes.length).toBeLessThan(20 + Buffer.byteLength(JSON.stringify(decoded.header)) + 61 * 2 + 8);
    const past = readBack(recordRun(scenario, '3000:9000').recording).decoded;
    expect(past.header.frames).toBe(601);
  });

  it('refuses windows that are not FROM:TO with TO > FROM', () => {
    for (const bad of ['', '5', '10:5', '1:1', 'a:b', '-1:5']) {
      expect(() => parseRecordingWindow(bad), bad).toThrow(InputError);
      expect(() => parseRecordingWindow(bad)).toThrow(/^--record-window: got .*, expected FROM:TO/);
    }
    expect(parseRecordingWindow('0:1800')).toEqual({ fromSeconds: 0, toSeconds: 1800 });
  });

  it('refuses truncated, damaged, foreign and newer files with one line naming the file', () => {
    const { bytes } = readBack(recordRun(corridorScenario(0), '0:120').recording);
    const attempts: [string, Uint8Array, RegExp][] = [
      ['empty', new Uint8Array(0), /not a fleetwright motion recording/],
      ['foreign', Buffer.from('\x89PNG\r\n\x1a\n not a recording at all'), /not a fleetwright motion recording/],
      ['newer', Buffer.concat([bytes.subarray(0, 4), Buffer.from([2, 0]), bytes.subarray(6)]), /format version 2, expected version 1/],
      ['cut in the header', bytes.subarray(0, 40), /truncated recording/],
      ['cut in the body', bytes.subarray(0, bytes.length - 5), /truncated recording/],
      ['trailing bytes', Buffer.concat([bytes, Buffer.from([0])]), /bytes after the end/],
    ];
    const damaged = Buffer.from(bytes);
    damaged[damaged.length - 3] ^= 0xff;
    attempts.push(['damaged body', damaged, /damaged file/]);
    for (const [what, data, message] of attempts) {
      let error: unknown;
      try {
        decodeRecording(data, 'motion.fwr');
      } catch (e) {
        error = e;
      }
      expect(error, what).toBeInstanceOf(RecordingError);
      expect((error as Error).message, what).toMatch(message);
      expect((error as Error).message, what).toMatch(/^motion\.fwr: /);
      expect((error as Error).message, what).not.toContain('\n');
    }
  });
});
