/**
 * The replay viewer in a real browser (headless Chromium through playwright-core): it opens
 * from a file URL with no console error and no network request, plays, and after scrubbing
 * to tick t draws every robot at the cell the engine executed at t (watched here through an
 * independent afterMotion hook, not through the recording), in the colour of its recorded
 * state (pixels read back from the canvas); the waiting heatmap sums what the test sums;
 * deadlock episodes are listed and jump to their start. Screenshots go to test-artifacts/.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runReplication } from '../sim/engine.ts';
import { prepareSetup } from '../experiments/replications.ts';
import { loadScenarioFile } from '../scenarios/load.ts';
import { prepareRecording } from '../reports/recording/record-run.ts';
import { decodeRecording } from '../reports/recording/format.ts';
import { RobotState, robotStateNames, stateOfCode } from '../reports/recording/robot-state.ts';
import { stateColours } from '../reports/html/palette.ts';
import type { Scenario } from '../sim/model.ts';
import { makeScenario } from './helpers.ts';
import { fleetwright } from './helpers-cli.ts';
import { artifact, launchChromium, openFile, type Browser, type PageWatch } from './browser/chromium.ts';

const folder = mkdtempSync(path.join(os.tmpdir(), 'fleetwright-browser-replay-'));
let browser: Browser;

interface Recorded {
  html: string;
  /** Executed cells per motion tick (tick -> cells). */
  executed: Map<number, Int32Array>;
  start: Int32Array;
  width: number;
  codes: Uint8Array;
  robots: number;
}

/** Records replication 0 of `scenario` to a file, watching the executed positions on the side, and writes the viewer with the CLI. */
function record(scenario: Scenario, name: string, window: string): Recorded {
  const setup = prepareSetup(scenario);
  const file = path.join(folder, `${name}.fwr`);
  const recording = prepareRecording(setup, file, window);
  const executed = new Map<number, Int32Array>();
  let start: Int32Array | null = null;
  const result = runReplication(setup, 0, {
    afterMotion: (tick, world) => {
      recording.hooks.afterMotion!(tick, world);
      executed.set(tick, Int32Array.from(world.robotCell));
    },
  });
  recording.write(result);
  const decoded = decodeRecording(readFileSync(file), file);
  start = Int32Array.from(decoded.data.initial);
  const html = path.join(folder, `${name}.html`);
  const cli = fleetwright('replay', file, '--html', html);
  expect(cli.status, cli.stderr).toBe(0);
  return { html, executed, start, width: setup.layout.width, codes: decoded.data.codes, robots: scenario.fleet.robots };
}

function truthAt(recorded: Recorded, tick: number): Int32Array {
  let cells = recorded.start;
  let at = -1;
  for (const [t, c] of recorded.executed) if (t <= tick && t > at) [cells, at] = [c, t];
  return cells;
}

async function ready(watch: PageWatch): Promise<void> {
  await waitFor(watch, 'window.__fleetwrightReplay?.ready === true');
}

/** What the viewer's test hook returns for the last drawn frame (positions in cell units, centres at +0.5). */
interface Drawn {
  frame: number;
  x: number[];
  y: number[];
  /** CSS pixels per cell; the canvas has devicePixelRatio device pixels per CSS pixel. */
  pixelsPerCell: number;
  devicePixelRatio: number;
}

// Code run inside the page is passed as text: the Node-side type check has no DOM library.
const inPage = <T>(watch: PageWatch, expression: string): Promise<T> => watch.page.evaluate(expression) as Promise<T>;

/** Polls an expression (waitForFunction would need eval, which the page's policy forbids). */
async function waitFor(watch: PageWatch, expression: string, timeoutMs = 20_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!(await inPage<boolean>(watch, expression))) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${expression}`);
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
}

let demo: Recorded;
let corridor: Recorded;

beforeAll(async () => {
  browser = await launchChromium();
  const scenario = loadScenarioFile('scenarios/demo-sortation.yaml', { hours: 0.25, replications: 1 });
  demo = record(scenario, 'demo', '0:600');
  // The head-on corridor of test/greedy-reactive.test.ts: a deadlock from tick 6, cleared at 426.
  const w = 10;
  const c = (x: number, y: number) => y * w + x;
  corridor = record(
    makeScenario({
      layout: ['##########', '#HPD##DPH#', '#........#', '#####.####', '##########'].join('\n'),
      robots: 2,
      policy: 'greedy-reactive',
      pickupSeconds: 2,
      dropSeconds: 2,
      hours: 1,
      demand: {
        kind: 'trace',
        mode: 'delivery',
        tracePath: 'inline',
        tasks: [
          { releaseSeconds: 0, pickup: c(2, 1), drop: c(6, 1) },
          { releaseSeconds: 0, pickup: c(7, 1), drop: c(3, 1) },
        ],
      },
    }),
    'corridor',
    '0:900',
  );
});

afterAll(async () => {
  await browser?.close();
  rmSync(folder, { recursive: true, force: true });
});

const hex = (rgb: number[]) => `#${rgb.slice(0, 3).map((v) => v.toString(16).padStart(2, '0')).join('')}`;

describe('replay viewer in Chromium', () => {
  it('opens from a file URL with no console error and no network request, and plays', async () => {
    const watch = await openFile(browser, demo.html);
    await ready(watch);
    expect(watch.consoleErrors).toEqual([]);
    expect(watch.pageErrors).toEqual([]);
    expect(watch.requests).toEqual([]);
    expect(await inPage<number>(watch, 'window.__fleetwrightReplay.frames')).toBe(601);
    await watch.page.click('#play');
    await waitFor(watch, 'window.__fleetwrightReplay.frame() > 20');
    expect(await inPage<boolean>(watch, 'window.__fleetwrightReplay.playing()')).toBe(true);
    expect(await watch.page.locator('#play').textContent()).toBe('Pause');
    await watch.page.click('#play');
    const paused = await inPage<number>(watch, 'window.__fleetwrightReplay.frame()');
    expect(Number.isInteger(paused)).toBe(true);
    await watch.page.screenshot({ path: artifact('replay-demo.png'), fullPage: true });
    await watch.page.close();
  });

  it('after scrubbing to tick t draws every robot at its executed cell, in its state colour', async () => {
    const watch = await openFile(browser, demo.html);
    await ready(watch);
    for (const t of [0, 1, 137, 299, 600]) {
      await watch.page.locator('#scrubber').fill(String(t));
      const drawn = await inPage<Drawn>(watch, 'window.__fleetwrightReplay.drawn()');
      expect(drawn.frame).toBe(t);
      const truth = truthAt(demo, t);
      const expected = Array.from(truth, (cell) => [(cell % demo.width) + 0.5, Math.floor(cell / demo.width) + 0.5]);
      expect(drawn.x.map((x, r) => [x, drawn.y[r]]), `tick ${t}`).toEqual(expected);
      // The pixel at each robot's centre has the colour of its recorded state.
      const centres = expected.map(([x, y]) => [Math.floor(x * drawn.pixelsPerCell * drawn.devicePixelRatio), Math.floor(y * drawn.pixelsPerCell * drawn.devicePixelRatio)]);
      const pixels = await inPage<number[][]>(
        watch,
        `(() => { const context = document.getElementById('floor').getContext('2d'); return ${JSON.stringify(centres)}.map(([x, y]) => Array.from(context.getImageData(x, y, 1, 1).data)); })()`,
      );
      for (let r = 0; r < demo.robots; r++) {
        const state = robotStateNames[stateOfCode(demo.codes[t * demo.robots + r])];
        expect(hex(pixels[r]), `robot ${r} at tick ${t} (${state})`).toBe(stateColours[state]);
      }
    }
    await watch.page.close();
  });

  it('scales the canvas to the page width, crisp at a device pixel ratio of 2, and refits when the window changes', async () => {
    const watch = await openFile(browser, demo.html);
    await ready(watch);
    const geometry = () =>
      inPage<{ section: number; css: number; cssHeight: number; backing: number; backingHeight: number; ratio: number }>(
        watch,
        `(() => { const c = document.getElementById('floor'); const r = c.getBoundingClientRect(); return { section: c.closest('section').clientWidth, css: r.width, cssHeight: r.height, backing: c.width, backingHeight: c.height, ratio: window.devicePixelRatio }; })()`,
      );
    // The demo hall is 40 x 20 cells: whole pixels per cell, as wide as the viewer allows (within one cell).
    const wide = await geometry();
    expect(wide.css).toBeLessThanOrEqual(wide.section);
    expect(wide.css).toBeGreaterThan(wide.section - 40 - 4);
    expect(wide.css % 40).toBe(0);
    expect(wide.cssHeight).toBe(wide.css / 2);
    expect(wide.backing).toBe(wide.css * wide.ratio);
    // A narrower window at twice the pixel density (a high-DPI laptop): the backing store doubles, the floor refits.
    const session = await watch.page.context().newCDPSession(watch.page);
    await session.send('Emulation.setDeviceMetricsOverride', { width: 700, height: 900, deviceScaleFactor: 2, mobile: false });
    await waitFor(watch, 'window.devicePixelRatio === 2 && window.__fleetwrightReplay.drawn().devicePixelRatio === 2');
    const dense = await geometry();
    expect(dense.ratio).toBe(2);
    expect(dense.css).toBeLessThan(wide.css);
    expect(dense.css).toBeGreaterThan(dense.section - 40 - 4);
    expect([dense.backing, dense.backingHeight]).toEqual([dense.css * 2, dense.cssHeight * 2]);
    // Robots are drawn at their cells in device pixels too: the pixel at each centre has the state's colour.
    const t = 137;
    await watch.page.locator('#scrubber').fill(String(t));
    const drawn = await inPage<Drawn & { devicePixelRatio: number }>(watch, 'window.__fleetwrightReplay.drawn()');
    const centres = drawn.x.map((x, r) => [Math.floor(x * drawn.pixelsPerCell * 2), Math.floor(drawn.y[r] * drawn.pixelsPerCell * 2)]);
    const pixels = await inPage<number[][]>(
      watch,
      `(() => { const context = document.getElementById('floor').getContext('2d'); return ${JSON.stringify(centres)}.map(([x, y]) => Array.from(context.getImageData(x, y, 1, 1).data)); })()`,
    );
    for (let r = 0; r < demo.robots; r++) expect(hex(pixels[r]), `robot ${r}`).toBe(stateColours[robotStateNames[stateOfCode(demo.codes[t * demo.robots + r])]]);
    await session.detach();
    await watch.page.close();
  });

  it('the heatmap shows the largest waiting sum per cell up to the current tick', async () => {
    const watch = await openFile(browser, demo.html);
    await ready(watch);
    const t = 450;
    // Summed here from the executed positions and the recorded waiting states, 1 s per tick.
    const sums = new Map<number, number>();
    for (let f = 0; f <= t; f++) {
      const cells = truthAt(demo, f);
      for (let r = 0; r < demo.robots; r++) {
        const state = stateOfCode(demo.codes[f * demo.robots + r]);
        if (state === RobotState.Waiting || state === RobotState.Stalled) sums.set(cells[r], (sums.get(cells[r]) ?? 0) + 1);
      }
    }
    const max = Math.max(0, ...sums.values());
    expect(max).toBeGreaterThan(0);
    await watch.page.locator('#scrubber').fill(String(t));
    await watch.page.check('#heat');
    expect(await watch.page.locator('#heat-max').textContent()).toBe(`darkest: ${max.toFixed(0)} robot-seconds of waiting`);
    await watch.page.screenshot({ path: artifact('replay-demo-heatmap.png'), fullPage: true });
    await watch.page.close();
  });

  it('lists the deadlock episode and jumps to its start', async () => {
    const watch = await openFile(browser, corridor.html);
    await ready(watch);
    expect(watch.consoleErrors).toEqual([]);
    const items = watch.page.locator('#episodes li');
    expect(await items.count()).toBe(1);
    // Hand trace (test/greedy-reactive.test.ts): stalled from 6 s, detected at 126 s, cleared.
    expect(await items.first().textContent()).toMatch(/deadlock: .*stalled from 0:06, detected 2:06.*cleared by the operator/);
    await items.first().locator('button').click();
    expect(await inPage<number>(watch, 'window.__fleetwrightReplay.frame()')).toBe(6);
    const drawn = await inPage<Drawn>(watch, 'window.__fleetwrightReplay.drawn()');
    expect([drawn.x, drawn.y]).toEqual([
      [4.5, 5.5],
      [2.5, 2.5],
    ]);
    await watch.page.locator('#scrubber').fill('200');
    await watch.page.screenshot({ path: artifact('replay-deadlock.png'), fullPage: true });
    await watch.page.close();
  });

  it('a scenario named with markup runs nothing in the viewer', async () => {
    const scenario = loadScenarioFile('test/fixtures/cli-small-hall.yaml', { hours: 0.05 });
    const named = record({ ...scenario, name: '</script><img src=x onerror="window.__pwned = 3"><script>window.__pwned = 4</script>' }, 'named', '0:60');
    const html = readFileSync(named.html, 'utf8');
    const withoutPolicy = path.join(folder, 'named-no-csp.html');
    writeFileSync(withoutPolicy, html.replace(/<meta http-equiv="Content-Security-Policy"[^>]*>/, ''));
    for (const file of [named.html, withoutPolicy]) {
      const watch = await openFile(browser, file);
      await ready(watch);
      expect(await watch.page.evaluate('window.__pwned')).toBeUndefined();
      expect(await watch.page.evaluate('document.images.length')).toBe(0);
      // The viewer's own script and its data block, nothing else.
      expect(await watch.page.evaluate('document.scripts.length')).toBe(2);
      expect(await watch.page.locator('h1').textContent()).toBe('Replay: </script><img src=x onerror="window.__pwned = 3"><script>window.__pwned = 4</script>');
      expect(watch.pageErrors).toEqual([]);
      await watch.page.close();
    }
  });
});
