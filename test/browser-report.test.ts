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
import { artifact, launchChromium, openFile, type Browser } from './browser/chromium.ts';

const folder = mkdtempSync(path.join(os.tmpdir(), 'fleetwright-browser-report-'));
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
      await watch.page.screenshot({ path: path.join(repositoryRoot, 'docs', 'report-screenshot.png'), clip: { x: 0, y: 0, width: 1100, height: 1250 }, fullPage: true });
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
    // Stations: a utilisation bar and an idle-while-work-waits bar per station (all 48 fit).
    expect(await count('#stations .mark-utilisation-bar rect')).toBe(48);
    expect(await count('#stations .mark-idle-while-work-waits-bar rect')).toBe(48);
    // A data table under every chart.
    expect(await count('figure.chart')).toBe(await count('figure.chart table.data'));
    await watch.page.close();
  });

  it('shows the numbers of summary.json', async () => {
    const watch = await openFile(browser, path.join(folder, 'run.html'));
    const summary = JSON.parse(readFileSync(path.join(folder, 'run', 'summary.json'), 'utf8'));
    const shown = async (field: string) => (await watch.page.locator(`[data-field="${field}"]`).first().textContent())?.trim();
    expect(await shown('throughputPerHour.mean')).toBe(summary.throughputPerHour.mean.toFixed(1));
    expect(await shown('leadTimeSeconds.mean')).toBe(summary.leadTimeSeconds.mean.toFixed(1));
    expect(await shown('collisions')).toBe(String(summary.collisions));
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
  // Hand-written documents in the shapes of DESIGN §7 (size --json) and §8 (runs.jsonl); numbers invented.
  it('size: one dot per fleet size, an interval bar where one exists, the target line and the recommendation', async () => {
    const results = path.join(folder, 'size');
    mkdirSync(results);
    const size = JSON.parse(readFileSync(path.join(repositoryRoot, 'test', 'fixtures', 'size-result.json'), 'utf8'));
    writeFileSync(path.join(results, 'size.json'), JSON.stringify(size));
    ok(fleetwright('report', results, '--html', path.join(folder, 'size.html')));
    const watch = await openFile(browser, path.join(folder, 'size.html'));
    expect(watch.consoleErrors).toEqual([]);
    expect(watch.requests).toEqual([]);
    const count = (selector: string) => watch.page.locator(selector).count();
    expect(await count('#fleet-size .mark-throughput-mean circle')).toBe(size.curve.length);
    expect(await count('#fleet-size .mark-throughput-interval line')).toBe(size.curve.filter((c: { throughputPerHour: { low: number | null } }) => c.throughputPerHour.low !== null).length);
    expect(await count('#fleet-size .mark-target-line line')).toBe(1);
    expect(await count('#fleet-size .mark-recommended circle')).toBe(1);
    expect((await watch.page.locator('[data-field="recommendedRobots"]').textContent())?.trim()).toBe(String(size.recommendedRobots));
    expect((await watch.page.locator('[data-field="handFormulaRobots"]').textContent())?.trim()).toBe(String(size.handFormulaRobots));
    await watch.page.screenshot({ path: artifact('report-size.png'), fullPage: true });
    await watch.page.close();
  });

  it('sweep: one point per parameter combination, one line per policy', async () => {
    const results = path.join(folder, 'sweep');
    mkdirSync(results);
    const lines = readFileSync(path.join(repositoryRoot, 'test', 'fixtures', 'sweep-runs.jsonl'), 'utf8');
    writeFileSync(path.join(results, 'runs.jsonl'), lines);
    ok(fleetwright('report', results, '--html', path.join(folder, 'sweep.html')));
    const watch = await openFile(browser, path.join(folder, 'sweep.html'));
    expect(watch.consoleErrors).toEqual([]);
    const count = (selector: string) => watch.page.locator(selector).count();
    expect(await count('#sweep-curve .mark-throughput-mean circle')).toBe(lines.trim().split('\n').length);
    expect(await count('h2#points + table.data tbody tr')).toBe(6);
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
