/**
 * A real browser opens the report: Debian's Chromium, driven by
 * playwright-core, renders a demo-like report (every optional section
 * present) with no console errors, no request beyond the file itself, and
 * every image decoded. Skipped only where /usr/bin/chromium is absent
 * (.ci/run installs it).
 */
import { existsSync } from 'node:fs';
import { cp, readFile, rm, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { chromium, type Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { writeReport } from '../src/report/write.js';
import { enrichSummary, makeValleyRun, type ValleyRun } from './report-valley.js';

const CHROMIUM = '/usr/bin/chromium';
const haveChromium = existsSync(CHROMIUM);

let run: ValleyRun;
let browser: Browser;
let reportPath: string;

beforeAll(async () => {
  if (!haveChromium) return;
  run = await makeValleyRun();
  const folder = join(run.dir, 'enriched');
  await cp(run.outDir, folder, { recursive: true });
  await writeFile(join(folder, 'summary.json'), JSON.stringify(enrichSummary(JSON.parse(run.summaryText) as Record<string, unknown>)));
  reportPath = (await writeReport(folder)).path;
  browser = await chromium.launch({ executablePath: CHROMIUM, args: ['--no-sandbox', '--disable-gpu', '--disable-quic'] });
});

afterAll(async () => {
  await browser?.close();
  if (run) await rm(run.dir, { recursive: true, force: true });
});

describe.skipIf(!haveChromium)('report in headless Chromium', () => {
  it('renders with no console errors, no network, and every image loaded', async () => {
    const page = await browser.newPage({ viewport: { width: 1200, height: 900 } });
    const errors: string[] = [];
    const requests: string[] = [];
    page.on('console', (msg) => {
      if (msg.type() === 'error' || msg.type() === 'warning') errors.push(`${msg.type()}: ${msg.text()}`);
    });
    page.on('pageerror', (err) => errors.push(`pageerror: ${err.message}`));
    page.on('request', (req) => {
      if (!req.url().startsWith('data:')) requests.push(req.url());
    });
    await page.goto(pathToFileURL(reportPath).href, { waitUntil: 'load' });
    const images = await page.evaluate(() =>
      [...document.images].map((img) => ({ complete: img.complete, width: img.naturalWidth, height: img.naturalHeight, shown: img.getBoundingClientRect().width })),
    );
    const map = JSON.parse(await readFile(join(run.dir, 'enriched', 'report-map.json'), 'utf8')) as { hillshade: { widthPx: number; heightPx: number } };
    expect(errors).toEqual([]);
    expect(requests).toEqual([pathToFileURL(reportPath).href]);
    expect(images).toHaveLength(1);
    expect(images[0]!.complete).toBe(true);
    expect(images[0]!.width).toBe(map.hillshade.widthPx);
    expect(images[0]!.height).toBe(map.hillshade.heightPx);
    expect(images[0]!.shown).toBeGreaterThan(300);
    await page.close();
  });

  it('lays the hillshade exactly under the map frame of the SVG', async () => {
    const page = await browser.newPage({ viewport: { width: 1200, height: 900 } });
    await page.goto(pathToFileURL(reportPath).href, { waitUntil: 'load' });
    const boxes = await page.evaluate(() => {
      const img = document.querySelector('img.hillshade')!.getBoundingClientRect();
      const frame = document.querySelector('rect.map-frame')!.getBoundingClientRect();
      return { img: [img.left, img.top, img.width, img.height], frame: [frame.left, frame.top, frame.width, frame.height] };
    });
    for (let k = 0; k < 4; k++) expect(Math.abs(boxes.img[k]! - boxes.frame[k]!)).toBeLessThan(1.5);
    await page.close();
  });

  it('shows every section and prints on A4 and Letter', async () => {
    const page = await browser.newPage();
    await page.goto(pathToFileURL(reportPath).href, { waitUntil: 'load' });
    const sections = await page.evaluate(() => [...document.querySelectorAll('main > section')].map((s) => s.id));
    expect(sections).toEqual(['headline', 'map', 'watersheds', 'proposed', 'charts', 'dams', 'warnings', 'methods', 'inputs', 'cautions']);
    for (const format of ['A4', 'Letter'] as const) {
      const pdf = await page.pdf({ format, printBackground: true });
      expect(pdf.subarray(0, 5).toString()).toBe('%PDF-');
      const pages = pdf.toString('latin1').match(/\/Type\s*\/Page[^s]/g) ?? [];
      expect(pages.length).toBeGreaterThanOrEqual(3);
    }
    await page.close();
  });
});
