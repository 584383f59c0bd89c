/**
 * `pondage report RUN_DIR` from the command line: renders a run folder's
 * report again (the same bytes the estimate wrote), writes elsewhere with
 * --out, and stops with one message and exit code 2 on a folder that is not
 * a run.
 */
import { mkdtemp, readFile, rm, stat } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { EXIT_INPUT, EXIT_OK, main } from '../src/cli/main.js';
import { makeValleyRun, type ValleyRun } from './report-valley.js';

let run: ValleyRun;

beforeAll(async () => {
  run = await makeValleyRun();
});

afterAll(async () => {
  await rm(run.dir, { recursive: true, force: true });
});

async function cli(args: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const o = vi.spyOn(process.stdout, 'write').mockImplementation((chunk: string | Uint8Array) => {
    out += String(chunk);
    return true;
  });
  const e = vi.spyOn(process.stderr, 'write').mockImplementation((chunk: string | Uint8Array) => {
    err += String(chunk);
    return true;
  });
  try {
    return { code: await main(['node', 'pondage', ...args]), out, err };
  } finally {
    o.mockRestore();
    e.mockRestore();
  }
}

describe('pondage report', () => {
  it('renders the run folder\'s report again, byte for byte', async () => {
    const before = await readFile(join(run.outDir, 'report.html'), 'utf8');
    const firstWrite = (await stat(join(run.outDir, 'report.html'))).mtimeMs;
    const r = await cli(['report', run.outDir]);
    expect(r.code).toBe(EXIT_OK);
    expect(r.out).toContain('report.html');
    expect((await stat(join(run.outDir, 'report.html'))).mtimeMs).toBeGreaterThanOrEqual(firstWrite);
    expect(await readFile(join(run.outDir, 'report.html'), 'utf8')).toBe(before);
  });

  it('writes to --out', async () => {
    const out = join(run.dir, 'elsewhere.html');
    const r = await cli(['report', run.outDir, '--out', out, '-q']);
    expect(r.code).toBe(EXIT_OK);
    expect(r.out).toBe('');
    expect((await readFile(out, 'utf8')).startsWith('<!DOCTYPE html>')).toBe(true);
  });

  it('refuses a folder without summary.json, naming it and the fix', async () => {
    const empty = await mkdtemp(join(tmpdir(), 'pondage-not-a-run-'));
    try {
      const r = await cli(['report', empty]);
      expect(r.code).toBe(EXIT_INPUT);
      expect(r.err).toContain(empty);
      expect(r.err).toContain('summary.json');
      expect(r.err).toContain('--out folder');
    } finally {
      await rm(empty, { recursive: true, force: true });
    }
  });
});
