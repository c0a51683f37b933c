/**
 * The replay viewer that runs in the browser (bundled into replay.html by esbuild; no
 * network, no inline handlers: every control is wired here with addEventListener, every
 * text from the recording set with textContent).
 *
 * Drawing: one canvas as wide as the viewer (whole CSS pixels per cell, a backing store at
 * the screen's device pixel ratio so it stays crisp on high-DPI screens, refitted on
 * resize); the floor is drawn once per size to an offscreen canvas and copied each frame; robots are batched into one path per colour and shape, so a frame costs a few
 * fill calls whatever the fleet size (no DOM node per robot). While playing, positions
 * are interpolated between ticks; paused or scrubbed, they are the recorded cells.
 * The waiting heatmap sums the robot-seconds of waiting (and stalled) per cell from the
 * start of the window to the current time.
 */
import { FrameIndex, type FrameData } from '../../recording/frames.ts';
import { RobotState, loadBit, stateOfCode } from '../../recording/robot-state.ts';

interface Episode {
  kind: string;
  stallSeconds: number;
  detectSeconds: number;
  endSeconds: number;
  robots: number;
  members: number[] | null;
  cleared: boolean;
}

interface Header {
  scenario: string;
  policy: string;
  robots: number;
  width: number;
  height: number;
  layout: string[];
  cellMeters: number;
  tickSeconds: number;
  startSeconds: number;
  frames: number;
  jumps: number;
  episodes: Episode[];
}

interface ViewerConfig {
  header: Header;
  /** base64 of the raw-DEFLATE body. */
  body: string;
  stateColours: Record<string, string>;
  heatColours: string[];
  wallColour: string;
}

declare global {
  interface Window {
    /** Test hook: what the viewer drew last, and controls. */
    __fleetwrightReplay?: {
      ready: boolean;
      frame(): number;
      /** Positions in cells (centres at +0.5); pixelsPerCell in CSS pixels, devicePixelRatio device pixels per CSS pixel. */
      drawn(): { frame: number; x: number[]; y: number[]; pixelsPerCell: number; devicePixelRatio: number; originX: number; originY: number };
      playing(): boolean;
      frames: number;
    };
  }
}

const stateNames = ['parked', 'empty', 'loaded', 'handling', 'waiting', 'stalled'];

function byId<T extends HTMLElement>(id: string): T {
  const element = document.getElementById(id);
  if (!element) throw new Error(`replay page lacks #${id}`);
  return element as T;
}

async function inflate(base64: string): Promise<Uint8Array> {
  const binary = atob(base64);
  const bytes = new Uint8Array(binary.length);
  for (let i = 0; i < binary.length; i++) bytes[i] = binary.charCodeAt(i);
  const stream = new Blob([bytes]).stream().pipeThrough(new DecompressionStream('deflate-raw'));
  return new Uint8Array(await new Response(stream).arrayBuffer());
}

function parseBody(header: Header, body: Uint8Array): FrameData {
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

function clock(seconds: number): string {
  const s = Math.max(0, Math.round(seconds));
  const h = Math.floor(s / 3600);
  const m = Math.floor((s % 3600) / 60);
  const r = s % 60;
  return `${h > 0 ? `${h}:` : ''}${String(m).padStart(h > 0 ? 2 : 1, '0')}:${String(r).padStart(2, '0')}`;
}

async function main(): Promise<void> {
  const config: ViewerConfig = JSON.parse(byId('replay-data').textContent ?? '{}');
  const header = config.header;
  const data = parseBody(header, await inflate(config.body));
  const index = new FrameIndex(data, 32);
  const { robots, width, height, frames } = header;

  const canvas = byId<HTMLCanvasElement>('floor');
  const scrubber = byId<HTMLInputElement>('scrubber');
  const playButton = byId<HTMLButtonElement>('play');
  const speedSelect = byId<HTMLSelectElement>('speed');
  const heatToggle = byId<HTMLInputElement>('heat');
  const timeLabel = byId('time');
  const countsList = byId('counts');
  const episodeList = byId('episodes');

  // Canvas geometry: whole CSS pixels per cell (at least 2, at most 40) so that the floor
  // fills the viewer's width (and fits the window's height), and a backing store of
  // devicePixelRatio device pixels per CSS pixel, so lines and robots stay crisp on high-DPI
  // screens. Recomputed when the page is resized.
  const viewer = canvas.closest('section') ?? document.body;
  let pixelsPerCell = 2;
  let ratio = 1;
  const context = canvas.getContext('2d', { alpha: false })!;
  const floorLayer = document.createElement('canvas');
  const floor = floorLayer.getContext('2d')!;

  const drawFloor = () => {
    floor.setTransform(ratio, 0, 0, ratio, 0, 0);
    floor.fillStyle = '#ffffff';
    floor.fillRect(0, 0, width * pixelsPerCell, height * pixelsPerCell);
    for (let y = 0; y < height; y++) {
      const row = header.layout[y] ?? '';
      for (let x = 0; x < width; x++) {
        const c = row[x];
        const px = x * pixelsPerCell;
        const py = y * pixelsPerCell;
        if (c === '#') {
          floor.fillStyle = config.wallColour;
          floor.fillRect(px, py, pixelsPerCell, pixelsPerCell);
        } else if (c === 'H' || c === 'S' || c === 'C') {
          floor.fillStyle = '#e6e6e6';
          floor.fillRect(px, py, pixelsPerCell, pixelsPerCell);
        } else if (c === 'P' || c === 'D') {
          floor.strokeStyle = '#111111';
          floor.lineWidth = Math.max(1, pixelsPerCell / 10);
          floor.strokeRect(px + 1, py + 1, pixelsPerCell - 2, pixelsPerCell - 2);
        }
        if (pixelsPerCell >= 14 && c !== '#' && c !== '.') {
          floor.fillStyle = c === 'P' || c === 'D' ? '#111111' : '#777777';
          floor.font = `${Math.round(pixelsPerCell * 0.42)}px system-ui, sans-serif`;
          floor.textAlign = 'left';
          floor.textBaseline = 'top';
          floor.fillText(c, px + 2, py + 1);
        }
      }
    }
  };

  /** Sizes the canvas to the viewer; true when the size changed. */
  const fit = (): boolean => {
    const available = Math.max(160, viewer.clientWidth - 4);
    const tallest = Math.max(240, window.innerHeight - 180);
    const cell = Math.max(2, Math.min(40, Math.floor(available / width), Math.floor(tallest / height)));
    const dpr = window.devicePixelRatio || 1;
    if (cell === pixelsPerCell && dpr === ratio && canvas.width > 0 && floorLayer.width === canvas.width) return false;
    pixelsPerCell = cell;
    ratio = dpr;
    canvas.width = Math.round(width * pixelsPerCell * ratio);
    canvas.height = Math.round(height * pixelsPerCell * ratio);
    canvas.style.width = `${width * pixelsPerCell}px`;
    canvas.style.height = `${height * pixelsPerCell}px`;
    context.setTransform(ratio, 0, 0, ratio, 0, 0);
    floorLayer.width = canvas.width;
    floorLayer.height = canvas.height;
    drawFloor();
    return true;
  };
  canvas.width = 0;
  fit();

  // State.
  let frame = 0;
  let playing = false;
  let lastTime = 0;
  const current = new Int32Array(robots);
  const next = new Int32Array(robots);
  const heat = new Float64Array(width * height);
  let heatThrough = -1;
  const drawnX: number[] = new Array(robots).fill(0);
  const drawnY: number[] = new Array(robots).fill(0);
  let drawnFrame = 0;

  const heatUpTo = (target: number) => {
    // Waiting robot-seconds per cell over frames [0, target]; forward steps reuse the sum.
    if (target < heatThrough) {
      heat.fill(0);
      heatThrough = -1;
    }
    const cells = new Int32Array(robots);
    index.cellsAt(heatThrough + 1, cells);
    for (let f = heatThrough + 1; f <= target; f++) {
      if (f > heatThrough + 1) index.cellsAt(f, cells);
      const base = f * robots;
      for (let r = 0; r < robots; r++) {
        const state = stateOfCode(data.codes[base + r]);
        if (state === RobotState.Waiting || state === RobotState.Stalled) heat[cells[r]] += header.tickSeconds;
      }
    }
    heatThrough = target;
  };

  const draw = () => {
    const whole = Math.floor(frame);
    const fraction = playing ? frame - whole : 0;
    index.cellsAt(whole, current);
    if (fraction > 0 && whole + 1 < frames) index.cellsAt(whole + 1, next);
    context.drawImage(floorLayer, 0, 0, width * pixelsPerCell, height * pixelsPerCell);
    if (heatToggle.checked) {
      heatUpTo(whole);
      let max = 0;
      for (let c = 0; c < heat.length; c++) if (heat[c] > max) max = heat[c];
      if (max > 0) {
        const classes = config.heatColours.length;
        context.globalAlpha = 0.85;
        for (let c = 0; c < heat.length; c++) {
          if (heat[c] <= 0) continue;
          context.fillStyle = config.heatColours[Math.min(classes - 1, Math.floor((heat[c] / max) * classes))];
          context.fillRect((c % width) * pixelsPerCell, Math.floor(c / width) * pixelsPerCell, pixelsPerCell, pixelsPerCell);
        }
        context.globalAlpha = 1;
      }
      byId('heat-max').textContent = max > 0 ? `darkest: ${max.toFixed(0)} robot-seconds of waiting` : 'no waiting yet';
    }
    // One path per state and shape (circle: empty-handed, square: carrying a load).
    const counts = new Array(stateNames.length).fill(0);
    const base = whole * robots;
    const radius = Math.max(1, pixelsPerCell * 0.36);
    for (let state = 0; state < stateNames.length; state++) {
      for (let square = 0; square < 2; square++) {
        context.beginPath();
        let any = false;
        for (let r = 0; r < robots; r++) {
          const code = data.codes[base + r];
          if (stateOfCode(code) !== state || ((code & loadBit) !== 0) !== (square === 1)) continue;
          let x = current[r] % width;
          let y = Math.floor(current[r] / width);
          if (fraction > 0 && whole + 1 < frames) {
            const nx = next[r] % width;
            const ny = Math.floor(next[r] / width);
            // Interpolate single steps only; a jump (operator clearing) is drawn where it lands.
            if (Math.abs(nx - x) + Math.abs(ny - y) === 1) {
              x += (nx - x) * fraction;
              y += (ny - y) * fraction;
            }
          }
          const cx = (x + 0.5) * pixelsPerCell;
          const cy = (y + 0.5) * pixelsPerCell;
          drawnX[r] = x + 0.5;
          drawnY[r] = y + 0.5;
          if (square === 1) context.rect(cx - radius, cy - radius, radius * 2, radius * 2);
          else {
            context.moveTo(cx + radius, cy);
            context.arc(cx, cy, radius, 0, Math.PI * 2);
          }
          counts[state]++;
          any = true;
        }
        if (!any) continue;
        context.fillStyle = config.stateColours[stateNames[state]];
        context.fill();
        if (pixelsPerCell >= 6) {
          context.lineWidth = 1;
          context.strokeStyle = '#222222';
          context.stroke();
        }
      }
    }
    drawnFrame = whole;
    const seconds = header.startSeconds + frame * header.tickSeconds;
    timeLabel.textContent = `${clock(seconds)} (${seconds.toFixed(0)} s)`;
    for (let s = 0; s < stateNames.length; s++) {
      const item = countsList.querySelector(`[data-state="${stateNames[s]}"] .count`);
      if (item) item.textContent = String(counts[s]);
    }
    if (!playing || Math.floor(Number(scrubber.value)) !== whole) scrubber.value = String(whole);
  };

  const setPlaying = (on: boolean) => {
    playing = on && frames > 1;
    playButton.textContent = playing ? 'Pause' : 'Play';
    playButton.setAttribute('aria-pressed', playing ? 'true' : 'false');
    if (playing) {
      if (frame >= frames - 1) frame = 0;
      lastTime = performance.now();
      requestAnimationFrame(tick);
    } else {
      frame = Math.floor(frame);
      draw();
    }
  };

  const tick = (now: number) => {
    if (!playing) return;
    const seconds = Math.min(0.25, (now - lastTime) / 1000);
    lastTime = now;
    frame += (seconds * Number(speedSelect.value)) / header.tickSeconds;
    if (frame >= frames - 1) {
      frame = frames - 1;
      draw();
      setPlaying(false);
      return;
    }
    draw();
    requestAnimationFrame(tick);
  };

  const seek = (target: number) => {
    frame = Math.max(0, Math.min(frames - 1, Math.round(target)));
    draw();
  };

  scrubber.max = String(frames - 1);
  scrubber.addEventListener('input', () => {
    if (playing) setPlaying(false);
    seek(Number(scrubber.value));
  });
  playButton.addEventListener('click', () => setPlaying(!playing));
  heatToggle.addEventListener('change', draw);
  // A resize (window, zoom, a screen of another pixel density) refits the canvas and redraws.
  window.addEventListener('resize', () => {
    if (fit()) draw();
  });
  document.addEventListener('keydown', (event) => {
    if (event.target instanceof HTMLSelectElement || event.target instanceof HTMLInputElement) return;
    if (event.key === ' ') {
      event.preventDefault();
      setPlaying(!playing);
    } else if (event.key === 'ArrowRight') seek(frame + 1);
    else if (event.key === 'ArrowLeft') seek(frame - 1);
  });

  // Episodes, each with a jump to its start (the first tick without progress).
  if (header.episodes.length === 0) {
    const item = document.createElement('li');
    item.textContent = 'No deadlock episode in the recorded window.';
    episodeList.appendChild(item);
  }
  header.episodes.forEach((episode, i) => {
    const item = document.createElement('li');
    const button = document.createElement('button');
    button.type = 'button';
    button.textContent = `Go to ${clock(episode.stallSeconds)}`;
    button.dataset.episode = String(i);
    button.addEventListener('click', () => {
      setPlaying(false);
      seek((Math.max(episode.stallSeconds, header.startSeconds) - header.startSeconds) / header.tickSeconds);
    });
    const text = document.createElement('span');
    const who = episode.members ? `robots ${episode.members.map((m) => m + 1).join(', ')}` : `${episode.robots} robots (not named by this engine version)`;
    text.textContent = ` ${episode.kind}: ${who}; stalled from ${clock(episode.stallSeconds)}, detected ${clock(episode.detectSeconds)}, ended ${clock(episode.endSeconds)}${episode.cleared ? ', cleared by the operator' : ''}`;
    item.append(button, text);
    episodeList.appendChild(item);
  });

  window.__fleetwrightReplay = {
    ready: true,
    frames,
    frame: () => frame,
    playing: () => playing,
    drawn: () => ({ frame: drawnFrame, x: drawnX.slice(), y: drawnY.slice(), pixelsPerCell, devicePixelRatio: ratio, originX: 0, originY: 0 }),
  };
  draw();
  document.body.dataset.ready = 'true';
}

main().catch((error: unknown) => {
  const box = document.getElementById('viewer-error');
  if (box) box.textContent = `The replay could not start: ${error instanceof Error ? error.message : String(error)}`;
  throw error;
});
