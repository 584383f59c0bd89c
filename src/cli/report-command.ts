/** `pondage report RUN_DIR`: render a run folder's report.html again from its files. */
import type { Command } from 'commander';
import { join } from 'node:path';
import { REPORT_FILE, writeReport } from '../report/write.js';

interface ReportFlags {
  out?: string;
  quiet?: boolean;
}

export function addReportCommand(program: Command): void {
  program
    .command('report')
    .description('write the HTML report of a run folder again, from its summary.json, report-map.json and GeoJSON layers')
    .argument('<run-dir>', 'a folder written by pondage estimate (its --out)')
    .option('--out <file>', `where to write the report (default: ${REPORT_FILE} in the run folder)`)
    .option('-q, --quiet', 'print nothing but errors')
    .action(async (runDir: string, flags: ReportFlags) => {
      const { path, input, bytes } = await writeReport(runDir, flags.out ?? join(runDir, REPORT_FILE));
      if (flags.quiet) return;
      process.stdout.write(`wrote ${path} (${(bytes / 1e6).toFixed(2)} MB)\n`);
      if (!input.map) {
        process.stdout.write(`note: ${runDir} has no report-map.json, so the report has no overview map; run the estimate again to get one\n`);
      }
    });
}
