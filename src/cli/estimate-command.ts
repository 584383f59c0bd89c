/** `pondage estimate`: the main job. */
import type { Command } from 'commander';
import { DEFAULT_POND_PARAMS } from '../ponds/params.js';
import { defaultParams, runEstimate } from '../pipeline/run.js';
import type { EstimateParams } from '../pipeline/estimate.js';
import { parseLengthM, parseNumber } from './options.js';
import { progressBar } from './progress.js';
import { runTable } from './table.js';
import { addWaterModelOptions, waterParamsFromFlags, type WaterModelFlags } from './water-options.js';
import { addSeedOption, addUncertaintyOptions, uncertaintyFromFlags, type UncertaintyFlags } from './uncertainty-options.js';
import { addAreaInputOptions, addInfluenceOptions, areaInputsFromFlags, influenceFromFlags, type AreaInputFlags, type InfluenceFlags } from './influence-options.js';
import { watershedTable } from './watershed-table.js';

/** Flags shared by every command that runs an estimate (estimate, demo). */
export interface ParamFlags extends WaterModelFlags, UncertaintyFlags, InfluenceFlags {
  defaultHeight?: string;
  maxReach?: string;
  stageStep?: string;
  maxCrestLength?: string;
  snapRadius?: string;
  minConfidence?: string;
}

/** Adds the estimate parameters' flags to a command; the option text is the CLI reference. */
export function addParamOptions(cmd: Command): Command {
  const d = defaultParams();
  return addInfluenceOptions(addUncertaintyOptions(addWaterModelOptions(cmd)))
    .option('--default-height <length>', `crest height above the bed for dams with no measured height that do not stand out in the DEM (m, or add ft / us-ft)`, `${DEFAULT_POND_PARAMS.defaultHeightM}`)
    .option('--max-reach <length>', 'largest distance a pond may reach from its crest; ponds that reach it are flagged "edge" (m)', `${d.maxReachM}`)
    .option('--stage-step <length>', 'level step of the stage–area–storage curves (m)', `${DEFAULT_POND_PARAMS.stageStepM}`)
    .option('--max-crest-length <length>', 'cap on crest lines built from dam points (m)', `${d.maxCrestLengthM}`)
    .option('--snap-radius <length>', 'search radius for the channel around a dam point (m)', `${d.snapRadiusM}`)
    .option('--min-confidence <0-1>', 'candidates count in the totals from this confidence up', `${d.minConfidence}`);
}

/** Reads the parameter flags into run parameters (every value checked). */
export function paramsFromFlags(flags: ParamFlags): EstimateParams {
  const p = defaultParams();
  if (flags.defaultHeight !== undefined) p.pond.defaultHeightM = parseLengthM(flags.defaultHeight, '--default-height', { min: 0.05, max: p.pond.maxHeightM });
  if (flags.maxReach !== undefined) p.maxReachM = parseLengthM(flags.maxReach, '--max-reach', { min: 1, max: 50_000 });
  if (flags.stageStep !== undefined) p.pond.stageStepM = parseLengthM(flags.stageStep, '--stage-step', { min: 0.001, max: 10 });
  if (flags.maxCrestLength !== undefined) p.maxCrestLengthM = parseLengthM(flags.maxCrestLength, '--max-crest-length', { min: 1, max: 5000 });
  if (flags.snapRadius !== undefined) p.snapRadiusM = parseLengthM(flags.snapRadius, '--snap-radius', { min: 0, max: 500 });
  if (flags.minConfidence !== undefined) p.minConfidence = parseNumber(flags.minConfidence, '--min-confidence', { min: 0, max: 1 });
  p.water = waterParamsFromFlags(flags, p);
  p.uncertainty = uncertaintyFromFlags(flags);
  p.influence = influenceFromFlags(flags);
  return p;
}

interface EstimateFlags extends ParamFlags, AreaInputFlags {
  dem: string[];
  dams: string;
  out: string;
  demCrs?: string;
  damsCrs?: string;
  zUnits?: string;
  waterMask?: string;
  bedDem?: string;
  quiet?: boolean;
}

export function addEstimateCommand(program: Command): void {
  const cmd = program
    .command('estimate')
    .description('fill the pond behind each dam crest and write per-dam storage, areas and depths')
    .requiredOption('--dem <files...>', 'DEM GeoTIFF, or several tiles of one mosaic (same CRS and cell size)')
    .requiredOption('--dams <file>', 'dam inventory: GeoJSON (crest lines or points) or CSV (x/y, lon/lat or WKT columns)')
    .requiredOption('--out <dir>', 'output folder (created; an earlier pondage output folder is replaced)')
    .option('--dem-crs <crs>', "the DEM's CRS when its GeoKeys lack or misstate it (EPSG:26911 or a proj4 string)")
    .option('--dams-crs <crs>', 'CRS of projected dam coordinates (default: lon/lat WGS 84 as RFC 7946 asks)')
    .option('--z-units <unit>', 'vertical unit of the DEM values: m, ft, us-ft (default: from the GeoKeys, else the horizontal unit)')
    .option('--water-mask <file>', "today's water as a GeoTIFF (non-zero cells) or GeoJSON polygons, on the DEM's CRS or lon/lat; replaces finding water surfaces in the DEM")
    .option('--bed-dem <file>', "DEM of the bed under today's water (before the dams, a drained year, a bathymetry survey), in the DEM's CRS; used where it has data")
    .option('-q, --quiet', 'print nothing but errors');
  addParamOptions(addSeedOption(addAreaInputOptions(cmd))).action(async (flags: EstimateFlags) => {
    const params = paramsFromFlags(flags);
    const areas = areaInputsFromFlags(flags);
    const bar = progressBar('ponds', flags.quiet ?? false);
    try {
      const { summary } = await runEstimate({
        demPaths: flags.dem,
        damsPath: flags.dams,
        demCrs: flags.demCrs,
        damsCrs: flags.damsCrs,
        zUnits: flags.zUnits,
        waterMaskPath: flags.waterMask,
        bedDemPath: flags.bedDem,
        ...areas,
        outDir: flags.out,
        params,
        ...(bar.onProgress ? { progress: bar.onProgress } : {}),
      });
      bar.stop();
      if (!flags.quiet) {
        process.stdout.write(runTable(summary));
        process.stdout.write(watershedTable(summary));
        process.stdout.write(`\nwrote ${flags.out}/ (${writtenFiles(summary)})\n`);
        if (summary.warnings.length > 0) process.stdout.write(`${summary.warnings.length} warnings: see summary.json or the warnings column of dams.csv\n`);
      }
    } finally {
      bar.stop();
    }
  });
}

/** The main files of a run folder, for the closing line. */
export function writtenFiles(summary: { watersheds?: unknown }): string {
  return summary.watersheds
    ? 'summary.json, dams.csv, watersheds.csv, ponds.geojson, influence.geojson, watersheds.geojson, streams.geojson, depth.tif, influence.tif, report.html'
    : 'summary.json, dams.csv, ponds.geojson, depth.tif, report.html';
}
