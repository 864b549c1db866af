// Resolution caveats: pixels across an object at a GSD, the model's measured recall there, and a plain-words level.
import type { ModelSidecar, QualityCurves } from './model-contract.ts';

/**
 * Johnson criteria (J. Johnson, 1958, "Analysis of image forming systems", Image Intensifier Symposium): about
 * 1 cycle (= 2 pixels) across the object's critical (smaller) dimension for detection and about 4 cycles (= 8
 * pixels) for recognition, each at roughly 50 % probability. A 1.8 m-wide car has 2 px across at 0.9 m GSD.
 */
export const JOHNSON_DETECTION_PX = 2;
export const JOHNSON_RECOGNITION_PX = 8;

/** Recall thresholds for the levels (common practice, no source: our own choice, stated in the README). */
export const RELIABLE_RECALL = 0.85;
export const CARE_RECALL = 0.6;

export type CaveatLevel = 'reliable' | 'use-with-care' | 'not-reliable';

export interface ResolutionCaveat {
  className: string;
  gsdM: number;
  /** Pixels across the critical dimension: criticalDimM / gsdM. */
  pxAcross: number;
  /** Recall interpolated from the model's measured recall-vs-GSD curve; null when not measured at this GSD. */
  recallAtGsd: number | null;
  /** Precision interpolated the same way; null when not measured. */
  precisionAtGsd: number | null;
  /**
   * Expected ratio of detected to true objects, recall / precision (detections = true positives / precision, true
   * positives = recall × true objects); null unless both are measured. Above 1: the count tends to be high.
   */
  expectedCountRatio: number | null;
  level: CaveatLevel;
  reason: string;
}

export interface ResolutionCaveatInput {
  className: string;
  gsdM: number;
  criticalDimM: number;
  quality?: QualityCurves;
}

/**
 * Linear interpolation of a per-class curve over `quality.gsdM`. GSDs finer than the finest measured one take the
 * finest value; GSDs coarser than the coarsest measured one give null (never extrapolated).
 */
export function interpolateCurve(gsdMs: readonly number[], values: readonly number[], gsdM: number): number | null {
  if (gsdMs.length === 0 || gsdMs.length !== values.length) return null;
  if (gsdM <= gsdMs[0]) return values[0];
  const last = gsdMs.length - 1;
  if (gsdM > gsdMs[last] * (1 + 1e-9)) return null;
  for (let i = 1; i <= last; i++) {
    if (gsdM <= gsdMs[i]) {
      const t = (gsdM - gsdMs[i - 1]) / (gsdMs[i] - gsdMs[i - 1]);
      return values[i - 1] + t * (values[i] - values[i - 1]);
    }
  }
  return values[last];
}

const fmt = (x: number, d = 1) => String(Number(x.toFixed(d)));
const pct = (r: number) => `${Math.round(r * 100)} %`;

/**
 * Rules, in order:
 * 1. fewer than 2 px across the critical dimension → not-reliable (below the Johnson detection limit);
 * 2. measured recall at this GSD → reliable when ≥ RELIABLE_RECALL, use-with-care when ≥ CARE_RECALL, else not-reliable;
 * 3. no measured recall → at most use-with-care: ≥ 8 px (Johnson recognition) or 2–8 px (detection only) both say
 *    use-with-care, with different reasons.
 */
export function resolutionCaveat(input: ResolutionCaveatInput): ResolutionCaveat {
  const { className, gsdM, criticalDimM, quality } = input;
  if (!(gsdM > 0) || !(criticalDimM > 0)) throw new RangeError(`resolutionCaveat needs gsdM > 0 and criticalDimM > 0, got ${gsdM}, ${criticalDimM}.`);
  const pxAcross = criticalDimM / gsdM;
  const curve = quality?.recall?.[className];
  const recallAtGsd = quality && curve ? interpolateCurve(quality.gsdM, curve, gsdM) : null;
  const pCurve = quality?.precision?.[className];
  const precisionAtGsd = quality && pCurve ? interpolateCurve(quality.gsdM, pCurve, gsdM) : null;
  const expectedCountRatio = recallAtGsd !== null && precisionAtGsd !== null && precisionAtGsd > 0 ? recallAtGsd / precisionAtGsd : null;
  const across = `${fmt(pxAcross)} px across a ${className}'s ${fmt(criticalDimM, 2)} m width at ${fmt(gsdM, 2)} m GSD`;
  const base = { className, gsdM, pxAcross, recallAtGsd, precisionAtGsd, expectedCountRatio };
  if (pxAcross < JOHNSON_DETECTION_PX) {
    return { ...base, level: 'not-reliable', reason: `Only ${across}: fewer than the ${JOHNSON_DETECTION_PX} px needed to detect it at all (Johnson criteria). Counts here are not reliable.` };
  }
  if (recallAtGsd !== null) {
    const found = precisionAtGsd !== null
      ? `in its evaluation at this GSD the model found ${pct(recallAtGsd)} of them and ${pct(precisionAtGsd)} of its detections were real`
      : `the model found ${pct(recallAtGsd)} of them at this GSD in its evaluation`;
    // the direction of the error: from recall and precision together, never from recall alone when precision is known
    const direction = expectedCountRatio !== null ? countDirection(expectedCountRatio) : 'some are missed: counts are likely low';
    const worst = Math.min(recallAtGsd, precisionAtGsd ?? 1);
    if (worst >= RELIABLE_RECALL) return { ...base, level: 'reliable', reason: `${cap(across)}; ${found}${expectedCountRatio !== null ? `; ${direction}` : ''}.` };
    if (worst >= CARE_RECALL) return { ...base, level: 'use-with-care', reason: `${cap(across)}; ${found}, so ${direction}.` };
    return { ...base, level: 'not-reliable', reason: `${cap(across)}; ${found}, so ${direction}: counts are not reliable.` };
  }
  const unmeasured = curve ? 'the model was not measured at a GSD this coarse' : 'the model has no measured recall for this class';
  if (pxAcross >= JOHNSON_RECOGNITION_PX) {
    return { ...base, level: 'use-with-care', reason: `${cap(across)}, enough to recognise it, but ${unmeasured}.` };
  }
  return { ...base, level: 'use-with-care', reason: `${cap(across)}: enough to detect it but fewer than the ${JOHNSON_RECOGNITION_PX} px needed to recognise it (Johnson criteria), and ${unmeasured}.` };
}

function cap(s: string): string { return s.charAt(0).toUpperCase() + s.slice(1); }

/** Plain words for an expected detected / true ratio (within ±5 %: about right). */
export function countDirection(ratio: number): string {
  if (ratio > 1.05) return `the detector tends to over-count here by about ${Math.round((ratio - 1) * 100)} %`;
  if (ratio < 0.95) return `the detector tends to miss about ${Math.round((1 - ratio) * 100)} % here`;
  return 'misses and false detections about cancel here and counts come out about right';
}

/** A note when a scene is coarser than the model's GSD and is therefore upsampled; null otherwise. */
export function upsamplingNote(sceneGsdM: number, modelGsdM: number): string | null {
  if (!(sceneGsdM > modelGsdM * (1 + 1e-6))) return null;
  return `This scene (${fmt(sceneGsdM, 2)} m GSD) is upsampled to the model's ${fmt(modelGsdM, 2)} m. Upsampling adds no information: objects keep only the detail of ${fmt(sceneGsdM, 2)} m.`;
}

/** One caveat per class of a model at a GSD, for the classes whose sidecar gives an object's critical dimension. */
export function sidecarCaveats(sidecar: Pick<ModelSidecar, 'classes' | 'objects' | 'quality'>, gsdM: number): ResolutionCaveat[] {
  return sidecar.classes.flatMap((className) => {
    const dim = sidecar.objects?.[className]?.criticalDimM;
    return dim ? [resolutionCaveat({ className, gsdM, criticalDimM: dim, quality: sidecar.quality })] : [];
  });
}
