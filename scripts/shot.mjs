#!/usr/bin/env node
// Screenshots of a report for review (PNG files are git-ignored, never committed).
//
//   npm run shot                                  the demo's report, full page
//   npm run shot -- RUN_DIR/report.html [OUT.png] another report
//   npm run shot -- --sections                    also one PNG per section (OUT-<id>.png)
//   npm run shot -- --pdf                         also print it to PDF on A4 and Letter
//
// Drives Debian's Chromium (/usr/bin/chromium, or CHROMIUM=path) through
// playwright-core; no browser is downloaded. Prints console errors and
// images that failed to load, and exits 1 when there are any.
import { existsSync } from 'node:fs';
import { resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { chromium } from 'playwright-core';

const args = process.argv.slice(2);
const flags = new Set(args.filter((a) => a.startsWith('--')));
const [reportArg, outArg] = args.filter((a) => !a.startsWith('--'));
const report = resolve(reportArg ?? 'pondage-demo/results/report.html');
const out = resolve(outArg ?? report.replace(/\.html?$/i, '') + '.png');
const executablePath = process.env.CHROMIUM ?? '/usr/bin/chromium';

if (!existsSync(report)) {
  console.error(`shot: ${report} does not exist; run \`npm run build && npm start\` first, or name a report`);
  process.exit(2);
}
if (!existsSync(executablePath)) {
  console.error(`shot: no browser at ${executablePath}; install Debian's chromium (apt-get install -y chromium) or set CHROMIUM`);
  process.exit(2);
}

const browser = await chromium.launch({ executablePath, args: ['--no-sandbox', '--disable-gpu', '--disable-quic'] });
let problems = 0;
try {
  const page = await browser.newPage({ viewport: { width: 1200, height: 900 }, deviceScaleFactor: 1 });
  page.on('console', (msg) => {
    if (msg.type() === 'error') {
      problems++;
      console.error(`console error: ${msg.text()}`);
    }
  });
  page.on('pageerror', (err) => {
    problems++;
    console.error(`page error: ${err.message}`);
  });
  await page.goto(pathToFileURL(report).href, { waitUntil: 'load' });
  const broken = await page.evaluate(() => [...document.images].filter((img) => !img.complete || img.naturalWidth === 0).map((img) => img.alt || img.src.slice(0, 40)));
  for (const b of broken) {
    problems++;
    console.error(`image not loaded: ${b}`);
  }
  await page.screenshot({ path: out, fullPage: true });
  console.log(`wrote ${out}`);
  if (flags.has('--sections')) {
    for (const id of await page.evaluate(() => [...document.querySelectorAll('section[id]')].map((s) => s.id))) {
      const file = out.replace(/\.png$/i, `-${id}.png`);
      await page.locator(`section#${id}`).screenshot({ path: file });
      console.log(`wrote ${file}`);
    }
  }
  if (flags.has('--pdf')) {
    for (const format of ['A4', 'Letter']) {
      const file = out.replace(/\.png$/i, `-${format.toLowerCase()}.pdf`);
      await page.pdf({ path: file, format, printBackground: true });
      console.log(`wrote ${file}`);
    }
  }
} finally {
  await browser.close();
}
process.exit(problems > 0 ? 1 : 0);
