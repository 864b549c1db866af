// Typed, user-facing errors: every failure an analyst can cause has a kind and a sentence that says what to do.

export type SeamtallyErrorKind =
  | 'not-tiff'
  | 'truncated'
  | 'not-georeferenced'
  | 'unknown-crs'
  | 'unsupported-raster'
  | 'too-large'
  | 'all-nodata'
  | 'aoi-invalid'
  | 'aoi-outside'
  | 'aoi-not-lonlat'
  | 'model-invalid'
  | 'sidecar-invalid'
  | 'model-mismatch'
  | 'bad-argument'
  | 'range-unsupported'
  | 'network'
  | 'storage-quota'
  | 'cancelled'
  | 'internal';

/** A failure with a kind (for code) and a plain sentence (for people). Survives structured clone as `ErrorInfo`. */
export class SeamtallyError extends Error {
  readonly kind: SeamtallyErrorKind;
  readonly detail: Record<string, unknown>;
  constructor(kind: SeamtallyErrorKind, message: string, detail: Record<string, unknown> = {}) {
    super(message);
    this.name = 'SeamtallyError';
    this.kind = kind;
    this.detail = detail;
  }
  toInfo(): ErrorInfo {
    return { kind: this.kind, message: this.message, detail: this.detail };
  }
}

/** The plain-data form of an error, safe to send between page and worker. */
export interface ErrorInfo {
  kind: SeamtallyErrorKind;
  message: string;
  detail: Record<string, unknown>;
}

/** A result that crosses a boundary instead of a throw. */
export type Result<T> = { ok: true; value: T } | { ok: false; error: ErrorInfo };

/** Convert anything thrown into ErrorInfo, keeping the kind of SeamtallyErrors. */
export function toErrorInfo(err: unknown): ErrorInfo {
  if (err instanceof SeamtallyError) return err.toInfo();
  if (err && typeof err === 'object' && 'kind' in err && 'message' in err) {
    const e = err as ErrorInfo;
    return { kind: e.kind, message: e.message, detail: e.detail ?? {} };
  }
  if (err instanceof Error && err.name === 'AbortError') {
    return { kind: 'cancelled', message: 'The run was cancelled.', detail: {} };
  }
  const msg = err instanceof Error ? err.message : String(err);
  return { kind: 'internal', message: `Something went wrong inside seamtally: ${msg}. Please report it with the file that caused it.`, detail: {} };
}

/** Rebuild a throwable error from its plain form (after crossing a worker boundary). */
export function fromErrorInfo(info: ErrorInfo): SeamtallyError {
  return new SeamtallyError(info.kind, info.message, info.detail);
}
