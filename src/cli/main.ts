/**
 * The command line: parse flags, call the pipeline, print, return an exit
 * code. Only this folder touches argv, stdout, stderr and exit codes.
 */
import { Command, CommanderError } from 'commander';
import { InputError } from '../errors.js';
import { TOOL_VERSION } from '../pipeline/version.js';
import { addCompareCommand } from './compare-command.js';
import { addDemoCommand } from './demo-command.js';
import { addEstimateCommand } from './estimate-command.js';
import { addReportCommand } from './report-command.js';

/** Exit codes: 0 success, 1 pondage's own fault, 2 a problem with the inputs or flags. */
export const EXIT_OK = 0;
export const EXIT_BUG = 1;
export const EXIT_INPUT = 2;

/** Runs the CLI on process-style argv; resolves to the exit code. */
export async function main(argv: string[]): Promise<number> {
  const program = new Command('pondage')
    .description('Surface-water storage and beaver-influenced area behind dam crests, from a dam inventory and a DEM.')
    .version(TOOL_VERSION)
    .showHelpAfterError('(run with --help for usage)')
    .exitOverride();
  addEstimateCommand(program);
  addDemoCommand(program);
  addCompareCommand(program);
  addReportCommand(program);
  try {
    await program.parseAsync(argv);
    return EXIT_OK;
  } catch (err) {
    if (err instanceof CommanderError) {
      // Help and version exit through here with code 0; flag errors were already printed.
      return err.exitCode === 0 ? EXIT_OK : EXIT_INPUT;
    }
    if (err instanceof InputError) {
      process.stderr.write(`pondage: ${err.message}\n`);
      return EXIT_INPUT;
    }
    process.stderr.write(`pondage: internal error (please report it with the command you ran):\n${err instanceof Error ? (err.stack ?? err.message) : String(err)}\n`);
    return EXIT_BUG;
  }
}
