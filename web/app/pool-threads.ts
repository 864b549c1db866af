// onnxruntime-web threads per detector worker: the cores shared out among the pool's workers.

/**
 * Intra-op threads each of `workers` detector workers gets on a machine with `cores` logical cores: the cores shared
 * evenly (at least 1), so the pool never runs more inference threads than cores. Without cross-origin isolation
 * onnxruntime-web cannot start threads, so 1.
 */
export function threadsPerWorker(cores: number, workers: number, crossOriginIsolated: boolean): number {
  if (!crossOriginIsolated) return 1;
  return Math.max(1, Math.floor((cores || 1) / Math.max(1, workers)));
}
