// Manyfield's own colours. The categorical set was chosen so neighbours differ in lightness as
// well as hue (they stay apart under the common colour-vision deficiencies); every series also
// gets a marker shape, so nothing is told by colour alone. Sequential scale: pale straw to deep
// ink blue; diverging scale: blue below zero, stone in the middle, rust above.

export const CATEGORICAL = ['#23507a', '#d9822b', '#8c3b5e', '#c9b23a', '#3e8a6e', '#5aa9d6', '#6b6b6b', '#e3a6c0'] as const;

export const MARKERS = ['circle', 'square', 'triangle', 'diamond', 'cross', 'star', 'wye'] as const;
export type MarkerShape = (typeof MARKERS)[number];

export function categoryColour(i: number): string {
  return CATEGORICAL[((i % CATEGORICAL.length) + CATEGORICAL.length) % CATEGORICAL.length];
}

export function categoryMarker(i: number): MarkerShape {
  return MARKERS[((i % MARKERS.length) + MARKERS.length) % MARKERS.length];
}

const SEQUENTIAL_STOPS = ['#f6f0c8', '#b7d8b0', '#5d9fa8', '#2f6390', '#1c2f5a'];
const DIVERGING_STOPS = ['#1f4e8c', '#7fa6cf', '#eeebe3', '#d99a6c', '#9c3d12'];

function parseHex(hex: string): [number, number, number] {
  const n = Number.parseInt(hex.slice(1), 16);
  return [(n >> 16) & 255, (n >> 8) & 255, n & 255];
}

function toHex(rgb: readonly number[]): string {
  return `#${rgb.map((c) => Math.round(Math.min(255, Math.max(0, c))).toString(16).padStart(2, '0')).join('')}`;
}

/** Linear interpolation in RGB between evenly spaced stops; t is clamped to [0, 1]. */
export function interpolateStops(stops: readonly string[], t: number): string {
  const u = Number.isFinite(t) ? Math.min(1, Math.max(0, t)) : 0;
  const pos = u * (stops.length - 1);
  const i = Math.min(stops.length - 2, Math.floor(pos));
  const f = pos - i;
  const a = parseHex(stops[i]);
  const b = parseHex(stops[i + 1]);
  return toHex(a.map((c, k) => c + (b[k] - c) * f));
}

export const sequentialColour = (t: number): string => interpolateStops(SEQUENTIAL_STOPS, t);
export const divergingColour = (t: number): string => interpolateStops(DIVERGING_STOPS, t);

/** Relative luminance (WCAG), used to pick dark or light text on a coloured cell. */
export function luminance(hex: string): number {
  const lin = parseHex(hex).map((c) => {
    const s = c / 255;
    return s <= 0.03928 ? s / 12.92 : ((s + 0.055) / 1.055) ** 2.4;
  });
  return 0.2126 * lin[0] + 0.7152 * lin[1] + 0.0722 * lin[2];
}

export function textColourOn(background: string): string {
  return luminance(background) > 0.28 ? '#14181f' : '#ffffff';
}

/** Colour of excluded and missing plots: a neutral grey, always drawn with a mark too. */
export const EXCLUDED_FILL = '#d4d4d4';
export const MISSING_FILL = '#ffffff';
