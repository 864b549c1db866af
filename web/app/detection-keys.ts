// Stable identities of merged detections (class + centre rounded to 1 cm), so review decisions survive re-merging.
import type { DetectionTable } from '../core/types.ts';

/** Key of row `i`: "classIdx:x:y" with the centre in the table's frame, to the centimetre. */
export function detectionKey(t: DetectionTable, i: number): string {
  return `${t.classIdx[i]}:${t.cxM[i].toFixed(2)}:${t.cyM[i].toFixed(2)}`;
}
