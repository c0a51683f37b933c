/**
 * The motion recording file (`run --record FILE`, read by `replay`), format version 1.
 * All integers little-endian.
 *
 *   offset  size  field
 *   0       4     signature "FWRC"
 *   4       2     format version (1)
 *   6       2     reserved, 0
 *   8       4     header length H
 *   12      H     header: UTF-8 JSON (RecordingHeader: scenario, floor, robots, window, episodes)
 *   12+H    4     body length B (compressed)
 *   16+H    4     CRC-32 of the uncompressed body
 *   20+H    B     body, raw DEFLATE (RFC 1951) of:
 *                   robots x uint32   cell of each robot at the first frame (y * width + x)
 *                   frames x robots x uint8   per tick and robot: move (bits 0-2: 0 stay,
 *                                    1 north, 2 east, 3 south, 4 west, 7 jump), state
 *                                    (bits 3-5, robot-state.ts), carries a load (bit 6)
 *                   jumps x uint32   target cells of the jump moves, in order
 *
 * Positions are delta-encoded (one step code per robot and tick, so a tick costs one byte
 * per robot before compression), the frames cover only the recorded window, and DEFLATE
 * squeezes the long runs of robots standing still. Reading checks signature, version,
 * lengths and CRC and fails with one line naming the file (RecordingError, exit code 2).
 */
import { crc32, deflateRawSync, inflateRawSync } from 'node:zlib';
import { InputError } from '../../sim/errors.ts';
import type { FrameData } from './frames.ts';

export const recordingSignature = 'FWRC';
export const recordingVersion = 1;

export class RecordingError extends InputError {
  override readonly code = 'BAD_RECORDING';
  constructor(message: string) {
    super(message);
    this.name = 'RecordingError';
  }
}

export interface RecordedEpisode {
  kind: string;
  stallSeconds: number;
  detectSeconds: number;
  endSeconds: number;
  robots: number;
  /** Robot indices, or null when the engine did not name them. */
  members: number[] | null;
  cleared: boolean;
}

export interface RecordingHeader {
  format: 'fleetwright-recording';
  version: number;
  scenario: string;
  policy: string;
  replication: number;
  seed: number;
  robots: number;
  width: number;
  height: number;
  /** The layout rows in the legend of the scenario file. */
  layout: string[];
  cellMeters: number;
  /** Seconds per frame (one tick). */
  tickSeconds: number;
  /** Simulated second of the first frame. */
  startSeconds: number;
  frames: number;
  jumps: number;
  /** Episodes that overlap the window, times in simulated seconds. */
  episodes: RecordedEpisode[];
  fleetwrightVersion: string;
}

export interface Recording {
  header: RecordingHeader;
  data: FrameData;
}

export function bodyBytes(data: FrameData): Uint8Array {
  const size = data.robots * 4 + data.frames * data.robots + data.jumps.length * 4;
  const body = new Uint8Array(size);
  const view = new DataView(body.buffer);
  let offset = 0;
  for (let r = 0; r < data.robots; r++, offset += 4) view.setUint32(offset, data.initial[r], true);
  body.set(data.codes.subarray(0, data.frames * data.robots), offset);
  offset += data.frames * data.robots;
  for (let j = 0; j < data.jumps.length; j++, offset += 4) view.setUint32(offset, data.jumps[j], true);
  return body;
}

export function encodeRecording(recording: Recording): Buffer {
  const header = Buffer.from(JSON.stringify(recording.header), 'utf8');
  const body = bodyBytes(recording.data);
  const compressed = deflateRawSync(body, { level: 9 });
  const out = Buffer.alloc(20 + header.length + compressed.length);
  out.write(recordingSignature, 0, 'latin1');
  out.writeUInt16LE(recordingVersion, 4);
  out.writeUInt16LE(0, 6);
  out.writeUInt32LE(header.length, 8);
  header.copy(out, 12);
  out.writeUInt32LE(compressed.length, 12 + header.length);
  out.writeUInt32LE(crc32(body), 16 + header.length);
  compressed.copy(out, 20 + header.length);
  return out;
}

/** Parses the body's typed arrays once the header says their sizes. */
export function parseBody(header: RecordingHeader, body: Uint8Array): FrameData {
  const view = new DataView(body.buffer, body.byteOffset, body.byteLength);
  const initial = new Uint32Array(header.robots);
  let offset = 0;
  for (let r = 0; r < header.robots; r++, offset += 4) initial[r] = view.getUint32(offset, true);
  const codes = body.slice(offset, offset + header.frames * header.robots);
  offset += header.frames * header.robots;
  const jumps = new Uint32Array(header.jumps);
  for (let j = 0; j < header.jumps; j++, offset += 4) jumps[j] = view.getUint32(offset, true);
  return { robots: header.robots, frames: header.frames, width: header.width, initial, codes, jumps };
}

/** Reads a recording; `name` is the file name used in messages. */
export function decodeRecording(bytes: Uint8Array, name: string): Recording & { compressedBody: Uint8Array } {
  const buffer = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const expected = 'expected a file written by fleetwright run --record';
  if (buffer.length < 12 || buffer.toString('latin1', 0, 4) !== recordingSignature) throw new RecordingError(`${name}: not a fleetwright motion recording (no ${recordingSignature} signature), ${expected}`);
  const version = buffer.readUInt16LE(4);
  if (version !== recordingVersion) throw new RecordingError(`${name}: recording format version ${version}, expected version ${recordingVersion} (record it again with this fleetwright)`);
  const headerLength = buffer.readUInt32LE(8);
  const truncated = (needed: number) => new RecordingError(`${name}: truncated recording (${buffer.length} bytes, at least ${needed} needed), ${expected} in full`);
  if (buffer.length < 20 + headerLength) throw truncated(20 + headerLength);
  let header: RecordingHeader;
  try {
    header = JSON.parse(buffer.toString('utf8', 12, 12 + headerLength));
  } catch {
    throw new RecordingError(`${name}: the recording's header is not valid JSON, ${expected}`);
  }
  const bodyLength = buffer.readUInt32LE(12 + headerLength);
  const checksum = buffer.readUInt32LE(16 + headerLength);
  const start = 20 + headerLength;
  if (buffer.length < start + bodyLength) throw truncated(start + bodyLength);
  if (buffer.length > start + bodyLength) throw new RecordingError(`${name}: ${buffer.length - start - bodyLength} bytes after the end of the recording, ${expected}`);
  const compressedBody = buffer.subarray(start, start + bodyLength);
  let body: Buffer;
  try {
    body = inflateRawSync(compressedBody);
  } catch {
    throw new RecordingError(`${name}: the recording's body does not decompress (damaged file), ${expected}`);
  }
  const size = header.robots * 4 + header.frames * header.robots + header.jumps * 4;
  if (body.length !== size || crc32(body) !== checksum) throw new RecordingError(`${name}: the recording's body fails its checksum (damaged file), ${expected}`);
  return { header, data: parseBody(header, body), compressedBody };
}
