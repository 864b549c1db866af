// Building the exports from the state: detections GeoJSON (RFC 7946, review state per feature) and counts CSV.
import type { AppState } from './state.ts';
import { scenesByDate } from './state.ts';
import { reviewedTable } from './date-table.ts';
import type { DateTally } from './tally.ts';
import { detectionsToGeoJson, type DetectionFeature, type DetectionsFeatureCollection } from '../core/export-geojson.ts';
import { countsToCsv } from '../core/export-csv.ts';
import { COUNTING_RULE } from '../core/point-in-polygon.ts';

/** All dates' detections that count or were decided on, as one FeatureCollection (lon/lat, CCW rings). */
export function detectionsGeoJson(state: AppState): DetectionsFeatureCollection {
  const classes = state.model?.sidecar.classes ?? [];
  const groups = new Map(scenesByDate(state).map((g) => [g.dateIso, g.scenes]));
  const features: DetectionFeature[] = [];
  let frameCrs = '';
  for (const d of state.results) {
    const rt = reviewedTable(state, d);
    const scenes = (groups.get(d.dateIso) ?? []).map((s) => ({ name: s.name, acquisitionDate: d.dateIso, gsdM: s.info.georef.gsdM }));
    if (scenes.length === 0) continue;
    const fc = detectionsToGeoJson({ detections: rt.table, classes, scenes, review: rt.review }, {
      minScore: state.minScore,
      include: (i) => rt.table.score[i] >= state.minScore || rt.review[i] !== 'unreviewed',
    });
    frameCrs ||= fc.seamtally.frameCrs;
    for (const f of fc.features) features.push({ ...f, id: features.length });
  }
  return {
    type: 'FeatureCollection',
    seamtally: { countingRule: COUNTING_RULE, frameCrs, minScore: state.minScore },
    features,
  };
}

/** The tally as CSV (one row per AOI × date × class, with detected and reviewed figures and the counting rule). */
export function countsCsv(tally: DateTally[]): string {
  return countsToCsv(tally.flatMap((t) => t.rows));
}
