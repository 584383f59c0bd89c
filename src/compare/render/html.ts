/**
 * compare.html from the view and the template texts (read by io/): one
 * self-contained page. Handlebars escapes every plain field; the SVG strings
 * (map and charts) are built escaped in render/ and written with triple braces.
 */
import Handlebars from 'handlebars';
import type { CompareView } from './view.js';

/** Template texts of the page: compare.hbs, and the stylesheets inlined in order. */
export interface CompareTemplates {
  page: string;
  css: string[];
}

/** Renders the page. */
export function renderCompareHtml(view: CompareView, templates: CompareTemplates, toolVersion: string): string {
  const env = Handlebars.create();
  const page = env.compile<CompareView & { css: string; toolVersion: string }>(templates.page, { strict: false });
  return page({ ...view, css: templates.css.join('\n'), toolVersion });
}
