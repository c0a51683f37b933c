/**
 * The HTML report in a real browser (headless Chromium through playwright-core, see
 * DEVELOPERS.md): opened from a file URL it logs no console error and makes no network
 * request; each chart has one mark per datum of the files it was drawn from (counted here
 * from those files, not from the report code); the headline numbers equal summary.json;
 * and scenario names or file names carrying markup execute nothing, with and without the
 * page's Content-Security-Policy. Screenshots go to test-artifacts/.
 */
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { fleetwright, repositoryRoot } from './helpers-cli.ts';
import { artifact, launchChromium, openFile, type Browser, type PageWatch } from './browser/chromium.ts';

const folder = mkdtempSync(path.join(os.tmpdir(), 'fleetwright-browser-report-'));
const smallHall = path.join(repositoryRoot, 'test', 'fixtures', 'cli-small-hall.yaml');
let browser: Browser;

function ok(result: { status: number | null; stderr: string }): void {
  expect(result.status, result.stderr).toBe(0);
}

const csv = (file: string): Record<string, string>[] => parse(readFileSync(file, 'utf8'), { columns: true, skip_empty_lines: true });

beforeAll(async () => {
  browser = await launchChromium();
  ok(fleetwright('run', 'scenarios/demo-sortation.yaml', '--hours', '2', '--reps', '3', '--out', path.join(folder, 'run')));
  ok(fleetwright('report', path.join(folder, 'run'), '--html', path.join(folder, 'run.html')));
  ok(fleetwright('compare', 'scenarios/demo-sortation.yaml', '--policies', 'token-passing,greedy-reactive', '--robots', '12', '--hours', '0.25', '--reps', '2', '--out', path.join(folder, 'compare')));
  ok(fleetwright('report', path.join(folder, 'compare'), '--html', path.join(folder, 'compare.html')));
  // The shift hall: a battery, breakdowns and an hourly demand profile (the run page's optional parts).
  ok(fleetwright('run', 'scenarios/demo-sortation-shift.yaml', '--hours', '2', '--reps', '2', '--out', path.join(folder, 'shift')));
  const shiftSummary = path.join(folder, 'shift', 'summary.json');
  expect(JSON.parse(readFileSync(shiftSummary, 'utf8')).robotTime.charging).toBeDefined();
  ok(fleetwright('report', path.join(folder, 'shift'), '--html', path.join(folder, 'shift.html')));
  const profiled = path.join(folder, 'profiled.yaml');
  writeFileSync(profiled, readFileSync(path.join(repositoryRoot, 'scenarios', 'demo-sortation.yaml'), 'utf8').replace('  # profile: [0.8, 1.0, 1.2, 1.0] ', '  profile: [0.8, 1.2]            '));
  ok(fleetwright('run', profiled, '--hours', '2', '--reps', '2', '--out', path.join(folder, 'profiled')));
  ok(fleetwright('report', path.join(folder, 'profiled'), '--html', path.join(folder, 'profiled.html')));
  // Real size and sweep outputs on the small hall (one robot there delivers about 190 tasks/h: test/size.test.ts).
  ok(fleetwright('size', smallHall, '--target', '200', '--hours', '0.5', '--reps', '2', '--out', path.join(folder, 'size')));
  ok(fleetwright('report', path.join(folder, 'size'), '--html', path.join(folder, 'size.html')));
  writeFileSync(path.join(folder, 'plan.yaml'), `scenario: ${JSON.stringify(smallHall)}\nvary:\n  fleet.robots: [1, 2, 3]\n  demand.tasksPerHour: [120, 900]\n  run.hours: [0.5]\nreplications: 2\n`);
  ok(fleetwright('sweep', path.join(folder, 'plan.yaml'), '--out', path.join(folder, 'sweep')));
  ok(fleetwright('report', path.join(folder, 'sweep'), '--html', path.join(folder, 'sweep.html')));
  writeFileSync(path.join(folder, 'demand-plan.yaml'), `scenario: ${JSON.stringify(smallHall)}\nvary:\n  fleet.robots: [1]\n  demand.tasksPerHour: [60, 120, 300]\nreplications: 2\n`);
  ok(fleetwright('sweep', path.join(folder, 'demand-plan.yaml'), '--out', path.join(folder, 'demand-sweep')));
  ok(fleetwright('report', path.join(folder, 'demand-sweep'), '--html', path.join(folder, 'demand-sweep.html')));
});

afterAll(async () => {
  await browser?.close();
  rmSync(folder, { recursive: true, force: true });
});

describe('run report in Chromium', () => {
  it('opens from a file URL with no console error, page error or network request', async () => {
    const watch = await openFile(browser, path.join(folder, 'run.html'));
    expect(watch.consoleErrors).toEqual([]);
    expect(watch.pageErrors).toEqual([]);
    expect(watch.requests).toEqual([]);
    expect(await watch.page.evaluate('document.scripts.length')).toBe(0);
    await watch.page.screenshot({ path: artifact('report-run.png'), fullPage: true });
    if (process.env.FLEETWRIGHT_UPDATE_SCREENSHOTS === '1') {
      mkdirSync(path.join(repositoryRoot, 'docs'), { recursive: true });
      // From the top to the end of the floor map: headline numbers, what limits the fleet, the floor with its heatmap.
      const floor = await watch.page.locator('figure#floor .plot').boundingBox();
      await watch.page.screenshot({ path: path.join(repositoryRoot, 'docs', 'report-screenshot.png'), clip: { x: 0, y: 0, width: 1100, height: Math.ceil((floor?.y ?? 1240) + (floor?.height ?? 0) + 10) }, fullPage: true });
    }
    await watch.page.emulateMedia({ media: 'print' });
    await watch.page.pdf({ path: artifact('report-run.pdf'), format: 'A4', printBackground: true });
    await watch.page.close();
  });

  it('draws one mark per datum in every chart', async () => {
    const watch = await openFile(browser, path.join(folder, 'run.html'));
    const count = (selector: string) => watch.page.locator(selector).count();
    const summary = JSON.parse(readFileSync(path.join(folder, 'run', 'summary.json'), 'utf8'));
    const cells = csv(path.join(folder, 'run', 'cells.csv'));
    const bins = csv(path.join(folder, 'run', 'lead-times.csv'));
    // Floor: one heat cell per floor cell with waiting, one outline per station (8 P + 40 D on the demo hall).
    const waited = cells.filter((c) => c.kind !== 'blocked' && Number(c.waitingSecondsPerHour) > 0).length;
    expect(waited).toBeGreaterThan(0);
    expect(await count('#floor .mark-waiting-cell rect')).toBe(waited);
    expect(await count('#floor .mark-station rect')).toBe(48);
    expect(summary.stations).toHaveLength(48);
    // Throughput over time: one line per replication.
    expect(await count('#throughput-over-time .mark-replication-line path')).toBe(3);
    // Lead time: one bar per bin of lead-times.csv.
    expect(bins.length).toBeGreaterThan(3);
    expect(await count('#lead-time .mark-lead-time-bin rect')).toBe(bins.length);
    // Robot time: five categories, an interval bar for each that has one.
    const intervals = Object.values(summary.robotTime as Record<string, { low: number | null }>).filter((i) => i.low !== null).length;
    expect(await count('#robot-time .mark-mean-bar rect')).toBe(5);
    expect(await count('#robot-time .mark-interval line')).toBe(intervals);
    // Stations, by group: each pickup's time split in four stacked parts and its queue bar; one column per drop.
    const pickups = summary.stations.filter((st: { group: string }) => st.group === 'pickup');
    const drops = summary.stations.filter((st: { group: string }) => st.group === 'drop');
    expect([pickups.length, drops.length]).toEqual([8, 40]);
    expect(await count('#stations .mark-station-segment rect')).toBe(4 * pickups.length);
    expect(await count('#stations .mark-queue-bar rect')).toBe(pickups.length);
    expect(await count('#drops .mark-drop-bar rect')).toBe(drops.length);
    // A data table under every chart.
    expect(await count('figure.chart')).toBeGreaterThan(5);
    expect(await count('figure.chart')).toBe(await count('figure.chart:has(table.data)'));
    await watch.page.close();
  });

  it('splits pickup stations as the engine does: busy, no robot assigned, robot on its way, with their queue', async () => {
    const watch = await openFile(browser, path.join(folder, 'run.html'));
    const summary = JSON.parse(readFileSync(path.join(folder, 'run', 'summary.json'), 'utf8'));
    const stations = csv(path.join(folder, 'run', 'stations.csv'));
    // The table lists pickups by most time without a robot; each row's numbers are those of stations.csv.
    const rows = await watch.page.locator('#stations table.data tbody tr').evaluateAll((trs) => trs.map((tr) => Array.from(tr.children, (c) => (c as { textContent: string | null }).textContent ?? '')));
    expect(rows).toHaveLength(8);
    const pct = (v: string) => `${(Number(v) * 100).toFixed(1)}%`;
    for (const [station, busy, noRobot, travelling, queue] of rows) {
      const row = stations.find((r) => `pickup ${r.cell}` === station)!;
      expect(row, station).toBeDefined();
      expect([busy, noRobot, travelling, queue]).toEqual([pct(row.utilisation), pct(row.noRobotFraction), pct(row.travellingFraction), Number(row.queueSecondsPerHour).toFixed(1)]);
    }
    const noRobot = rows.map((r) => Number(r[2].replace('%', '')));
    expect([...noRobot].sort((a, b) => b - a)).toEqual(noRobot);
    expect(summary.stationGroups.pickup.noRobotWhileWorkWaitsFraction.mean).toBeGreaterThan(0);
    // The four parts of each bar fill the whole axis (100%): read back from the drawn rectangles.
    const widths = await watch.page.locator('#stations .mark-station-segment rect').evaluateAll((rects) => rects.map((r) => (r as unknown as { getBBox(): { y: number; width: number } }).getBBox()).map((b) => ({ y: Math.round(b.y), width: b.width })));
    const byRow = new Map<number, number>();
    for (const w of widths) byRow.set(w.y, (byRow.get(w.y) ?? 0) + w.width);
    const totals = [...byRow.values()];
    expect(totals).toHaveLength(8);
    for (const total of totals) expect(total).toBeCloseTo(totals[0], 0);
    await watch.page.close();
  });

  it('the lead-time chart keeps its axis labels whole and its mean and p95 labels apart', async () => {
    const watch = await openFile(browser, path.join(folder, 'run.html'));
    type Box = { x: number; y: number; width: number; height: number };
    const boxes = (selector: string) => watch.page.locator(selector).evaluateAll((nodes) => nodes.map((n) => n.getBoundingClientRect()).map((r) => ({ x: r.x, y: r.y, width: r.width, height: r.height })));
    const [svg] = (await boxes('#lead-time .plot svg')) as Box[];
    const ticks = (await boxes('#lead-time .plot svg [aria-label="y-axis tick label"] text')) as Box[];
    expect(ticks.length).toBeGreaterThan(2);
    for (const tick of ticks) expect(tick.x).toBeGreaterThanOrEqual(svg.x);
    const labels = (await boxes('#lead-time .mark-lead-time-label text')) as Box[];
    expect(labels).toHaveLength(2);
    const [a, b] = labels;
    const overlap = a.x < b.x + b.width && b.x < a.x + a.width && a.y < b.y + b.height && b.y < a.y + a.height;
    expect(overlap).toBe(false);
    await watch.page.close();
  });

  it('prints on A4 without running past the page width, and the run page is not longer than 6 pages', async () => {
    const watch = await openFile(browser, path.join(folder, 'run.html'));
    // A4 (210 mm) less the print style's 12 mm margins: 186 mm = 703 CSS pixels.
    await watch.page.setViewportSize({ width: 703, height: 1000 });
    await watch.page.emulateMedia({ media: 'print' });
    expect(await watch.page.evaluate('document.documentElement.scrollWidth')).toBeLessThanOrEqual(703);
    const pdf = await watch.page.pdf({ format: 'A4', printBackground: true });
    const pages = (pdf.toString('latin1').match(/\/Type\s*\/Page[^s]/g) ?? []).length;
    expect(pages).toBeGreaterThan(1);
    expect(pages).toBeLessThanOrEqual(6);
    await watch.page.close();
  });

  it('draws the optional parts a scenario has: charging and broken robot time, the lead-time split, the hourly profile', async () => {
    const watch = await openFile(browser, path.join(folder, 'shift.html'));
    expect(watch.consoleErrors).toEqual([]);
    const summary = JSON.parse(readFileSync(path.join(folder, 'shift', 'summary.json'), 'utf8'));
    const count = (selector: string) => watch.page.locator(selector).count();
    // Seven robot time parts (the five, charging, broken down), one bar each.
    expect(Object.keys(summary.robotTime)).toHaveLength(7);
    expect(await count('#robot-time .mark-mean-bar rect')).toBe(7);
    const split = Object.values(summary.leadTimeSplit as Record<string, { low: number | null }>);
    expect(await count('#lead-time-split .mark-mean-bar rect')).toBe(4);
    expect(await count('#lead-time-split .mark-interval line')).toBe(split.filter((i) => i.low !== null).length);
    const limits = (await watch.page.locator('#section-limits + dl.facts').textContent()) ?? '';
    expect(limits).toContain(`${(summary.availability.mean * 100).toFixed(1)}`);
    expect(limits).toContain(`chargers busy ${(summary.charging.chargerUtilisation.mean * 100).toFixed(1)}`);
    await watch.page.close();
    // An hourly profile: offered and delivered per hour of the profile, one point each.
    const profiled = await openFile(browser, path.join(folder, 'profiled.html'));
    const hourly = JSON.parse(readFileSync(path.join(folder, 'profiled', 'summary.json'), 'utf8')).hourly;
    expect(hourly.rows).toHaveLength(2);
    expect(await profiled.page.locator('#hourly .mark-hourly-point circle').count()).toBe(2 * hourly.rows.length);
    expect(await profiled.page.locator('#hourly table.data tbody tr').count()).toBe(hourly.rows.length);
    await profiled.page.close();
  });

  it('shows the numbers of summary.json', async () => {
    const watch = await openFile(browser, path.join(folder, 'run.html'));
    const summary = JSON.parse(readFileSync(path.join(folder, 'run', 'summary.json'), 'utf8'));
    const shown = async (field: string) => (await watch.page.locator(`[data-field="${field}"]`).first().textContent())?.trim();
    expect(await shown('throughputPerHour.mean')).toBe(summary.throughputPerHour.mean.toFixed(1));
    expect(await shown('leadTimeSeconds.mean')).toBe(summary.leadTimeSeconds.mean.toFixed(1));
    expect(await shown('collisions')).toBe(String(summary.collisions));
    expect(await shown('busyRobots.mean')).toBe(summary.busyRobots.mean.toFixed(1));
    expect(await shown('stable')).toBe(summary.stable === false ? 'NO' : summary.stabilityVerdict === 'undetermined' ? 'undetermined' : 'yes');
    // What limits the fleet: the figures the engine and policy report, one line each.
    const limits = (await watch.page.locator('#section-limits + dl.facts').textContent()) ?? '';
    expect(limits).toContain(`${(summary.parkedWhileTasksOpenFraction.mean * 100).toFixed(1)}`);
    expect(limits).toContain(`${summary.policyLimits.heldBackTaskSecondsPerHour.mean.toFixed(0)} ±`);
    expect(limits).toContain(`pickups ${(summary.demandMixGap.pickup * 100).toFixed(1)}%`);
    expect(limits).toContain(`${summary.deadlocks.mean.toFixed(2)}`);
    const context = JSON.parse(readFileSync(path.join(folder, 'run', 'context.json'), 'utf8'));
    expect(await shown('scenarioSha256')).toBe(context.scenarioSha256);
    expect(await shown('command')).toBe(context.command);
    expect(await watch.page.locator('#safety').textContent()).toContain('ISO 3691-4');
    await watch.page.close();
  });
});

describe('compare report in Chromium', () => {
  it('opens cleanly and draws one difference per pair and metric, one bar per policy', async () => {
    const watch = await openFile(browser, path.join(folder, 'compare.html'));
    expect(watch.consoleErrors).toEqual([]);
    expect(watch.pageErrors).toEqual([]);
    expect(watch.requests).toEqual([]);
    const comparison = JSON.parse(readFileSync(path.join(folder, 'compare', 'comparison.json'), 'utf8'));
    const count = (selector: string) => watch.page.locator(selector).count();
    const metrics = [...new Set(comparison.differences.map((d: { metric: string }) => d.metric))] as string[];
    expect(metrics).toEqual(expect.arrayContaining(['throughputPerHour', 'leadTimeSeconds', 'stationStarvedFraction', 'deadlocks']));
    for (const metric of metrics) {
      const rows = comparison.differences.filter((d: { metric: string; mean: number | null }) => d.metric === metric && d.mean !== null);
      expect(await count(`#difference-${metric} .mark-difference-mean circle`), metric).toBe(rows.length);
    }
    expect(await count('#policy-throughput .mark-mean-bar rect')).toBe(2);
    expect(await count('#robot-time .mark-robot-time-segment rect')).toBe(2 * 5);
    expect(await count('figure[id^="floor-"]')).toBe(2);
    const shown = await watch.page.locator('#policy-throughput table.data tbody tr').first().locator('td').first().textContent();
    expect(shown).toBe(comparison.policies[0].throughputPerHour.mean.toFixed(1));
    await watch.page.screenshot({ path: artifact('report-compare.png'), fullPage: true });
    await watch.page.close();
  });
});

describe('size and sweep pages in Chromium', () => {
  type Row = Record<string, string>;
  const tickTexts = (watch: PageWatch, id: string) => watch.page.locator(`#${id} svg [aria-label="x-axis tick label"] text`).allTextContents();

  it('size: both curves (at the target and capacity) with their intervals, the target line, the hand-formula fleet, the knee and the recommendation', async () => {
    const size = JSON.parse(readFileSync(path.join(folder, 'size', 'size.json'), 'utf8'));
    const watch = await openFile(browser, path.join(folder, 'size.html'));
    expect(watch.consoleErrors).toEqual([]);
    expect(watch.requests).toEqual([]);
    const count = (selector: string) => watch.page.locator(selector).count();
    const all = [...size.curve, ...size.capacityCurve];
    expect(size.capacityCurve.length).toBeGreaterThan(1);
    // Capacity points have no stability verdict (filled); points at the target are hollow when their backlog grew.
    const unstable = size.curve.filter((c: { stable: boolean | null }) => c.stable === false).length;
    expect(await count('#fleet-size .mark-point-stable > *')).toBe(all.length - unstable);
    expect(await count('#fleet-size .mark-point-unstable > *')).toBe(unstable);
    expect(await count('#fleet-size .mark-throughput-interval > *')).toBe(all.filter((c: { throughputPerHour: { low: number | null } }) => c.throughputPerHour.low !== null).length);
    expect(await count('#fleet-size .mark-target-line > *')).toBe(1);
    expect(await count('#fleet-size .mark-hand-formula > *')).toBe(1);
    expect(await count('#fleet-size .mark-knee > *')).toBe(size.knee === null ? 0 : 1);
    expect(size.knee).not.toBeNull();
    expect(await count('#fleet-size .mark-recommended > *')).toBe(1);
    // Whole robots on the axis.
    const ticks = await tickTexts(watch, 'fleet-size');
    expect(ticks.length).toBeGreaterThan(1);
    for (const t of ticks) expect(t).toMatch(/^\d+$/);
    const shown = async (field: string) => (await watch.page.locator(`[data-field="${field}"]`).first().textContent())?.trim();
    expect(await shown('recommendedRobots')).toBe(String(size.recommendedRobots));
    expect(await shown('handFormulaRobots')).toBe(String(size.handFormulaRobots));
    expect(await shown('capacity.throughputPerHour.mean')).toBe(size.capacity.throughputPerHour.mean.toFixed(0));
    expect(await shown('knee')).toBe(String(size.knee.robots));
    // One table row per fleet of each curve.
    expect(await count('#fleet-size table.data tbody tr')).toBe(all.length);
    await watch.page.screenshot({ path: artifact('report-size.png'), fullPage: true });
    await watch.page.close();
  });

  it('sweep: throughput against robots, one line per rate, stable and unstable points as summary.csv says', async () => {
    const rows: Row[] = parse(readFileSync(path.join(folder, 'sweep', 'summary.csv'), 'utf8'), { columns: true });
    const context = JSON.parse(readFileSync(path.join(folder, 'sweep', 'context.json'), 'utf8'));
    const watch = await openFile(browser, path.join(folder, 'sweep.html'));
    expect(watch.consoleErrors).toEqual([]);
    expect(watch.pageErrors).toEqual([]);
    expect(watch.requests).toEqual([]);
    const count = (selector: string) => watch.page.locator(selector).count();
    expect(rows).toHaveLength(6);
    const unstable = rows.filter((r) => r.stable === 'false');
    // 900 tasks/h overloads one robot (about 190 tasks/h): the plan has both kinds of point.
    expect(unstable.length).toBeGreaterThan(0);
    expect(unstable.length).toBeLessThan(rows.length);
    expect(await count('#sweep-curve .mark-point-stable > *')).toBe(rows.length - unstable.length);
    expect(await count('#sweep-curve .mark-point-unstable > *')).toBe(unstable.length);
    expect(await count('#sweep-curve .mark-throughput-interval > *')).toBe(rows.filter((r) => r.throughputPerHourLow !== '').length);
    const ticks = await tickTexts(watch, 'sweep-curve');
    expect(ticks).toEqual(['1', '2', '3']);
    // The table under the chart: per point its flag and lead time as summary.csv has them.
    const table = await watch.page.locator('#sweep-curve table.data tbody tr').evaluateAll((trs) => trs.map((tr) => Array.from(tr.children, (c) => (c as { textContent: string | null }).textContent ?? '')));
    expect(table).toHaveLength(rows.length);
    table.forEach((cells, i) => {
      const [robots, rate, replications, throughput, lead, stable] = cells;
      const row = rows[i];
      expect([robots, rate, replications]).toEqual([row['fleet.robots'], row['demand.tasksPerHour'], row.replications]);
      // An interval clipped at 0 is shown by its ends, else as mean ± half-width.
      const [mean, halfWidth, low, high] = ['Mean', 'HalfWidth', 'Low', 'High'].map((k) => Number(row[`throughputPerHour${k}`]));
      const clipped = Math.abs(low - (mean - halfWidth)) > 1e-3;
      expect(throughput).toBe(clipped ? `${mean.toFixed(1)} (${low.toFixed(1)}–${high.toFixed(1)})` : `${mean.toFixed(1)} ± ${halfWidth.toFixed(1)}`);
      if (row.stable === 'false') {
        expect(row.stabilityVerdict).toBe('unstable');
        expect(stable).toMatch(/^NO: backlog grew/);
        expect(lead).toBe(`≥ ${Number(row.leadTimeSecondsMean).toFixed(1)} (lower bound)`);
      } else {
        expect(stable).toMatch(row.stabilityVerdict === 'undetermined' ? /^undetermined/ : /^yes/);
        expect(lead).toBe(`${Number(row.leadTimeSecondsMean).toFixed(1)} ± ${Number(row.leadTimeSecondsHalfWidth).toFixed(1)}`);
      }
      expect(stable).toContain(`(${Math.round(Number(row.stableShare) * 2)} of 2 stable alone)`);
    });
    // Lead time: stable points with an interval, unstable ones as lower bounds.
    expect(await count('#sweep-lead-time .mark-lead-mean > *')).toBe(rows.length - unstable.length);
    expect(await count('#sweep-lead-time .mark-lead-lower-bound > *')).toBe(unstable.length);
    // Provenance from context.json.
    const shown = async (field: string) => (await watch.page.locator(`[data-field="${field}"]`).first().textContent())?.trim();
    expect(await shown('planSha256')).toBe(context.planSha256);
    expect(await shown('command')).toBe(context.command);
    expect(await shown('scenarioSha256')).toBe(context.scenarioSha256);
    expect(await watch.page.locator('#provenance').textContent()).not.toContain('unknown');
    await watch.page.screenshot({ path: artifact('report-sweep.png'), fullPage: true });
    await watch.page.close();
  });

  it('sweep over demand only: throughput against offered demand with the offered = delivered line', async () => {
    const rows: Row[] = parse(readFileSync(path.join(folder, 'demand-sweep', 'summary.csv'), 'utf8'), { columns: true });
    const watch = await openFile(browser, path.join(folder, 'demand-sweep.html'));
    const count = (selector: string) => watch.page.locator(selector).count();
    expect(await count('#sweep-curve .mark-offered-line > *')).toBe(1);
    expect(await count('#sweep-curve .mark-point-stable > *, #sweep-curve .mark-point-unstable > *')).toBe(rows.length);
    expect(await tickTexts(watch, 'sweep-curve')).toEqual(['60', '120', '300']);
    await watch.page.close();
  });
});

describe('markup in user strings', () => {
  const payloads = ['<script>window.__pwned = 1</script>', '"><img src=x onerror="window.__pwned = 2">'];
  const small = readFileSync(path.join(repositoryRoot, 'test', 'fixtures', 'cli-small-hall.yaml'), 'utf8');

  for (const [i, payload] of payloads.entries()) {
    it(`a scenario named ${payload} gives a report in which nothing executes`, async () => {
      const case_ = path.join(folder, `xss-${i}`);
      mkdirSync(case_);
      // The payload is also in the scenario's file name, which the report shows in its provenance.
      const scenarioFile = path.join(case_, `hall ${payload.replace(/\//g, '')}.yaml`);
      writeFileSync(scenarioFile, small.replace('name: Small hall', `name: '${payload.replace(/'/g, "''")}'`));
      ok(fleetwright('run', scenarioFile, '--hours', '0.1', '--reps', '1', '--out', path.join(case_, 'results')));
      ok(fleetwright('report', path.join(case_, 'results'), '--html', path.join(case_, 'report.html')));
      const html = readFileSync(path.join(case_, 'report.html'), 'utf8');
      // The same page with its Content-Security-Policy removed: escaping alone must hold.
      const withoutPolicy = path.join(case_, 'report-no-csp.html');
      writeFileSync(withoutPolicy, html.replace(/<meta http-equiv="Content-Security-Policy"[^>]*>/, ''));
      expect(readFileSync(withoutPolicy, 'utf8')).not.toContain('Content-Security-Policy');
      for (const file of [path.join(case_, 'report.html'), withoutPolicy]) {
        const watch = await openFile(browser, file);
        await watch.page.waitForTimeout(200);
        expect(await watch.page.evaluate('window.__pwned')).toBeUndefined();
        expect(watch.dialogs).toEqual([]);
        expect(watch.pageErrors).toEqual([]);
        expect(await watch.page.evaluate('document.scripts.length')).toBe(0);
        expect(await watch.page.evaluate('document.images.length')).toBe(0);
        // Shown as text, exactly as typed.
        expect(await watch.page.locator('h1').textContent()).toBe(`Run report: ${payload}`);
        expect(watch.requests).toEqual([]);
        await watch.page.close();
      }
    });
  }
});
