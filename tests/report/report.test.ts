/**
 * The HTML report end to end: a small optimization run and `loopsmith report` through the real
 * command line (dist/; `npm test` builds first), then Debian's Chromium (driven by playwright-core)
 * opens the file from disk with the network unused: no console errors, the expected number of marks
 * in each chart (counted from the database independently of the report code), a working sortable
 * table, and a screenshot that is not blank. Chromium is required: CI installs it (.ci/run).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { existsSync, mkdtempSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { tmpdir } from 'node:os';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { runFront } from '../../src/run/front.js';
import { analyseFront } from '../../src/run/frontTools.js';
import { LEADING_DESIGNS } from '../../src/report/report.js';
import { Store } from '../../src/store/store.js';
import { parseStudyText } from '../../src/study/parse.js';
import { assertBuilt, makeTemporaryDirectory, removeTemporaryDirectories, runArgs, runCli, SMALL_STUDY } from '../fixtures/harness.js';

const CHROMIUM = '/usr/bin/chromium';
const GENERATIONS = 4;
const POPULATION = 12;

let directory = '';
let dbPath = '';
let htmlPath = '';
let context: BrowserContext | undefined;
let page: Page;
const consoleErrors: string[] = [];
const requests: string[] = [];

/** What the charts must show, read straight from the store. */
function expectedCounts(): { scatterPoints: number; hypervolumePoints: number; generations: number; front: number } {
  const store = Store.open(dbPath);
  try {
    const run = store.listRuns().at(-1)!;
    const { study } = parseStudyText(store.getStudy(run.studyId)!.fileText, 'test');
    const seen = new Map<number, Record<string, number | null>>();
    for (let g = 0; g <= store.lastGeneration(run.id)!; g++) {
      for (const m of store.generationMembers(run.id, g)) if (m.error === null) seen.set(m.id, m.metrics);
    }
    const shown = [...seen.values()].filter((metrics) => study.objectives.every((o) => Number.isFinite(metrics[o.metric] ?? Number.NaN))).length;
    const k = study.objectives.length;
    const stats = store.generationStats(run.id);
    return {
      scatterPoints: shown * (k * (k - 1)) / 2,
      hypervolumePoints: stats.filter((s) => s.hypervolume !== null).length,
      generations: stats.length,
      front: runFront(dbPath).designs.length,
    };
  } finally {
    store.close();
  }
}

beforeAll(async () => {
  assertBuilt();
  if (!existsSync(CHROMIUM)) {
    throw new Error(`${CHROMIUM} is missing: install Debian's chromium (apt-get install -y chromium; .ci/run does this)`);
  }
  directory = makeTemporaryDirectory('loopsmith-report-');
  dbPath = join(directory, 'small.db');
  const run = await runCli(runArgs(SMALL_STUDY, dbPath, { generations: GENERATIONS, workers: 1, population: POPULATION, quiet: true }));
  expect(run.code, run.stderr).toBe(0);
  const report = await runCli(['report', dbPath, '--out', join(directory, 'report')]);
  expect(report.code, report.stderr).toBe(0);
  htmlPath = join(directory, 'report', 'index.html');
  context = await chromium.launchPersistentContext(mkdtempSync(join(tmpdir(), 'loopsmith-chromium-')), {
    executablePath: CHROMIUM,
    headless: true,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
    viewport: { width: 1300, height: 900 },
  });
  page = await context.newPage();
  page.on('console', (message) => { if (message.type() === 'error') consoleErrors.push(message.text()); });
  page.on('pageerror', (error) => consoleErrors.push(String(error)));
  page.on('request', (request) => requests.push(request.url()));
  await page.goto(`file://${htmlPath}`);
});

afterAll(async () => {
  await context?.close();
  removeTemporaryDirectories();
});

describe('loopsmith report in a browser', () => {
  it('is one self-contained file that loads nothing else', () => {
    const html = readFileSync(htmlPath, 'utf8');
    expect(html).not.toMatch(/<script[^>]+src=|<link[^>]+href=|<img[^>]+src=|url\(\s*['"]?https?:/i);
    expect(requests.filter((url) => !url.startsWith('file://') && !url.startsWith('data:'))).toEqual([]);
    expect(requests.filter((url) => url.startsWith('file://'))).toHaveLength(1);
  });

  it('opens without console errors and carries the safety caution at the top and the bottom', async () => {
    expect(consoleErrors).toEqual([]);
    expect(await page.locator('aside.caution').count()).toBe(2);
    await expect(page.locator('aside.caution').first().textContent()).resolves.toContain('not a safety analysis');
  });

  it('draws the expected number of marks in each chart', async () => {
    const expected = expectedCounts();
    expect(expected.scatterPoints).toBeGreaterThan(0);
    expect(await page.locator('figure[data-chart="scatter"] g.mark-symbol.role-mark path').count()).toBe(expected.scatterPoints);
    expect(await page.locator('figure[data-chart="convergence"] g.hv_points_marks path').count()).toBe(expected.hypervolumePoints);
    expect(await page.locator('figure[data-chart="convergence"] g.feasible_bars_marks path').count()).toBe(expected.generations);
    expect(await page.locator('#front-table tbody tr').count()).toBe(expected.front);
    // The leading designs are the front's representatives (extremes and knees kept), each with a map.
    const representatives = analyseFront(runFront(dbPath), LEADING_DESIGNS).representatives;
    const maps = representatives.length;
    expect(maps).toBeGreaterThan(0);
    expect(await page.locator('figure[data-chart^="map-"]').count()).toBe(maps);
    const leadingIds = await page.locator('section#leading .leader h3').allTextContents();
    expect(leadingIds.map((t) => Number(/design (\d+)/.exec(t)![1]))).toEqual(representatives.map((r) => r.id));
    for (let k = 1; k <= maps; k++) {
      const map = page.locator(`figure[data-chart="map-${k}"]`);
      expect(await map.locator('g.colour_map_marks path').count()).toBeGreaterThan(100);
      expect(await map.locator('g.curves_marks path').count()).toBeGreaterThanOrEqual(4);
      expect(await map.locator('g.joints_marks path').count()).toBe(5);
    }
  });

  it('sorts the front table by a clicked column', async () => {
    const header = page.locator('#front-table thead th', { hasText: 'design id' });
    const ids = async (): Promise<number[]> =>
      (await page.locator('#front-table tbody tr td:nth-child(2)').allTextContents()).map(Number);
    await header.click();
    const ascending = await ids();
    expect(ascending).toEqual([...ascending].sort((x, y) => x - y));
    await header.click();
    const descending = await ids();
    expect(descending).toEqual([...ascending].reverse());
  });

  it('filters the front table by brushing an axis of the parallel coordinates', async () => {
    const rows = page.locator('#front-table tbody tr');
    const total = await rows.count();
    expect(total).toBeGreaterThan(2);
    const data = JSON.parse((await page.locator('#parallel-data').textContent())!) as { rows: { id: number; values: (number | null)[] }[] };
    await page.locator('#parallel').scrollIntoViewIfNeeded();
    const axis = page.locator('#parallel rect.pc-hit[data-axis="0"]');
    const box = (await axis.boundingBox())!;
    // Drag over the upper half of the first objective's axis.
    await page.mouse.move(box.x + box.width / 2, box.y + 2);
    await page.mouse.down();
    await page.mouse.move(box.x + box.width / 2, box.y + box.height * 0.5, { steps: 6 });
    await page.mouse.up();
    const brushes = JSON.parse((await page.locator('#parallel').getAttribute('data-brushes'))!) as { axis: number; range: [number, number] }[];
    expect(brushes).toHaveLength(1);
    const [lo, hi] = brushes[0]!.range;
    const expectedIds = data.rows.filter((r) => r.values[0] !== null && r.values[0]! >= lo && r.values[0]! <= hi).map((r) => String(r.id)).sort();
    const visibleIds = (await page.locator('#front-table tbody tr:visible').evaluateAll((trs) => trs.map((tr) => tr.getAttribute('data-id')!))).sort();
    expect(visibleIds).toEqual(expectedIds);
    expect(visibleIds.length).toBeLessThan(total);
    await expect(page.locator('#selection-status').textContent()).resolves.toContain(`${visibleIds.length} of ${total}`);
    // A click on the axis clears its range: every row is back.
    await axis.click();
    expect(await page.locator('#front-table tbody tr:visible').count()).toBe(total);
    expect(consoleErrors).toEqual([]);
  });

  it('renders a screenshot that is not blank', async () => {
    const shot = await page.screenshot({ fullPage: true });
    // Decode the PNG in the browser itself and count pixel shades; a blank page has one.
    const check = await context!.newPage();
    const stats = await check.evaluate(async (base64: string) => {
      const image = new Image();
      image.src = `data:image/png;base64,${base64}`;
      await image.decode();
      const canvas = document.createElement('canvas');
      canvas.width = image.width;
      canvas.height = image.height;
      const ctx = canvas.getContext('2d')!;
      ctx.drawImage(image, 0, 0);
      const data = ctx.getImageData(0, 0, canvas.width, canvas.height).data;
      const shades = new Set<number>();
      let nonWhite = 0;
      for (let k = 0; k < data.length; k += 4 * 7) {
        const r = data[k]!, g = data[k + 1]!, b = data[k + 2]!;
        shades.add((r << 16) | (g << 8) | b);
        if (r < 240 || g < 240 || b < 240) nonWhite++;
      }
      return { width: canvas.width, height: canvas.height, shades: shades.size, nonWhiteFraction: nonWhite / (data.length / 28) };
    }, shot.toString('base64'));
    await check.close();
    expect(stats.height).toBeGreaterThan(2000);
    expect(stats.shades).toBeGreaterThan(200);
    expect(stats.nonWhiteFraction).toBeGreaterThan(0.05);
  });
});
