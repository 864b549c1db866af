// Coverage of an AOI by valid pixels of one date's scenes; expected fractions from plane geometry (self-consistency).
import { describe, expect, it } from 'vitest';
import { aoiCoverage, frameToScenePxMapping, type CoverageMask } from '../../../web/core/coverage.ts';
import { lonLatToCrs } from '../../../web/core/crs.ts';
import type { GeoTransform } from '../../../web/core/types.ts';
import type { MapXY } from '../../../web/core/types.ts';

const sq = (x0: number, y0: number, d: number): MapXY[] => [[x0, y0], [x0 + d, y0], [x0 + d, y0 + d], [x0, y0 + d], [x0, y0]];

/** A scene in UTM 33N, 0.5 m pixels, with a mask at 1/10 resolution whose valid part is decided by `valid(col,row)`. */
function utmScene(x0: number, y0: number, widthPx: number, heightPx: number, valid: (c: number, r: number) => boolean): CoverageMask {
  const gt: GeoTransform = [x0, 0.5, 0, y0, 0, -0.5];
  const maskWidth = widthPx / 10;
  const maskHeight = heightPx / 10;
  const validMask = new Uint8Array(maskWidth * maskHeight);
  for (let r = 0; r < maskHeight; r++) for (let c = 0; c < maskWidth; c++) validMask[r * maskWidth + c] = valid(c, r) ? 1 : 0;
  return { frameToScenePx: frameToScenePxMapping(gt, 32633, 32633), sceneWidthPx: widthPx, sceneHeightPx: heightPx, validMask, maskWidth, maskHeight };
}

describe('aoiCoverage', () => {
  const x0 = 440000;
  const y0 = 5800000;
  it('AOI wholly inside a valid scene → 1; scene with left half nodata → 0.5', () => {
    const aoi = [[sq(x0 + 100, y0 - 300, 200)]];
    const full = utmScene(x0, y0, 1000, 1000, () => true);
    expect(aoiCoverage(aoi, [full], { stepM: 1 }).fraction).toBe(1);
    // mask columns < 40 (x < x0 + 200 m) invalid: half of the AOI [x0+100, x0+300]
    const half = utmScene(x0, y0, 1000, 1000, (c) => c >= 40);
    expect(aoiCoverage(aoi, [half], { stepM: 1 }).fraction).toBeCloseTo(0.5, 6);
  });
  it('two scenes of one date: union, not sum', () => {
    const aoi = [[sq(x0 + 100, y0 - 300, 200)]];
    const a = utmScene(x0, y0, 1000, 1000, (c) => c < 50); // valid x < x0+250
    const b = utmScene(x0, y0, 1000, 1000, (c) => c >= 30); // valid x ≥ x0+150
    expect(aoiCoverage(aoi, [a, b], { stepM: 1 }).fraction).toBe(1);
    const left = utmScene(x0, y0, 1000, 1000, (c) => c < 30); // valid x < x0+150: 50 of 200 m
    expect(aoiCoverage(aoi, [left], { stepM: 1 }).fraction).toBeCloseTo(0.25, 6);
  });
  it('AOI partly outside every scene; hole excluded from the denominator', () => {
    const scene = utmScene(x0, y0, 1000, 1000, () => true); // covers x0..x0+500, y0-500..y0
    const aoi = [[sq(x0 + 400, y0 - 300, 200), sq(x0 + 450, y0 - 250, 100)]]; // 200² minus 100² hole; hole is half outside
    // inside the scene: x in [400, 500] → 100×200 minus hole part 50×100 = 15000 of 30000
    expect(aoiCoverage(aoi, [scene], { stepM: 1 }).fraction).toBeCloseTo(0.5, 6);
  });
  it('failed tiles count as not imaged (in scene pixels or frame metres)', () => {
    const aoi = [[sq(x0 + 100, y0 - 300, 200)]];
    const scene = { ...utmScene(x0, y0, 1000, 1000, () => true), failedTilesPx: [{ minXPx: 200, minYPx: 0, maxXPx: 400, maxYPx: 1000 }] };
    expect(aoiCoverage(aoi, [scene], { stepM: 1 }).fraction).toBeCloseTo(0.5, 6);
    const ok = utmScene(x0, y0, 1000, 1000, () => true);
    expect(aoiCoverage(aoi, [ok], { stepM: 1, excludedFrameBoxes: [{ minX: x0 + 100, minY: y0 - 300, maxX: x0 + 150, maxY: y0 - 100 }] }).fraction).toBeCloseTo(0.75, 6);
  });
  it('scene in EPSG:4326 seen from a UTM frame', () => {
    // 4326 scene whose east edge is the meridian 15.0 (the central meridian of zone 33: a straight line x = 500000)
    const gt: GeoTransform = [14.99, 1e-5, 0, 52.01, 0, -1e-5];
    const mask: CoverageMask = {
      frameToScenePx: frameToScenePxMapping(gt, 4326, 32633), sceneWidthPx: 1000, sceneHeightPx: 2000,
      validMask: new Uint8Array(100 * 200).fill(1), maskWidth: 100, maskHeight: 200,
    };
    const c = lonLatToCrs(32633, [15, 52]);
    const aoi = [[sq(c[0] - 150, c[1] - 100, 200)]]; // 150 m west of the meridian, 50 m east
    const cov = aoiCoverage(aoi, [mask], { stepM: 0.5 });
    expect(cov.fraction).toBeCloseTo(0.75, 3);
    expect(cov.samplesInside).toBe(160000);
  });
  it('tiny AOI still gets enough samples', () => {
    const cov = aoiCoverage([[sq(x0 + 10, y0 - 20, 2)]], [utmScene(x0, y0, 1000, 1000, () => true)], { stepM: 5 });
    expect(cov.samplesInside).toBeGreaterThanOrEqual(64);
    expect(cov.fraction).toBe(1);
  });
});
