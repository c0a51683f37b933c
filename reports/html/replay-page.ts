/**
 * `fleetwright replay <recording> --html FILE`: a self-contained viewer page. The
 * recording's header and its compressed body (base64) go into one JSON data block; the
 * viewer (browser/replay-viewer.ts, bundled here by esbuild into one inline script allowed
 * by its hash) inflates it with the browser's DecompressionStream and draws on a canvas.
 */
import { buildSync } from 'esbuild';
import path from 'node:path';
import { escapeHtml, jsonForScript } from './escape.ts';
import { htmlPage } from './page.ts';
import { heatColours, stateColours, wallColour } from './palette.ts';
import { safetyBlock } from './sections.ts';
import { duration } from './format.ts';
import type { RecordingHeader } from '../recording/format.ts';

let viewerSource: string | null = null;

/** The viewer bundled to one script (built once per process). */
export function viewerScript(): string {
  if (viewerSource === null) {
    const result = buildSync({
      entryPoints: [path.join(import.meta.dirname, 'browser', 'replay-viewer.ts')],
      bundle: true,
      format: 'iife',
      minify: true,
      target: 'es2020',
      write: false,
      legalComments: 'none',
      logLevel: 'silent',
    });
    const text = result.outputFiles[0].text;
    // An inline script ends at the first `</script`; the bundle must not contain one.
    if (/<\/script/i.test(text)) throw new Error('replay viewer bundle contains </script');
    viewerSource = text;
  }
  return viewerSource;
}

const stateLabels: [keyof typeof stateColours, string, string][] = [
  ['empty', 'empty', 'driving without a load'],
  ['loaded', 'loaded', 'driving with a load'],
  ['handling', 'handling', 'loading or unloading at a station'],
  ['waiting', 'waiting', 'holding a task, did not move'],
  ['stalled', 'stalled', 'in a deadlock episode'],
  ['parked', 'parked', 'no task'],
];

const viewerStyle = `
.viewer { margin: 12px 0; }
.controls { display: flex; flex-wrap: wrap; gap: 10px 16px; align-items: center; margin: 8px 0; }
.controls button { font: inherit; padding: 4px 14px; min-width: 80px; }
.controls input[type=range] { flex: 1 1 320px; }
#time { font-variant-numeric: tabular-nums; min-width: 130px; }
.canvas-box { display: inline-block; overflow: auto; border: 1px solid #ccc; max-width: 100%; }
canvas#floor { display: block; }
ul.legend { list-style: none; padding: 0; display: flex; flex-wrap: wrap; gap: 6px 16px; font-size: 0.88rem; }
ul.legend .swatch { display: inline-block; width: 12px; height: 12px; border: 1px solid #222; vertical-align: -1px; margin-right: 4px; }
ul.legend .swatch.square { border-radius: 0; }
ul.legend .swatch.round { border-radius: 50%; }
ul.legend .count { font-weight: 600; font-variant-numeric: tabular-nums; }
#episodes button { font: inherit; font-size: 0.85rem; margin-right: 6px; }
#viewer-error { color: #b00; font-weight: 600; }
`;

export function replayPage(header: RecordingHeader, compressedBody: Uint8Array, sourceName: string): string {
  const title = `Replay: ${header.scenario}`;
  const windowSeconds = header.frames * header.tickSeconds;
  const config = {
    header,
    body: Buffer.from(compressedBody).toString('base64'),
    stateColours,
    heatColours: [...heatColours],
    wallColour,
  };
  const legend = stateLabels
    .map(([key, label, meaning]) => `<li data-state="${key}"><span class="swatch round" style="background:${stateColours[key]}"></span>${escapeHtml(label)} <span class="count">0</span> <span class="meaning">(${escapeHtml(meaning)})</span></li>`)
    .join('');
  const body = `<header><h1>${escapeHtml(title)}</h1>
<p class="subtitle">${escapeHtml(`${header.policy}, ${header.robots} robots, replication ${header.replication + 1} (seed ${header.seed}); ${duration(windowSeconds)} recorded from ${duration(header.startSeconds)} of simulated time; file ${sourceName}`)}</p></header>
${safetyBlock()}
<section class="viewer" aria-label="replay">
<div class="controls">
<button type="button" id="play" aria-pressed="false">Play</button>
<label>speed <select id="speed"><option value="1">1x</option><option value="2">2x</option><option value="5">5x</option><option value="10" selected>10x</option><option value="30">30x</option><option value="60">60x</option></select></label>
<input type="range" id="scrubber" min="0" max="0" value="0" step="1" aria-label="simulated time">
<span id="time">0:00</span>
<label><input type="checkbox" id="heat"> waiting heatmap</label> <span id="heat-max" class="table-note"></span>
</div>
<p id="viewer-error" role="alert"></p>
<div class="canvas-box"><canvas id="floor" role="img" aria-label="${escapeHtml(`floor of ${header.width} x ${header.height} cells with ${header.robots} robots`)}"></canvas></div>
<ul class="legend" id="counts">${legend}<li><span class="swatch square" style="background:#fff"></span>square: carrying a load, round: empty-handed</li></ul>
<p class="table-note">Walls dark, parking and storage light grey, stations outlined (P pickup, D drop). The heatmap sums robot-seconds of waiting per cell from the start of the recording to the current time. Space plays and pauses, arrow keys step one tick.</p>
</section>
<h2>Deadlock episodes in the window</h2>
<ol id="episodes"></ol>
<footer><p>${escapeHtml(`Recorded by fleetwright ${header.fleetwrightVersion ?? ''}; one frame per ${header.tickSeconds} s tick, cells of ${header.cellMeters} m.`)}</p></footer>`;
  return htmlPage({ title, body, scripts: [viewerScript()], data: { 'replay-data': jsonForScript(config) }, extraStyle: viewerStyle });
}
