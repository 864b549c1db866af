// GeoTIFF and GDAL tags for a north-up projected scene: GeoKeys, pixel scale/tiepoint, nodata, date, band names.
import { TiffType, type TiffTag } from './tiff-ifd.ts';

export interface GeoTagSpec {
  epsg: number;
  /** Map coordinates of the top-left corner of the top-left pixel (PixelIsArea). */
  originXM: number;
  originYM: number;
  gsdM: number;
  nodata: number;
  /** Acquisition date, YYYY-MM-DD; written as TIFF DateTime "YYYY:MM:DD HH:MM:SS". */
  date: string;
  /** Acquisition time of day, "HH:MM:SS". Default "10:30:00". */
  timeOfDay?: string;
  bandNames: readonly string[];
  /** Dataset-level GDAL metadata items. */
  metadata?: Record<string, string>;
}

function xmlEscape(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
}

/**
 * Tags as the GeoTIFF 1.1 standard (OGC 19-008r4) and GDAL's private tags define them:
 * GeoKeyDirectory with GTModelType=Projected(1), GTRasterType=PixelIsArea(1), ProjectedCSType=EPSG code,
 * ProjLinearUnits=metre(9001); ModelPixelScale (gsd, gsd, 0); ModelTiepoint (0,0,0 → origin); GDAL_NODATA (42113)
 * as ASCII; GDAL_METADATA (42112) XML with band descriptions; DateTime (306); Software (305).
 */
export function geoTiffTags(s: GeoTagSpec): TiffTag[] {
  const keys = [
    [1024, 0, 1, 1], // GTModelTypeGeoKey = ModelTypeProjected
    [1025, 0, 1, 1], // GTRasterTypeGeoKey = RasterPixelIsArea
    [3072, 0, 1, s.epsg], // ProjectedCSTypeGeoKey
    [3076, 0, 1, 9001], // ProjLinearUnitsGeoKey = Linear_Meter
  ];
  const dir = [1, 1, 0, keys.length, ...keys.flat()];
  const items = Object.entries(s.metadata ?? {}).map(([k, v]) => `  <Item name="${xmlEscape(k)}">${xmlEscape(v)}</Item>`);
  s.bandNames.forEach((n, i) => items.push(`  <Item name="DESCRIPTION" sample="${i}" role="description">${xmlEscape(n)}</Item>`));
  const xml = `<GDALMetadata>\n${items.join('\n')}\n</GDALMetadata>`;
  const dateTime = `${s.date.replace(/-/g, ':')} ${s.timeOfDay ?? '10:30:00'}`;
  return [
    { tag: 305, type: TiffType.ASCII, values: 'seamtally synth' },
    { tag: 306, type: TiffType.ASCII, values: dateTime },
    { tag: 33550, type: TiffType.DOUBLE, values: [s.gsdM, s.gsdM, 0] },
    { tag: 33922, type: TiffType.DOUBLE, values: [0, 0, 0, s.originXM, s.originYM, 0] },
    { tag: 34735, type: TiffType.SHORT, values: dir },
    { tag: 42112, type: TiffType.ASCII, values: xml },
    { tag: 42113, type: TiffType.ASCII, values: String(s.nodata) },
  ];
}
