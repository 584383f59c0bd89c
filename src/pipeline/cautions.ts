/**
 * Cautions printed in the README, summary.json and the report. One source.
 */
export const CAUTIONS: string[] = [
  'These are planning estimates from a DEM, not a flood hazard, dam safety or inundation study. Do not use them to judge the safety of people, roads, buildings or structures downstream.',
  'Storage figures are not a determination of water rights. Local water law decides what storage means legally.',
  'Removing, notching, altering or building a dam, and any work in or near water, usually needs permits (wildlife, water-quality, wetland and stream-alteration rules) and may affect protected species. Follow local codes and ask the agencies and licensed professionals responsible.',
  'Lidar does not see through water: where a pond already holds water, the DEM is the water surface and storage below it is not measured by the fill.',
  'Dam heights that were not measured come from a documented default or from the DEM; check the height_source of each dam before relying on its figures.',
];
