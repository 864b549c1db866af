// The notes that go with one date's counts, shared by the app's tally and `seamtally detect`'s counts.json: the
// resolution caveat per class at the date's coarsest GSD, whether its scenes are upsampled, and its noon sun.
import { sidecarCaveats, upsamplingNote, type ResolutionCaveat } from './caveats.ts';
import type { SceneGeoref } from './georef.ts';
import type { ModelSidecar } from './model-contract.ts';
import { lowSunNotes, noonSunOverScenes, type LowSunNote } from './sun-height.ts';

export interface DateNotes {
  caveats: ResolutionCaveat[];
  upsampling: string | null;
  /** The sun's elevation at local solar noon that date at the scenes' mean centre (the most it reached); null if unknown. */
  noonSunDeg: number | null;
  /** Classes whose counts the model measurably shifts under this date's low sun (from the sidecar's lowSun). */
  lowSun: LowSunNote[];
}

/** The notes for a date's scenes (their georefs) counted at gsdM (the coarsest scene's) by a model. */
export function dateNotes(
  sidecar: Pick<ModelSidecar, 'classes' | 'objects' | 'quality' | 'inputGsdM' | 'lowSun'>,
  gsdM: number,
  dateIso: string,
  georefs: readonly Pick<SceneGeoref, 'epsg' | 'geoTransform' | 'widthPx' | 'heightPx'>[],
): DateNotes {
  const noonSunDeg = noonSunOverScenes(dateIso, georefs);
  return {
    caveats: sidecarCaveats(sidecar, gsdM),
    upsampling: upsamplingNote(gsdM, sidecar.inputGsdM),
    noonSunDeg,
    lowSun: lowSunNotes(noonSunDeg, sidecar.lowSun),
  };
}
