// Colours of the report: a perceptually uniform, colour-blind-safe sequential scale for EMD, and a
// qualitative palette for families.
//
// Sequential scale: viridis ("A Better Default Colormap for Matplotlib", van der Walt & Smith, SciPy 2015;
// the 256-entry table is matplotlib's `_viridis_data`). The 17 control points below are that table
// sampled at every 16th entry (positions i*16/255), which is also how plotly.js 4.1.1 ships it
// (`Viridis` in src/components/colorscale/scales.js); a test compares them with the installed bundle.
// Between control points colours are interpolated linearly in sRGB, as plotly.js does.
//
// Qualitative palette: the colour-blind-safe set of Okabe & Ito, "Color Universal Design" (2008, from
// memory), without its yellow (too pale on white) and black (kept for outlines); unassigned structures
// (family -1) are a neutral grey.

export const VIRIDIS_STOPS: ReadonlyArray<readonly [number, string]> = [
  [0, '#440154'],
  [16 / 255, '#48186a'],
  [32 / 255, '#472d7b'],
  [48 / 255, '#424086'],
  [64 / 255, '#3b528b'],
  [80 / 255, '#33638d'],
  [96 / 255, '#2c728e'],
  [112 / 255, '#26828e'],
  [128 / 255, '#21918c'],
  [144 / 255, '#1fa088'],
  [160 / 255, '#28ae80'],
  [176 / 255, '#3fbc73'],
  [192 / 255, '#5ec962'],
  [208 / 255, '#84d44b'],
  [224 / 255, '#addc30'],
  [240 / 255, '#d8e219'],
  [1, '#fde725'],
];

export const FAMILY_COLOURS: readonly string[] = ['#e69f00', '#56b4e9', '#009e73', '#0072b2', '#d55e00', '#cc79a7'];
export const UNASSIGNED_COLOUR = '#9a9a9a';

/** Colour at position t in [0, 1] (clamped) of a scale given by sorted control points, as `#rrggbb`. */
export function colourAt(stops: ReadonlyArray<readonly [number, string]>, t: number): string {
  if (stops.length === 0) throw new Error('colourAt: a colour scale needs at least one control point');
  const x = Number.isFinite(t) ? Math.min(1, Math.max(0, t)) : 0;
  let hi = 1;
  while (hi < stops.length - 1 && (stops[hi] as readonly [number, string])[0] < x) hi++;
  const [p0, c0] = stops[Math.max(0, hi - 1)] as readonly [number, string];
  const [p1, c1] = stops[Math.min(hi, stops.length - 1)] as readonly [number, string];
  const f = p1 > p0 ? (x - p0) / (p1 - p0) : 0;
  const a = hexToRgb(c0);
  const b = hexToRgb(c1);
  return rgbToHex(a[0] + (b[0] - a[0]) * f, a[1] + (b[1] - a[1]) * f, a[2] + (b[2] - a[2]) * f);
}

/** n colours for n equal classes of a scale, each taken at its class centre. */
export function colourClasses(stops: ReadonlyArray<readonly [number, string]>, n: number): string[] {
  const out: string[] = [];
  for (let c = 0; c < n; c++) out.push(colourAt(stops, (c + 0.5) / n));
  return out;
}

/** A stepwise plotly colourscale showing `colours` as equal discrete bands (for a legend colour bar). */
export function stepColourscale(colours: readonly string[]): Array<[number, string]> {
  const n = colours.length;
  const out: Array<[number, string]> = [];
  colours.forEach((c, i) => {
    out.push([i / n, c], [(i + 1) / n, c]);
  });
  return out;
}

/** Colour of a family: cycles through the palette; unassigned (-1) is grey. */
export function familyColour(family: number): string {
  if (family < 0) return UNASSIGNED_COLOUR;
  return FAMILY_COLOURS[family % FAMILY_COLOURS.length] as string;
}

function hexToRgb(hex: string): [number, number, number] {
  const m = /^#([0-9a-f]{2})([0-9a-f]{2})([0-9a-f]{2})$/i.exec(hex);
  if (!m) throw new Error(`not a #rrggbb colour: ${hex}`);
  return [parseInt(m[1] as string, 16), parseInt(m[2] as string, 16), parseInt(m[3] as string, 16)];
}

function rgbToHex(r: number, g: number, b: number): string {
  const h = (v: number) => Math.round(Math.min(255, Math.max(0, v))).toString(16).padStart(2, '0');
  return `#${h(r)}${h(g)}${h(b)}`;
}
