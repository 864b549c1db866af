// Stable identities of merged detections (class + centre rounded to 1 cm), so review decisions survive re-merging.
import type { DetectionTable } from '../core/types.ts';

/** One key per row: "classIdx:x:y" with the centre in the table's frame, to the centimetre. */
export function detectionKeys(t: DetectionTable): string[] {
  const keys = new Array<string>(t.count);
  for (let i = 0; i < t.count; i++) keys[i] = `${t.classIdx[i]}:${t.cxM[i].toFixed(2)}:${t.cyM[i].toFixed(2)}`;
  return keys;
}
