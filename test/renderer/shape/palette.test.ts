import { describe, expect, it } from 'vitest';
import { CATEGORICAL, categoryColour, categoryMarker, interpolateStops, luminance, textColourOn, MARKERS } from '../../../renderer/shape/palette.js';

describe('palette', () => {
  it('interpolates between stops and clamps outside [0, 1]', () => {
    expect(interpolateStops(['#000000', '#ffffff'], 0)).toBe('#000000');
    expect(interpolateStops(['#000000', '#ffffff'], 1)).toBe('#ffffff');
    expect(interpolateStops(['#000000', '#ffffff'], 0.5)).toBe('#808080');
    expect(interpolateStops(['#000000', '#ff0000', '#ffffff'], 0.25)).toBe('#800000');
    expect(interpolateStops(['#000000', '#ffffff'], -3)).toBe('#000000');
    expect(interpolateStops(['#000000', '#ffffff'], Number.NaN)).toBe('#000000');
  });

  it('gives neighbouring categories different lightness, not only different hue', () => {
    // Common practice for colour-blind-safe sets: adjacent series differ in luminance
    // (here by at least 0.05 in WCAG relative luminance) so they stay apart without hue.
    for (let i = 0; i + 1 < CATEGORICAL.length; i++) expect(Math.abs(luminance(CATEGORICAL[i]) - luminance(CATEGORICAL[i + 1]))).toBeGreaterThan(0.05);
  });

  it('pairs every category with a marker shape and wraps around', () => {
    expect(categoryMarker(0)).toBe(MARKERS[0]);
    expect(categoryMarker(MARKERS.length)).toBe(MARKERS[0]);
    expect(categoryColour(CATEGORICAL.length + 1)).toBe(CATEGORICAL[1]);
    expect(categoryColour(-1)).toBe(CATEGORICAL[CATEGORICAL.length - 1]);
  });

  it('picks text with WCAG contrast of at least 4.5 on the scale ends', () => {
    const contrast = (a: string, b: string) => {
      const [l1, l2] = [luminance(a), luminance(b)].sort((x, y) => y - x);
      return (l1 + 0.05) / (l2 + 0.05);
    };
    for (const bg of ['#f6f0c8', '#1c2f5a', '#1f4e8c', '#eeebe3', '#9c3d12', '#d4d4d4']) expect(contrast(bg, textColourOn(bg))).toBeGreaterThanOrEqual(4.5);
  });
});
