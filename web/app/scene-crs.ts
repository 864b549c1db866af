// A scene whose CRS its file defines (GeoKeys, no EPSG code) is described by a worker; the page makes the same
// definition known under the same code (crs.ts defineFileCrs is content-addressed) before it transforms anything.
import { defineFileCrs, isFileDefinedCrs } from '../core/crs.ts';
import type { SceneDescription } from '../../workers/contract.ts';

export function adoptSceneCrs(description: Pick<SceneDescription, 'info' | 'proj4Def'>): void {
  if (isFileDefinedCrs(description.info.georef.epsg)) defineFileCrs(description.proj4Def);
}
