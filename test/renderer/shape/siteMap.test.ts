import { describe, expect, it } from 'vitest';
import { layoutSites, type SiteInput } from '../../../renderer/shape/siteMap.js';

const site = (id: number, lat: number | null, lon: number | null, trials = 3): SiteInput => ({ id, code: `S${id}`, name: `Site ${id}`, lat, lon, trials });

describe('site map layout', () => {
  it('puts north up and east right, inside the margins, without stretching', () => {
    const l = layoutSites([site(1, -34, 147), site(2, -35, 147), site(3, -34, 148)], 400, 300, 20);
    const [a, b, c] = l.placed;
    expect(b.y).toBeGreaterThan(a.y); // further south = lower
    expect(c.x).toBeGreaterThan(a.x); // further east = right
    for (const p of l.placed) {
      expect(p.x).toBeGreaterThanOrEqual(20 - 1e-9);
      expect(p.x).toBeLessThanOrEqual(380 + 1e-9);
      expect(p.y).toBeGreaterThanOrEqual(20 - 1e-9);
      expect(p.y).toBeLessThanOrEqual(280 + 1e-9);
    }
    // One degree of longitude at ~34.3 S is cos(34.33°) = 0.826 of a degree of latitude (tolerance 1e-6).
    const meanLat = (-34 - 35 - 34) / 3;
    expect((c.x - a.x) / (b.y - a.y)).toBeCloseTo(Math.cos((meanLat * Math.PI) / 180), 6);
  });

  it('lists sites without coordinates apart and centres a single site', () => {
    const l = layoutSites([site(1, null, 147), site(2, -34, 147)], 400, 300, 20);
    expect(l.unplaced.map((s) => s.id)).toEqual([1]);
    expect(l.placed[0].x).toBeCloseTo(200, 9);
    expect(l.placed[0].y).toBeCloseTo(150, 9);
    expect(l.tenKm).toBeNull();
  });

  it('draws sites with more trials larger', () => {
    const l = layoutSites([site(1, -34, 147, 1), site(2, -35, 148, 4)], 400, 300, 20);
    expect(l.placed[1].r).toBeGreaterThan(l.placed[0].r);
  });
});

import { designShort, siteYearMatrix } from '../../../renderer/shape/siteYearMatrix.js';

describe('site by year matrix', () => {
  it('places each trial at its site and year, sorted, leaving gaps empty', () => {
    const t = (id: number, site: string, year: number) => ({ id, label: `${site}-${year}`, site, year, design: 'randomised-blocks', flags: [] });
    const m = siteYearMatrix([t(1, 'KEL', 2024), t(2, 'ASH', 2023), t(3, 'ASH', 2024), t(4, 'ASH', 2024)]);
    expect(m.sites).toEqual(['ASH', 'KEL']);
    expect(m.years).toEqual([2023, 2024]);
    expect(m.cells[0][1].map((x) => x.id)).toEqual([3, 4]);
    expect(m.cells[1][0]).toEqual([]);
    expect(designShort('row-column')).toBe('RC');
  });
});
