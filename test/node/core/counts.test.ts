// Per-AOI counts: membership checked against turf in lon/lat, review states and score threshold per the rule.
import booleanPointInPolygon from '@turf/boolean-point-in-polygon';
import { point, polygon } from '@turf/helpers';
import { describe, expect, it } from 'vitest';
import { parseAois, reprojectAoi } from '../../../web/core/aoi.ts';
import { countPerAoi, countsUnderRule } from '../../../web/core/counts.ts';
import { crsToLonLat, lonLatToCrs } from '../../../web/core/crs.ts';
import { multiPolygonAreaM2 } from '../../../web/core/geodesic-area.ts';
import { COUNTING_RULE } from '../../../web/core/point-in-polygon.ts';
import { createDetectionTable, type ReviewState } from '../../../web/core/types.ts';
import { mulberry32 as rng } from '../../helpers/mulberry32.ts';


const lotA = [[[13.400, 52.500], [13.404, 52.500], [13.404, 52.503], [13.400, 52.503], [13.400, 52.500]],
  [[13.401, 52.501], [13.402, 52.501], [13.402, 52.502], [13.401, 52.502], [13.401, 52.501]]];
const lotB = [[[13.403, 52.502], [13.407, 52.5025], [13.405, 52.505], [13.403, 52.502]]];

describe('countPerAoi', () => {
  it('membership equals turf in lon/lat; rule: added always, rejected never, others by score', () => {
    const aois = parseAois({ type: 'FeatureCollection', features: [
      { type: 'Feature', id: 'A', properties: { name: 'Lot A' }, geometry: { type: 'Polygon', coordinates: lotA } },
      { type: 'Feature', id: 'B', properties: { name: 'Lot B' }, geometry: { type: 'Polygon', coordinates: lotB } },
    ] });
    const n = 3000;
    const t = createDetectionTable('EPSG:32633', n);
    const review: ReviewState[] = [];
    const r = rng(99);
    const states: ReviewState[] = ['unreviewed', 'unreviewed', 'accepted', 'rejected', 'added'];
    for (let i = 0; i < n; i++) {
      const [x, y] = lonLatToCrs(32633, [13.3995 + 0.008 * r(), 52.4995 + 0.006 * r()]);
      t.cxM[i] = x; t.cyM[i] = y; t.lengthM[i] = 4.4; t.widthM[i] = 1.8;
      t.score[i] = r(); t.classIdx[i] = r() < 0.7 ? 0 : 1; t.sceneIdx[i] = 0;
      review.push(states[Math.floor(r() * states.length)]);
    }
    t.count = n;
    const classes = ['vehicle', 'solar_panel'];
    const inFrame = aois.map((a) => ({ aoi: reprojectAoi(a, 32633), areaM2: multiPolygonAreaM2(a.polygonsLonLat), coverage: 0.9 }));
    const rows = countPerAoi({ detections: t, classes, review, aois: inFrame, date: '2024-05-01', gsdM: 0.3 }, { minScore: 0.4 });
    expect(rows).toHaveLength(4);
    // Source for membership: @turf/boolean-point-in-polygon on the AOI's own lon/lat coordinates.
    for (const [k, coords] of [lotA, lotB].entries()) {
      const tp = polygon(coords);
      for (let c = 0; c < 2; c++) {
        let want = 0, detected = 0, reviewed = 0;
        for (let i = 0; i < n; i++) {
          if (t.classIdx[i] !== c) continue;
          if (!booleanPointInPolygon(point([...crsToLonLat(32633, [t.cxM[i], t.cyM[i]])]), tp)) continue;
          const s = review[i];
          if (s === 'added' || (s !== 'rejected' && t.score[i] >= 0.4)) want++;
          if (s !== 'added' && t.score[i] >= 0.4) detected++;
          if (s !== 'unreviewed') reviewed++;
        }
        const row = rows[k * 2 + c];
        expect(row.className).toBe(classes[c]);
        expect(row.count).toBe(want);
        expect(row.detectedCount).toBe(detected);
        expect(row.reviewedCount).toBe(reviewed);
        expect(row.densityPerHa).toBeCloseTo(want / row.areaHa, 9);
        expect(row.imagedAreaHa).toBeCloseTo(row.areaHa * 0.9, 9);
        expect(row.countingRule).toBe(COUNTING_RULE);
      }
    }
    expect(rows[0].count).toBeGreaterThan(50);
    expect(rows[2].count).toBeGreaterThan(20);
  });
  it('countsUnderRule table', () => {
    const table: [number, ReviewState, boolean][] = [
      [0.9, 'unreviewed', true], [0.3, 'unreviewed', false], [0.5, 'accepted', true], [0.1, 'accepted', false],
      [0.99, 'rejected', false], [0, 'added', true],
    ];
    for (const [score, state, want] of table) expect(countsUnderRule(score, state, 0.5), `${score} ${state}`).toBe(want);
  });
  it('AOI in another frame is a programmer error', () => {
    const [a] = parseAois({ type: 'Polygon', coordinates: lotB });
    const t = createDetectionTable('EPSG:32633', 0);
    expect(() => countPerAoi({ detections: t, classes: ['v'], aois: [{ aoi: reprojectAoi(a, 32632), areaM2: 1, coverage: 1 }], date: 'd', gsdM: 0.3 })).toThrow(/reproject/);
  });
});
