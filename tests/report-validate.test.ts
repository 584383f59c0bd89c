/**
 * The report is valid HTML by html-validate (a general-purpose validator
 * from the npm registry, with its recommended rules), both plain and with
 * every optional section present.
 */
import { cp, readFile, rm, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { HtmlValidate, type Message } from 'html-validate';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { writeReport } from '../src/report/write.js';
import { enrichSummary, makeValleyRun, type ValleyRun } from './report-valley.js';

const validator = new HtmlValidate({
  extends: ['html-validate:recommended'],
});

let run: ValleyRun;

beforeAll(async () => {
  run = await makeValleyRun();
});

afterAll(async () => {
  await rm(run.dir, { recursive: true, force: true });
});

function problems(messages: Message[]): string[] {
  return messages.map((m) => `${m.line}:${m.column} ${m.ruleId}: ${m.message}`);
}

describe('report.html passes html-validate', () => {
  it('as the estimate writes it', async () => {
    const html = await readFile(join(run.outDir, 'report.html'), 'utf8');
    const report = await validator.validateString(html);
    expect(problems(report.results.flatMap((r) => r.messages))).toEqual([]);
    expect(report.valid).toBe(true);
  });

  it('with bands, watersheds, influence and the water-surface split', async () => {
    const folder = join(run.dir, 'enriched');
    await cp(run.outDir, folder, { recursive: true });
    await writeFile(join(folder, 'summary.json'), JSON.stringify(enrichSummary(JSON.parse(run.summaryText) as Record<string, unknown>)));
    await writeReport(folder);
    const html = await readFile(join(folder, 'report.html'), 'utf8');
    const report = await validator.validateString(html);
    expect(problems(report.results.flatMap((r) => r.messages))).toEqual([]);
  });

  it('catches a broken page (the validator is live)', async () => {
    const report = await validator.validateString('<!DOCTYPE html><html lang="en"><head><title>x</title></head><body><table><tr><td>1</td></tr></table><p><div></div></p></body></html>');
    expect(report.valid).toBe(false);
  });
});
