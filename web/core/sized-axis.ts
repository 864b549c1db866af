// One axis of a sized-window tiling plan (a model with dynamic input height and width): the fewest windows, each
// sharing just the aligned overlap with its neighbours, widths in the model's size step spread evenly.

/** An axis plan: n windows and their cores, each a half-open [min, max) interval in model pixels. */
export interface AxisPlan {
  n: number;
  core: Array<[number, number]>;
  win: Array<[number, number]>;
}

/**
 * Cores and windows along one axis for sized windows. In units of alignPx (names ending in U): the scene is
 * E = ceil(extent / alignPx) units; neighbours share O = ceil(2·overlapPx / alignPx) units, the least overlap whose
 * ends stay aligned; windows are at most M units (maxWindowPx, a multiple of stepPx) in steps of s = stepPx / alignPx.
 * n windows cover the scene when their widths sum to E + (n − 1)·O: that sum is rounded up to m steps and spread
 * evenly (⌊(k+1)·m/n⌋ − ⌊k·m/n⌋ steps each), each window starting O units before its predecessor ends, so the last
 * one reaches less than stepPx past the scene. n is the fewest for which no window exceeds M; with s = 1 the pixels
 * inferred, (E + (n − 1)·O)·alignPx, are then the fewest any aligned plan infers (fewer windows cannot fit, and every
 * shared strip is ≥ O units). Cores split each shared strip in the middle, so both windows reach ≥ overlapPx past the
 * boundary. Null when no n up to two above the fewest leaves every core non-empty (planTiles then refuses).
 */
export function sizedAxisPlan(extentPx: number, maxWindowPx: number, overlapPx: number, alignPx: number, stepPx: number): AxisPlan | null {
  const extentU = Math.ceil(extentPx / alignPx), sharedU = Math.ceil((2 * overlapPx) / alignPx);
  const stepU = stepPx / alignPx, maxU = maxWindowPx / alignPx;
  const nLow = Math.max(1, Math.ceil((extentU - sharedU) / (maxU - sharedU)));
  for (let n = nLow; n <= nLow + 2; n++) {
    const steps = Math.ceil((extentU + (n - 1) * sharedU) / stepU);
    if (stepU * Math.ceil(steps / n) > maxU) continue;
    const starts: number[] = [], widths: number[] = [];
    for (let k = 0, xU = 0; k < n; k++) {
      const widthU = stepU * (Math.floor(((k + 1) * steps) / n) - Math.floor((k * steps) / n));
      starts.push(xU * alignPx);
      widths.push(widthU * alignPx);
      xU += widthU - sharedU;
    }
    const bounds = [0];
    for (let k = 1; k < n; k++) bounds.push(starts[k] + Math.floor((sharedU * alignPx) / 2));
    bounds.push(extentPx);
    if (bounds.some((b, k) => k > 0 && b <= bounds[k - 1])) continue;
    const core: Array<[number, number]> = [], win: Array<[number, number]> = [];
    for (let k = 0; k < n; k++) { core.push([bounds[k], bounds[k + 1]]); win.push([starts[k], starts[k] + widths[k]]); }
    return { n, core, win };
  }
  return null;
}
