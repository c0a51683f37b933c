/**
 * Benchmark: the replay viewer with 1,000 robots over 10 simulated minutes (PIBT on the
 * generated 150 x 80 hall, saturated demand), in headless Chromium. Reports the recording's
 * size, the page's size, the time to seek and draw one frame through the scrubber (the worst
 * case: decode from the nearest keyframe, then draw), and while playing at 60x (one tick
 * per animation frame) the frames per second the browser delivered and how many frames took
 * longer than 50 ms. The baseline is the browser's own frame rate in the same run (an empty
 * requestAnimationFrame loop).
 *
 * Run directly: `npx tsx bench/replay.ts [--json]`; needs /usr/bin/chromium (DEVELOPERS.md).
 */
import { mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { pibt } from '../policies/pibt/index.ts';
import { generateSortationHall } from '../scenarios/generate.ts';
import { DistanceTables } from '../sim/distance-table.ts';
import { runReplication } from '../sim/engine.ts';
import { parseLayout } from '../sim/layout.ts';
import { prepareRecording } from '../reports/recording/record-run.ts';
import { decodeRecording } from '../reports/recording/format.ts';
import { replayPage } from '../reports/html/replay-page.ts';
import { makeScenario } from '../test/helpers.ts';
import { launchChromium, openFile } from '../test/browser/chromium.ts';

export interface ReplayBenchRow {
  name: 'replay';
  robots: number;
  recordedSeconds: number;
  recordingBytes: number;
  pageBytes: number;
  msPerScrubbedFrame: number;
  playbackFps: number;
  baselineFps: number;
  framesOver50ms: number;
}

export async function benchReplay(robots = 1000, seconds = 600): Promise<ReplayBenchRow> {
  const folder = mkdtempSync(path.join(os.tmpdir(), 'fleetwright-bench-replay-'));
  const browser = await launchChromium();
  try {
    const layoutText = generateSortationHall({ width: 150, height: 80, parking: robots });
    const scenario = makeScenario({ layout: layoutText, robots, policy: 'pibt', hours: seconds / 3600, pickupSeconds: 4, dropSeconds: 3 });
    const layout = parseLayout(layoutText);
    const setup = { scenario, layout, distances: new DistanceTables(layout), policy: pibt, policyOptions: {} };
    const file = path.join(folder, 'motion.fwr');
    const recording = prepareRecording(setup, file, `0:${seconds}`);
    recording.write(runReplication(setup, 0, recording.hooks));
    const decoded = decodeRecording(readFileSync(file), 'motion.fwr');
    const html = path.join(folder, 'replay.html');
    writeFileSync(html, replayPage(decoded.header, decoded.compressedBody, 'motion.fwr'));
    const watch = await openFile(browser, html);
    // Code run inside the page is text: the Node-side type check has no DOM library, and tsx's
    // helpers must not leak into functions serialized to the page.
    // Polled: waitForFunction would need eval, which the page's policy forbids.
    while (!(await watch.page.evaluate('window.__fleetwrightReplay?.ready === true'))) await new Promise((resolve) => setTimeout(resolve, 50));
    const scrub = (await watch.page.evaluate(`(() => {
      const input = document.getElementById('scrubber');
      const start = performance.now();
      for (let f = 0; f < ${decoded.header.frames}; f++) { input.value = String(f); input.dispatchEvent(new Event('input')); }
      return (performance.now() - start) / ${decoded.header.frames};
    })()`)) as number;
    const frameTimes = async (play: boolean): Promise<number[]> =>
      (await watch.page.evaluate(`new Promise((resolve) => {
        const playing = ${play};
        if (playing) {
          document.getElementById('speed').value = '60';
          document.getElementById('scrubber').value = '0';
          document.getElementById('scrubber').dispatchEvent(new Event('input'));
          document.getElementById('play').click();
        }
        const stamps = [];
        const step = function (now) {
          stamps.push(now);
          if (now - stamps[0] < 3000) requestAnimationFrame(step);
          else { if (playing) document.getElementById('play').click(); resolve(stamps); }
        };
        requestAnimationFrame(step);
      })`)) as number[];
    const fps = (stamps: number[]) => ((stamps.length - 1) / (stamps[stamps.length - 1] - stamps[0])) * 1000;
    const baseline = await frameTimes(false);
    const playing = await frameTimes(true);
    let long = 0;
    for (let i = 1; i < playing.length; i++) if (playing[i] - playing[i - 1] > 50) long++;
    return {
      name: 'replay',
      robots,
      recordedSeconds: seconds,
      recordingBytes: statSync(file).size,
      pageBytes: statSync(html).size,
      msPerScrubbedFrame: Number(scrub.toFixed(2)),
      playbackFps: Number(fps(playing).toFixed(1)),
      baselineFps: Number(fps(baseline).toFixed(1)),
      framesOver50ms: long,
    };
  } finally {
    await browser.close();
    rmSync(folder, { recursive: true, force: true });
  }
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const row = await benchReplay();
  if (process.argv.includes('--json')) process.stdout.write(`${JSON.stringify(row)}\n`);
  else
    process.stdout.write(
      `replay, ${row.robots} robots over ${row.recordedSeconds} s: recording ${row.recordingBytes} bytes, page ${row.pageBytes} bytes; ` +
        `seek + draw ${row.msPerScrubbedFrame} ms per frame; playing ${row.playbackFps} fps (browser alone ${row.baselineFps} fps), ${row.framesOver50ms} frames over 50 ms\n`,
    );
}
