// Sites placed on a plain plane from their coordinates: an equirectangular projection scaled
// by the cosine of the mean latitude (distances east-west and north-south then read alike over a
// region), fitted into the drawing with a margin. No map tiles, nothing fetched.

export interface SiteInput {
  readonly id: number;
  readonly code: string;
  readonly name: string;
  readonly lat: number | null;
  readonly lon: number | null;
  readonly trials: number;
}

export interface PlacedSite {
  readonly id: number;
  readonly code: string;
  readonly name: string;
  readonly trials: number;
  readonly x: number;
  readonly y: number;
  /** Marker radius, growing with the square root of the trial count. */
  readonly r: number;
}

export interface SiteMapLayout {
  readonly placed: PlacedSite[];
  /** Sites without coordinates, listed beside the plane instead. */
  readonly unplaced: SiteInput[];
  /** Length of 10 km on the plane, for the scale bar; null when fewer than two sites are placed. */
  readonly tenKm: number | null;
}

const KM_PER_DEGREE = 111.32;

export function layoutSites(sites: readonly SiteInput[], width: number, height: number, margin: number): SiteMapLayout {
  const withCoords = sites.filter((s): s is SiteInput & { lat: number; lon: number } => s.lat !== null && s.lon !== null && Number.isFinite(s.lat) && Number.isFinite(s.lon));
  const unplaced = sites.filter((s) => !withCoords.includes(s as SiteInput & { lat: number; lon: number }));
  if (withCoords.length === 0) return { placed: [], unplaced, tenKm: null };
  const meanLat = withCoords.reduce((a, s) => a + s.lat, 0) / withCoords.length;
  const k = Math.cos((meanLat * Math.PI) / 180);
  const xs = withCoords.map((s) => s.lon * k);
  const ys = withCoords.map((s) => s.lat);
  const x0 = Math.min(...xs);
  const x1 = Math.max(...xs);
  const y0 = Math.min(...ys);
  const y1 = Math.max(...ys);
  const spanX = x1 - x0;
  const spanY = y1 - y0;
  const span = Math.max(spanX, spanY);
  const innerW = width - 2 * margin;
  const innerH = height - 2 * margin;
  // One scale for both directions (no stretching); a single site sits in the middle.
  const scale = span > 0 ? Math.min(innerW / (spanX || span), innerH / (spanY || span)) : 1;
  const offX = margin + (innerW - spanX * scale) / 2;
  const offY = margin + (innerH - spanY * scale) / 2;
  const maxTrials = Math.max(1, ...withCoords.map((s) => s.trials));
  const placed = withCoords.map((s, i) => ({
    id: s.id,
    code: s.code,
    name: s.name,
    trials: s.trials,
    x: offX + (xs[i] - x0) * scale,
    // North up: larger latitude higher on the plane.
    y: offY + (y1 - ys[i]) * scale,
    r: 5 + 7 * Math.sqrt(s.trials / maxTrials),
  }));
  return { placed, unplaced, tenKm: span > 0 ? (10 / KM_PER_DEGREE) * scale : null };
}
