/** `pondage compare`: survey years, valleys, proposed restoration, from run folders. */
import type { Command } from 'commander';
import { InputError } from '../errors.js';
import { compareRuns, type Comparison } from '../compare/compare.js';
import { DEFAULT_MATCH, type MatchOptions } from '../compare/match.js';
import { readRunFolder } from '../io/compare-inputs.js';
import { writeCompareFolder } from '../io/compare-outputs.js';
import { TOOL_VERSION } from '../pipeline/version.js';
import { m3ToAcreFeet } from '../units.js';
import { parseLengthM, parseNumber } from './options.js';

interface CompareFlags {
  out: string;
  labels?: string;
  matchTolerance: string;
  heightChange: string;
  volumeChange: string;
  demRmse?: string;
  quiet?: boolean;
}

/** Options shared with the demo, which compares its two survey years. */
export interface CompareJob {
  runDirs: string[];
  outDir: string;
  labels?: string[];
  match?: MatchOptions;
  demRmseM?: (number | undefined)[];
}

/** Reads the runs, compares them and writes the folder; returns the comparison. */
export async function runCompare(job: CompareJob): Promise<Comparison> {
  const runs = [];
  for (const [k, dir] of job.runDirs.entries()) runs.push(await readRunFolder(dir, job.labels?.[k]));
  const labels = runs.map((r) => r.record.label);
  const dup = labels.find((l, k) => labels.indexOf(l) !== k);
  if (dup !== undefined) throw new InputError(`two runs are both called "${dup}"; name them with --labels, e.g. --labels 2019,2024`);
  const { comparison, rasters } = compareRuns(runs, { match: job.match ?? DEFAULT_MATCH, ...(job.demRmseM ? { demRmseM: job.demRmseM } : {}) });
  const last = runs[runs.length - 1]!.record;
  const backdrop = runs[runs.length - 1]!.backdrop ?? runs[0]!.backdrop ?? null;
  await writeCompareFolder(job.outDir, comparison, { raster: rasters[0] ?? null, unitM: last.dem.crsUnitM, version: TOOL_VERSION, backdrop });
  return comparison;
}

/** The few lines printed after a comparison. */
export function compareLines(c: Comparison): string {
  const t = c.totals;
  const from = c.runs[0]!.label;
  const to = c.runs[c.runs.length - 1]!.label;
  const band = t.bands?.['storage_change_m3'];
  const verdict = (d: boolean | null | undefined): string => (d === true ? 'detectable' : d === false ? 'not detectable (band includes zero)' : 'no band');
  const sign = (v: number, digits = 0): string => `${v > 0 ? '+' : ''}${v.toLocaleString('en-US', { maximumFractionDigits: digits, minimumFractionDigits: digits })}`;
  const lines = [
    `${from} → ${to}`,
    `  storage   ${sign(t.storage_change_m3)} m³ (${sign(m3ToAcreFeet(t.storage_change_m3), 2)} acre-ft)` +
      (band ? `, band ${sign(band.p05)} to ${sign(band.p95)} m³ (${t.band_methods['storage_change_m3']}): ` : ': ') +
      verdict(t.detectable['storage_change_m3']),
    `  inundated ${sign(t.inundated_area_change_m2)} m²: ${verdict(t.detectable['inundated_area_change_m2'])}`,
    `  influence ${t.influence_area_change_m2 === null ? 'not available (the runs report no influence zone)' : `${sign(t.influence_area_change_m2)} m²: ${verdict(t.detectable['influence_area_change_m2'])}`}`,
    `  dams      ${c.dam_counts.new} new, ${c.dam_counts.gone} gone, ${c.dam_counts.changed} changed, ${c.dam_counts.persisting} persisting`,
  ];
  if (c.dem_difference.lod95_m !== null) lines.push(`  DEM difference LoD95 ${c.dem_difference.lod95_m.toFixed(3)} m (σ ${c.dem_difference.sigma_from_m} and ${c.dem_difference.sigma_to_m} m)`);
  for (const r of c.runs) {
    const p = r.proposed;
    if (p.available && p.added && p.with_proposed && p.with_proposed.proposed_counted > 0) {
      lines.push(`  ${r.label}: ${p.with_proposed.proposed_counted} proposed structures would add ${sign(p.added.storage_m3)} m³${p.added.bands?.['storage_m3'] ? ` (band ${sign(p.added.bands['storage_m3'].p05)} to ${sign(p.added.bands['storage_m3'].p95)} m³, ${p.added.band_method}: ${p.added.detectable ? 'detectable' : 'not detectable'})` : ''}${p.drowned_by_proposed.length > 0 ? `, drowning ${p.drowned_by_proposed.map((d) => d.id).join(', ')}` : ''}`);
    }
  }
  return lines.join('\n') + '\n';
}

export function addCompareCommand(program: Command): void {
  program
    .command('compare')
    .description('compare estimate runs (survey years, valleys, proposed structures): what changed, dam by dam and in total, and whether it is detectable')
    .argument('<runs...>', 'two or more run folders (the --out of pondage estimate), earliest first')
    .requiredOption('--out <dir>', 'folder for compare.json, compare.csv and compare.html (an earlier comparison folder is replaced)')
    .option('--labels <names>', 'comma-separated names of the runs, in order (default: the folder names)')
    .option('--match-tolerance <length>', 'largest distance between crest midpoints of one dam in two runs, for dams whose ids differ (m)', `${DEFAULT_MATCH.toleranceM}`)
    .option('--height-change <length>', 'smallest height difference called a change (m)', `${DEFAULT_MATCH.heightChangeM}`)
    .option('--volume-change <fraction>', `smallest relative change of a dam's water called a change (also at least ${DEFAULT_MATCH.volumeChangeMinM3} m³)`, `${DEFAULT_MATCH.volumeChangeFraction}`)
    .option('--dem-rmse <lengths>', "DEM vertical RMSE for the level of detection, one for all runs or comma-separated per run (default: the run's own, else 0.10 m, USGS QL2)")
    .option('-q, --quiet', 'print nothing but errors')
    .action(async (runDirs: string[], flags: CompareFlags) => {
      if (runDirs.length < 2) throw new InputError('compare needs at least two run folders: pondage compare RUN_A RUN_B --out DIR');
      const labels = flags.labels?.split(',').map((s) => s.trim());
      if (labels && labels.length !== runDirs.length) throw new InputError(`--labels gives ${labels.length} names for ${runDirs.length} runs; give one name per run, comma-separated`);
      let demRmseM: (number | undefined)[] | undefined;
      if (flags.demRmse !== undefined) {
        const values = flags.demRmse.split(',').map((s) => parseLengthM(s, '--dem-rmse', { min: 0, max: 10 }));
        if (values.length !== 1 && values.length !== runDirs.length) throw new InputError(`--dem-rmse gives ${values.length} values for ${runDirs.length} runs; give one for all, or one per run`);
        demRmseM = runDirs.map((_, k) => (values.length === 1 ? values[0] : values[k]));
      }
      const match: MatchOptions = {
        ...DEFAULT_MATCH,
        toleranceM: parseLengthM(flags.matchTolerance, '--match-tolerance', { min: 0, max: 1000 }),
        heightChangeM: parseLengthM(flags.heightChange, '--height-change', { min: 0, max: 10 }),
        volumeChangeFraction: parseNumber(flags.volumeChange, '--volume-change', { min: 0, max: 10 }),
      };
      const comparison = await runCompare({ runDirs, outDir: flags.out, match, ...(labels ? { labels } : {}), ...(demRmseM ? { demRmseM } : {}) });
      if (!flags.quiet) {
        process.stdout.write(compareLines(comparison));
        process.stdout.write(`\nwrote ${flags.out}/ (compare.json, compare.csv, compare.html)\n`);
      }
    });
}
