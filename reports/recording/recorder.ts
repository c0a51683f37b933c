/**
 * Records robot positions and states for a window of one replication, through the
 * engine's `afterMotion` hook (called after every executed motion tick). Between motion
 * ticks nobody moves, so the frames of a skipped stretch repeat the last positions; their
 * states are the robots' states at the next executed tick as if standing still (a robot
 * that finished handling in the stretch shows as handling until then: the engine reports
 * no event in between). Robots in a deadlock episode are marked stalled from its detection
 * to its end once the replication is over and the episodes are known.
 *
 * Memory is fixed up front: one byte per robot per frame of the window.
 */
import type { ReplicationHooks, ReplicationRecord } from '../../sim/engine.ts';
import { placeRobots } from '../../sim/engine.ts';
import type { Layout } from '../../sim/layout.ts';
import { World, Phase, isHandling, isLoaded } from '../../sim/world.ts';
import { InputError } from '../../sim/errors.ts';
import { Move, RobotState, loadBit, stateShift, moveMask } from './robot-state.ts';
import type { FrameData } from './frames.ts';
import type { RecordedEpisode, Recording, RecordingHeader } from './format.ts';
import { recordingVersion } from './format.ts';

/** Frames x robots above this is refused (256 MiB of codes). */
export const maxRecordedBytes = 2 ** 28;

export interface RecordingWindow {
  fromSeconds: number;
  toSeconds: number;
}

/** Parses `--record-window FROM:TO` (simulated seconds). */
export function parseRecordingWindow(text: string): RecordingWindow {
  const match = /^\s*(\d+(?:\.\d+)?)\s*:\s*(\d+(?:\.\d+)?)\s*$/.exec(text);
  const from = match ? Number(match[1]) : NaN;
  const to = match ? Number(match[2]) : NaN;
  if (!match || !(to > from)) throw new InputError(`--record-window: got ${JSON.stringify(text)}, expected FROM:TO in simulated seconds with TO > FROM (e.g. 0:1800)`);
  return { fromSeconds: from, toSeconds: to };
}

export interface RecorderSetup {
  layout: Layout;
  robots: number;
  tickSeconds: number;
  /** Last tick of the run. */
  endTick: number;
  window: RecordingWindow;
  scenario: string;
  policy: string;
  seed: number;
  replication: number;
  cellMeters: number;
  fleetwrightVersion: string;
}

export class MotionRecorder {
  readonly startTick: number;
  readonly frames: number;
  private readonly codes: Uint8Array;
  private readonly initial: Uint32Array;
  private readonly previous: Int32Array;
  /** Per robot at the last executed tick: handling until this tick (inclusive), or -1; and the code written. */
  private readonly handlingUntil: Int32Array;
  private readonly lastCode: Uint8Array;
  private readonly jumps: number[] = [];
  /** Frames [0, filled) are written. */
  private filled = 0;
  readonly hooks: ReplicationHooks;

  constructor(private readonly setup: RecorderSetup) {
    const { tickSeconds, window, robots, endTick } = setup;
    this.startTick = Math.min(endTick, Math.round(window.fromSeconds / tickSeconds));
    const lastTick = Math.min(endTick, Math.round(window.toSeconds / tickSeconds));
    this.frames = Math.max(1, lastTick - this.startTick + 1);
    if (this.frames * robots > maxRecordedBytes) {
      throw new InputError(
        `--record-window: ${window.fromSeconds}:${window.toSeconds} holds ${this.frames} ticks x ${robots} robots = ${this.frames * robots} bytes, expected at most ${maxRecordedBytes} (record a shorter window)`,
      );
    }
    this.codes = new Uint8Array(this.frames * robots);
    this.initial = new Uint32Array(robots);
    // Positions before the first motion tick: where the engine places the robots.
    const start = new World(setup.layout, robots);
    placeRobots(start, setup.layout);
    this.previous = Int32Array.from(start.robotCell);
    this.handlingUntil = new Int32Array(robots).fill(-1);
    this.lastCode = new Uint8Array(robots);
    this.hooks = { afterMotion: (tick, world) => this.afterMotion(tick, world) };
  }

  private stillCode(world: World, r: number): number {
    const phase = world.robotPhase[r];
    const state = isHandling(phase) ? RobotState.Handling : phase === Phase.Idle ? RobotState.Parked : RobotState.Waiting;
    return (state << stateShift) | (isLoaded(phase) ? loadBit : 0);
  }

  /** Frames up to `frame` (exclusive) repeat the last positions, robots standing still. */
  private fillUntil(frame: number, world: World): void {
    const robots = this.setup.robots;
    for (let f = this.filled; f < Math.min(frame, this.frames); f++) {
      if (f === 0) this.initial.set(this.previous);
      const base = f * robots;
      const tick = this.startTick + f;
      for (let r = 0; r < robots; r++) {
        // A frame describes the step into its tick: still handling while tick <= the end of the handling.
        const handling = tick <= this.handlingUntil[r];
        this.codes[base + r] = handling ? (RobotState.Handling << stateShift) | (this.lastCode[r] & loadBit) : this.stillCode(world, r);
      }
    }
    this.filled = Math.max(this.filled, Math.min(frame, this.frames));
  }

  private afterMotion(tick: number, world: World): void {
    const frame = tick - this.startTick;
    const robots = this.setup.robots;
    const cells = world.robotCell;
    if (frame >= 0 && frame < this.frames) {
      this.fillUntil(frame, world);
      const width = this.setup.layout.width;
      const base = frame * robots;
      for (let r = 0; r < robots; r++) {
        const from = this.previous[r];
        const to = cells[r];
        const phase = world.robotPhase[r];
        let move: number = Move.Stay;
        if (frame === 0) this.initial[r] = to;
        else if (to === from - width) move = Move.North;
        else if (to === from + 1) move = Move.East;
        else if (to === from + width) move = Move.South;
        else if (to === from - 1) move = Move.West;
        else if (to !== from) {
          move = Move.Jump;
          this.jumps.push(to);
        }
        const moved = frame > 0 ? to !== from : false;
        let state: number;
        if (isHandling(phase)) state = RobotState.Handling;
        else if (phase === Phase.Idle) state = moved ? RobotState.Empty : RobotState.Parked;
        else if (!moved) state = RobotState.Waiting;
        else state = isLoaded(phase) ? RobotState.Loaded : RobotState.Empty;
        this.codes[base + r] = move | (state << stateShift) | (isLoaded(phase) ? loadBit : 0);
      }
      this.filled = frame + 1;
    }
    this.previous.set(cells);
    for (let r = 0; r < robots; r++) {
      this.handlingUntil[r] = isHandling(world.robotPhase[r]) ? world.robotHandlingUntil[r] : -1;
      this.lastCode[r] = isLoaded(world.robotPhase[r]) ? loadBit : 0;
    }
    this.lastWorld = world;
  }

  private lastWorld: World | null = null;

  /** Closes the window after the replication and returns the recording. */
  finish(record: ReplicationRecord): Recording {
    const robots = this.setup.robots;
    if (this.filled < this.frames) {
      const world = this.lastWorld ?? new World(this.setup.layout, robots);
      if (!this.lastWorld) placeRobots(world, this.setup.layout);
      this.fillUntil(this.frames, world);
    }
    const tickSeconds = this.setup.tickSeconds;
    const windowEnd = this.startTick + this.frames - 1;
    const episodes: RecordedEpisode[] = [];
    for (const e of record.metrics.episodes as (typeof record.metrics.episodes[number] & { kind?: string; members?: number[] })[]) {
      if (e.endTick < this.startTick || e.stallTick > windowEnd) continue;
      const members = Array.isArray(e.members) ? e.members : null;
      episodes.push({
        kind: e.kind ?? 'deadlock',
        stallSeconds: e.stallTick * tickSeconds,
        detectSeconds: e.detectTick * tickSeconds,
        endSeconds: e.endTick * tickSeconds,
        robots: e.robots,
        members,
        cleared: e.cleared,
      });
      if (members === null) continue;
      const from = Math.max(0, e.detectTick - this.startTick);
      const to = Math.min(this.frames, e.endTick - this.startTick);
      for (const r of members) {
        for (let f = from; f < to; f++) {
          const i = f * robots + r;
          this.codes[i] = (this.codes[i] & (moveMask | loadBit)) | (RobotState.Stalled << stateShift);
        }
      }
    }
    const header: RecordingHeader = {
      format: 'fleetwright-recording',
      version: recordingVersion,
      scenario: this.setup.scenario,
      policy: this.setup.policy,
      replication: this.setup.replication,
      seed: this.setup.seed,
      robots,
      width: this.setup.layout.width,
      height: this.setup.layout.height,
      layout: layoutRows(this.setup.layout),
      cellMeters: this.setup.cellMeters,
      tickSeconds,
      startSeconds: this.startTick * tickSeconds,
      frames: this.frames,
      jumps: this.jumps.length,
      episodes,
      fleetwrightVersion: this.setup.fleetwrightVersion,
    };
    const data: FrameData = { robots, frames: this.frames, width: this.setup.layout.width, initial: this.initial, codes: this.codes, jumps: Uint32Array.from(this.jumps) };
    return { header, data };
  }
}

/** The floor in the legend of the scenario file, one string per row, rebuilt from the parsed layout. */
function layoutRows(layout: Layout): string[] {
  const legend = '#.PDSHC'; // indexed by CellKind
  const rows: string[] = [];
  for (let y = 0; y < layout.height; y++) {
    let row = '';
    for (let x = 0; x < layout.width; x++) row += legend[layout.kind[y * layout.width + x]];
    rows.push(row);
  }
  return rows;
}
