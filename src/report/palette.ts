/**
 * The report's colours: the eight-colour palette of Okabe & Ito (2008),
 * "Color Universal Design (CUD): how to make figures and presentations that
 * are friendly to colorblind people", chosen because its colours stay
 * distinct under protanopia, deuteranopia and tritanopia and in greyscale
 * print when paired with the shapes below. Every categorical mark also
 * differs in shape or line style, so colour is never the only cue.
 *
 * Roles (fixed, so a colour means the same thing in every figure):
 * water = blue, influence zone = bluish green, dams by status =
 * vermillion / orange / reddish purple / black, escape kinds and series in
 * charts follow the palette's order. templates/report.css repeats these as
 * CSS custom properties; keep the two in step.
 */

/** Okabe–Ito colours, by their published names. */
export const OKABE_ITO = {
  black: '#000000',
  orange: '#E69F00',
  skyBlue: '#56B4E9',
  bluishGreen: '#009E73',
  yellow: '#F0E442',
  blue: '#0072B2',
  vermillion: '#D55E00',
  reddishPurple: '#CC79A7',
} as const;

/** Marker shapes used beside colour. */
export type MarkerShape = 'circle' | 'diamond' | 'square' | 'triangle' | 'cross';

/** Dam status → colour and marker on the map and in the legend. */
export const STATUS_STYLE: Record<string, { colour: string; shape: MarkerShape; label: string }> = {
  confirmed: { colour: OKABE_ITO.vermillion, shape: 'circle', label: 'confirmed' },
  candidate: { colour: OKABE_ITO.orange, shape: 'diamond', label: 'candidate' },
  proposed: { colour: OKABE_ITO.reddishPurple, shape: 'square', label: 'proposed' },
  breached: { colour: OKABE_ITO.black, shape: 'triangle', label: 'breached' },
};

/** What set a pond's water level → colour and marker in the area–volume chart. */
export const LIMIT_STYLE: Record<string, { colour: string; shape: MarkerShape; label: string }> = {
  crest: { colour: OKABE_ITO.blue, shape: 'circle', label: 'crest (full pond)' },
  spill: { colour: OKABE_ITO.orange, shape: 'triangle', label: 'spill around the crest' },
  edge: { colour: OKABE_ITO.vermillion, shape: 'square', label: 'edge of DEM or reach (lower bound)' },
  nodata: { colour: OKABE_ITO.reddishPurple, shape: 'diamond', label: 'NoData (lower bound)' },
  breach: { colour: OKABE_ITO.black, shape: 'cross', label: 'breach' },
};

/** Height source → colour and marker in the heights chart. */
export const HEIGHT_SOURCE_STYLE: Record<string, { colour: string; shape: MarkerShape; label: string }> = {
  measured: { colour: OKABE_ITO.blue, shape: 'circle', label: 'measured' },
  dem: { colour: OKABE_ITO.bluishGreen, shape: 'diamond', label: 'from the DEM' },
  default: { colour: OKABE_ITO.orange, shape: 'square', label: 'default' },
  breach: { colour: OKABE_ITO.black, shape: 'triangle', label: 'breach invert' },
};

/** Series colours for line charts, in order (yellow left out: too pale on white). */
export const SERIES = [
  OKABE_ITO.blue,
  OKABE_ITO.vermillion,
  OKABE_ITO.bluishGreen,
  OKABE_ITO.orange,
  OKABE_ITO.reddishPurple,
  OKABE_ITO.skyBlue,
  OKABE_ITO.black,
] as const;

/** Line dash patterns paired with SERIES, so lines differ without colour. */
export const SERIES_DASH = ['', '6 3', '2 3', '8 3 2 3', '4 4', '1 2', '10 4'] as const;

/** Map fills and lines. */
export const MAP_STYLE = {
  water: OKABE_ITO.blue,
  waterOpacity: 0.72,
  influence: OKABE_ITO.bluishGreen,
  influenceOpacity: 0.32,
  stream: OKABE_ITO.skyBlue,
  watershed: '#2b2b2b',
  crest: OKABE_ITO.black,
} as const;
