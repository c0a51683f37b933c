/**
 * `run --record FILE [--record-window FROM:TO]`: records replication 0 of a run. Checks the
 * file's folder and the window before anything runs, and writes the file atomically after
 * the replication (a failed run leaves no half-written recording).
 */
import { existsSync, statSync } from 'node:fs';
import path from 'node:path';
import type { ReplicationHooks, ReplicationRecord, SimulationSetup } from '../../sim/engine.ts';
import { tickSecondsOf } from '../../sim/model.ts';
import { InputError } from '../../sim/errors.ts';
import { writeFileAtomic } from '../write-files.ts';
import { fleetwrightVersion } from '../run-context.ts';
import { MotionRecorder, parseRecordingWindow } from './recorder.ts';
import { encodeRecording } from './format.ts';

/** Default window: the first half hour of simulated time. */
export const defaultRecordingWindow = '0:1800';

export interface PreparedRecording {
  /** Hooks for replication 0. */
  hooks: ReplicationHooks;
  /** Writes the file; returns its size in bytes. */
  write(record: ReplicationRecord): number;
  file: string;
}

export function prepareRecording(setup: SimulationSetup, file: string, windowText = defaultRecordingWindow): PreparedRecording {
  const folder = path.dirname(path.resolve(file));
  if (!existsSync(folder) || !statSync(folder).isDirectory()) throw new InputError(`--record: got ${JSON.stringify(file)}, expected a file path in an existing folder`);
  if (existsSync(file) && statSync(file).isDirectory()) throw new InputError(`--record: got ${JSON.stringify(file)}, which is a folder; expected a file path`);
  const scenario = setup.scenario;
  const tickSeconds = tickSecondsOf(scenario);
  const recorder = new MotionRecorder({
    layout: setup.layout,
    robots: scenario.fleet.robots,
    tickSeconds,
    endTick: Math.max(1, Math.round((scenario.run.hours * 3600) / tickSeconds)),
    window: parseRecordingWindow(windowText),
    scenario: scenario.name,
    policy: scenario.policy.name,
    seed: scenario.run.seed,
    replication: 0,
    cellMeters: scenario.units.cellMeters,
    fleetwrightVersion,
  });
  return {
    hooks: recorder.hooks,
    file,
    write(record) {
      const bytes = encodeRecording(recorder.finish(record));
      writeFileAtomic(file, bytes);
      return bytes.length;
    },
  };
}
