/**
 * Output folders appear whole or not at all: everything is written into a
 * temporary sibling folder and renamed into place at the end, so a failed run
 * leaves no half-written folder behind.
 */
import { mkdir, readdir, rename, rm, stat } from 'node:fs/promises';
import { basename, dirname, join, resolve } from 'node:path';
import { InputError } from '../errors.js';

/** The file every pondage run folder holds; its presence makes a folder safe to replace. */
export const RUN_MARKER = 'summary.json';

/**
 * Runs `write(tmpDir)` and then moves tmpDir to `outDir`. An existing `outDir`
 * is replaced only when it is empty or an earlier pondage output folder
 * (it holds summary.json, or `markerFile` when given); otherwise the run stops.
 */
export async function writeFolderAtomically(
  outDir: string,
  write: (tmpDir: string) => Promise<void>,
  markerFile: string = RUN_MARKER,
): Promise<void> {
  const target = resolve(outDir);
  const parent = dirname(target);
  await mkdir(parent, { recursive: true });
  await assertReplaceable(target, markerFile);
  const tmp = join(parent, `.${basename(target)}.partial-${process.pid}`);
  await rm(tmp, { recursive: true, force: true });
  await mkdir(tmp);
  try {
    await write(tmp);
  } catch (err) {
    await rm(tmp, { recursive: true, force: true });
    throw err;
  }
  const old = join(parent, `.${basename(target)}.old-${process.pid}`);
  const existed = await exists(target);
  if (existed) await rename(target, old);
  await rename(tmp, target);
  if (existed) await rm(old, { recursive: true, force: true });
}

async function exists(path: string): Promise<boolean> {
  try {
    await stat(path);
    return true;
  } catch {
    return false;
  }
}

async function assertReplaceable(target: string, markerFile: string): Promise<void> {
  let entries: string[];
  try {
    const info = await stat(target);
    if (!info.isDirectory()) {
      throw new InputError(`--out ${target} is a file, not a folder; choose a folder path for the outputs`);
    }
    entries = await readdir(target);
  } catch (err) {
    if (err instanceof InputError) throw err;
    return; // does not exist yet
  }
  if (entries.length === 0 || entries.includes(markerFile)) return;
  throw new InputError(
    `--out ${target} already holds files that pondage did not write (no ${markerFile}); ` +
      'choose a new or empty folder so nothing of yours is replaced',
  );
}
