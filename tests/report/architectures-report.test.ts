/**
 * Maps and reports of the 2-PRR, 3-RRR, 3-PRR and comparison demos through the command line:
 * - `loopsmith map STUDY --out F.svg|F.png` for each demo study (studies/*.yaml, invented) draws the
 *   design's workspace through the architecture interface (rails for sliders, the platform for 3-DOF,
 *   a comparison study's chosen member), with the study's task region and φ_0;
 * - the five-bar map draws its curves at their own widths (the report theme used to replace the
 *   strokeWidth encoding with its line width, 2 px everywhere);
 * - `loopsmith report` of a tiny comparison run (tests/fixtures/architectures, invented) opens in
 *   Chromium from disk without console errors or network use, with a metric card and a workspace map
 *   for each leading design of either architecture, efforts in N·m for cranks and N for sliders.
 */
import { existsSync, mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { workspaceMapSpec } from '../../src/report/map.js';
import { renderVegaLiteSvg } from '../../src/report/render.js';
import { LEADING_DESIGNS } from '../../src/report/report.js';
import { analyseFront } from '../../src/run/frontTools.js';
import { runFront } from '../../src/run/front.js';
import { loadStudyFile } from '../../src/study/parse.js';
import { assertBuilt, makeTemporaryDirectory, REPO_ROOT, removeTemporaryDirectories, runCli, runArgs, SMALL_STUDY } from '../fixtures/harness.js';

const CHROMIUM = '/usr/bin/chromium';
const DEMOS = [
  { name: 'rail-sorter-2prr', legend: 'slider rail', platform: false },
  { name: 'platform-3rrr', legend: 'elbow C', platform: true },
  { name: 'platform-3prr', legend: 'slider rail', platform: true },
  { name: 'compare-fivebar-2prr', legend: 'slider rail', platform: false },
] as const;
const PNG_SIGNATURE = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a];

let directory = '';
let htmlPath = '';
let comparisonDb = '';
let context: BrowserContext | undefined;
let page: Page;
const consoleErrors: string[] = [];
const requests: string[] = [];

beforeAll(async () => {
  assertBuilt();
  if (!existsSync(CHROMIUM)) throw new Error(`${CHROMIUM} is missing: install Debian's chromium (apt-get install -y chromium; .ci/run does this)`);
  directory = makeTemporaryDirectory('arch-report');
  comparisonDb = join(directory, 'compare.db');
  const study = join(REPO_ROOT, 'tests', 'fixtures', 'architectures', 'compare-fivebar-2prr.yaml');
  const run = await runCli(runArgs(study, comparisonDb, { generations: 2, workers: 1, population: 10, quiet: true }));
  expect(run.code, run.stderr).toBe(0);
  const report = await runCli(['report', comparisonDb, '--out', join(directory, 'report')]);
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
}, 120_000);

afterAll(async () => {
  await context?.close();
  removeTemporaryDirectories();
});

describe.each(DEMOS)('loopsmith map of the $name demo', (demo) => {
  it('writes an SVG and a PNG of the design\'s workspace', async () => {
    const studyPath = join(REPO_ROOT, 'studies', `${demo.name}.yaml`);
    const { study } = loadStudyFile(studyPath);
    const svgPath = join(directory, `${demo.name}.svg`);
    const pngPath = join(directory, `${demo.name}.png`);
    const [svgRun, pngRun] = await Promise.all([
      runCli(['map', studyPath, '--cells', '80', '--out', svgPath]),
      runCli(['map', studyPath, '--cells', '80', '--out', pngPath]),
    ]);
    expect(svgRun.code, svgRun.stderr).toBe(0);
    expect(pngRun.code, pngRun.stderr).toBe(0);
    const svg = readFileSync(svgPath, 'utf8');
    expect(svg.startsWith('<svg')).toBe(true);
    expect(svg).toContain(`Workspace of ${study.name}`);
    expect(svg).toContain('usable workspace (boundary)');
    expect(svg).toContain('task region');
    expect(svg).toContain(demo.legend);
    expect(svg.includes('platform at home pose')).toBe(demo.platform);
    // The mechanism is drawn at the task centre, where the baseline design is assembled.
    expect(svg).toContain('mechanism drawn at the task centre');
    expect(svg).not.toContain('NOT reachable');
    const png = readFileSync(pngPath);
    expect(Array.from(png.subarray(0, 8))).toEqual(PNG_SIGNATURE);
    expect(png.length).toBeGreaterThan(20_000);
  });
});

describe('loopsmith map of a comparison study', () => {
  it('draws the member the design chooses', async () => {
    const studyPath = join(REPO_ROOT, 'studies', 'compare-fivebar-2prr.yaml');
    const out = join(directory, 'compare-five-bar.svg');
    const result = await runCli(['map', studyPath, '--set', 'architecture=five-bar', '--cells', '60', '--out', out]);
    expect(result.code, result.stderr).toBe(0);
    const svg = readFileSync(out, 'utf8');
    expect(svg).toContain('five-bar member');
    expect(svg).not.toContain('slider rail');
  });
});

describe('five-bar map line widths', () => {
  it('draws each curve at its own width under the report theme', async () => {
    const { study } = loadStudyFile(SMALL_STUDY);
    const svg = await renderVegaLiteSvg(workspaceMapSpec(study, [], { cells: 60 }).spec);
    // Line marks are SVG paths with a stroke width; the map's widths are 2.5 (curves), 3 (mechanism
    // singularity) and 4.5 px (mechanism). Before the fix every line came out at the theme's 2 px.
    const curves = svg.slice(svg.indexOf('curves_marks'), svg.indexOf('joints_marks'));
    expect(curves.length).toBeGreaterThan(0);
    const widths = new Set([...curves.matchAll(/stroke-width="([0-9.]+)"/g)].map((m) => Number(m[1])));
    expect(widths.has(4.5)).toBe(true);
    expect(widths.has(2.5)).toBe(true);
    expect(widths.has(2)).toBe(false);
  });
});

describe('loopsmith report of a comparison run', () => {
  it('is one file that loads nothing else and opens without console errors', () => {
    const html = readFileSync(htmlPath, 'utf8');
    expect(html).not.toMatch(/<script[^>]+src=|<link[^>]+href=|<img[^>]+src=|url\(\s*['"]?https?:/i);
    expect(requests.filter((url) => !url.startsWith('file://') && !url.startsWith('data:'))).toEqual([]);
    expect(consoleErrors).toEqual([]);
  });

  it('has a metric card and a workspace map for each leading design, of its own architecture', async () => {
    const front = runFront(comparisonDb).designs;
    // The leading designs are the front's representatives (extremes and knees always kept).
    const leading = analyseFront(runFront(comparisonDb), LEADING_DESIGNS).representatives.length;
    expect(leading).toBeGreaterThan(0);
    expect(await page.locator('section#leading .leader').count()).toBe(leading);
    expect(await page.locator('section#leading figure.chart svg').count()).toBe(leading);
    expect(await page.locator('#front-table tbody tr').count()).toBe(front.length);
    const byId = new Map(front.map((d) => [d.id, d]));
    for (let k = 0; k < leading; k++) {
      const leader = page.locator('section#leading .leader').nth(k);
      const heading = (await leader.locator('h3').first().textContent())!;
      const id = Number(/design (\d+)/.exec(heading)![1]);
      const design = byId.get(id)!;
      const architecture = String(design.variables['architecture']);
      const caption = (await leader.locator('figcaption').textContent())!;
      expect(caption.startsWith(`${architecture} design`)).toBe(true);
      const svgText = (await leader.locator('figure svg').innerHTML());
      expect(svgText.includes('slider rail')).toBe(architecture === '2-prr');
      // Effort units follow the actuators: N·m for cranks, N for sliders.
      const effort = (await leader.locator('tr', { has: page.locator('th', { hasText: /^peak_gravity_torque$/ }) }).locator('td').textContent())!;
      expect(effort).toMatch(architecture === '2-prr' ? / N$/ : / N·m$/);
      // Only the chosen member's variables describe the design.
      const designLine = (await leader.locator('p.design').textContent())!;
      expect(designLine).toContain(architecture === '2-prr' ? 'prr2_rod_1' : 'fivebar_crank_1');
      expect(designLine).not.toContain(architecture === '2-prr' ? 'fivebar_' : 'prr2_');
    }
  });
});
