// Which buffers of a detection table to transfer (not copy) across the worker boundary.
import type { DetectionTable } from '../web/core/types.ts';

/** The distinct ArrayBuffers behind a table's columns. */
export function tableBuffers(t: DetectionTable): ArrayBuffer[] {
  const cols = [t.cxM, t.cyM, t.lengthM, t.widthM, t.angleRad, t.score, t.classIdx, t.sceneIdx, ...(t.features ? [t.features] : [])];
  return [...new Set(cols.map((c) => c.buffer as ArrayBuffer))];
}
