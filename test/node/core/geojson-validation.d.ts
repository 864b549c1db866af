// Minimal types for the geojson-validation package (test-only dependency; it ships none).
declare module 'geojson-validation' {
  /** `trace` true → returns the list of problems (empty when valid); otherwise a boolean. */
  export function valid(obj: unknown, trace: true): string[];
  export function valid(obj: unknown, trace?: false): boolean;
  export function isFeatureCollection(obj: unknown, trace: true): string[];
  export function isFeatureCollection(obj: unknown, trace?: false): boolean;
  const gjv: { valid: typeof valid; isFeatureCollection: typeof isFeatureCollection };
  export default gjv;
}
