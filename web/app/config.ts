// Page configuration, read once at start from the address: which demo manifest and which model to open.

export interface PageConfig {
  /** Demo manifest URL (default /demo/manifest.json; `?manifest=` overrides, e.g. for test scenes). */
  manifestUrl: string;
  /** Sidecar URL of the model to load instead of the shipped one (`?model=`), or null. */
  modelUrl: string | null;
}

/** Same-origin paths only: anything else is ignored (nothing is fetched from elsewhere without the analyst asking). */
function localPath(v: string | null): string | null {
  return v && v.startsWith('/') && !v.startsWith('//') ? v : null;
}

export function readPageConfig(loc: Location): PageConfig {
  const q = new URLSearchParams(loc.search);
  return { manifestUrl: localPath(q.get('manifest')) ?? '/demo/manifest.json', modelUrl: localPath(q.get('model')) };
}
