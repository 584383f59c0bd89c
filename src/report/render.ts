/**
 * Renders the report's HTML from the view model with the Handlebars
 * templates in templates/ (report.hbs, partials/*.hbs) and the stylesheet
 * templates/report.css, which is inlined so the file is self-contained.
 *
 * Template convention: fields of `cards`, `dams.rows`, `watersheds.rows`,
 * the SVG strings and `storageSplit` are HTML built in src/report (escaped
 * there) and are written with triple braces; everything else is plain text
 * and Handlebars escapes it.
 */
import { readFileSync, readdirSync } from 'node:fs';
import { basename, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import Handlebars from 'handlebars';
import { buildView, type ReportInput, type ReportView } from './view.js';

/** The templates folder (repository root's templates/, found from this module's place in src/ or dist/). */
export const TEMPLATES_DIR = fileURLToPath(new URL('../../templates/', import.meta.url));

type Env = typeof Handlebars;
let cached: { env: Env; page: Handlebars.TemplateDelegate<ReportView & { css: string; pageCss: string }>; css: string } | null = null;

/**
 * A Handlebars environment with the report's helpers and partials, for the
 * report and for other pages that share its design (e.g. a comparison of runs).
 */
export function createReportEnvironment(): { env: Env; css: string } {
  const env = Handlebars.create();
  const partialsDir = join(TEMPLATES_DIR, 'partials');
  for (const file of readdirSync(partialsDir).sort()) {
    if (!file.endsWith('.hbs')) continue;
    env.registerPartial(basename(file, '.hbs'), readFileSync(join(partialsDir, file), 'utf8'));
  }
  const css = readFileSync(join(TEMPLATES_DIR, 'report.css'), 'utf8');
  return { env, css };
}

/** Renders a run's report as one self-contained HTML document. */
export function renderReport(input: ReportInput): string {
  if (!cached) {
    const { env, css } = createReportEnvironment();
    const page = env.compile<ReportView & { css: string; pageCss: string }>(readFileSync(join(TEMPLATES_DIR, 'report.hbs'), 'utf8'), { strict: false, noEscape: false });
    cached = { env, page, css };
  }
  const view = buildView(input);
  const html = cached.page({ ...view, css: cached.css, pageCss: pageCss(view) });
  // Template indentation around left-out sections leaves blank, indented lines: trim them.
  return html.replace(/[ \t]+$/gm, '').replace(/\n{3,}/g, '\n\n');
}

/**
 * Rules that depend on the run (where the hillshade sits under the map's
 * SVG, how wide a tall map may grow), kept in the <style> block rather than
 * in style attributes.
 */
function pageCss(view: ReportView): string {
  const m = view.map;
  if (!m) return '';
  let css = `.map-frame-box { max-width: ${m.maxWidthCss}; }`;
  if (m.image) {
    const p = (v: number): string => `${v.toFixed(4)}%`;
    css += `\n.map-frame-box .hillshade { left: ${p(m.image.leftPct)}; top: ${p(m.image.topPct)}; width: ${p(m.image.widthPct)}; height: ${p(m.image.heightPct)}; }`;
  }
  return css;
}
