// Fuzz: a valid AOI GeoJSON (polygon with a hole + a two-part multipolygon) mutated at random (fixed seed, xorshift32)
// in its text or its structure, then parsed (parseAois), reprojected into UTM 32N (reprojectAoi) and measured
// (multiPolygonAreaM2). Every case must end in a result or a SeamtallyError (not 'internal', no TypeError/RangeError
// leaking), with one clean sentence, within 5 s.
import { describe, expect, it } from 'vitest';
import { parseAois, reprojectAoi } from '../../../web/core/aoi.ts';
import { SeamtallyError } from '../../../web/core/errors.ts';
import { multiPolygonAreaM2 } from '../../../web/core/geodesic-area.ts';
import { sentenceProblem, xorshift32, type Rng } from './harness.ts';

const CASES = Number(process.env.FUZZ_CASES ?? 200);
const SEED = Number(process.env.FUZZ_SEED ?? 0xa01);
const CASE_MS = 5_000;

const ring = (x0: number, y0: number, d: number) => [[x0, y0], [x0 + d, y0], [x0 + d, y0 + d], [x0, y0 + d], [x0, y0]];
const BASE = {
  type: 'FeatureCollection',
  features: [
    { type: 'Feature', id: 'yard', properties: { name: 'yard' }, geometry: { type: 'Polygon', coordinates: [ring(12.0, 48.0, 0.002), ring(12.0005, 48.0005, 0.0005)] } },
    { type: 'Feature', properties: { name: 'lots' }, geometry: { type: 'MultiPolygon', coordinates: [[ring(12.01, 48.0, 0.001)], [ring(12.02, 48.0, 0.001)]] } },
  ],
};

const deep = (n: number): unknown => { let v: unknown = [12, 48]; for (let i = 0; i < n; i++) v = [v]; return v; };
const INTERESTING: (() => unknown)[] = [
  () => null, () => true, () => 0, () => -1, () => 1e308, () => -1e308, () => 181, () => -91, () => 360.5, () => 5e-324, () => '', () => 'Polygon',
  () => 'MultiPolygon', () => 'FeatureCollection', () => 'Point', () => [], () => ({}), () => [[]], () => [0], () => [0, 0, 0], () => NaN, () => Infinity,
  () => deep(800), () => Array.from({ length: 100_000 }, (_, i) => [12 + i * 1e-8, 48]), () => ({ type: 'Polygon', coordinates: [] }), () => '12.0',
];

type Node = { parent: Record<string, unknown> | unknown[]; key: string | number };
function nodes(v: unknown, out: Node[] = [], depth = 0): Node[] {
  if (depth > 12 || v === null || typeof v !== 'object') return out;
  for (const [k, x] of Object.entries(v)) {
    out.push({ parent: v as Record<string, unknown>, key: Array.isArray(v) ? Number(k) : k });
    nodes(x, out, depth + 1);
  }
  return out;
}

/** One mutated AOI input: JSON text (text-level edits) or an object (structural edits, may hold NaN/Infinity). */
export function mutateAoi(rng: Rng): { input: unknown; what: string } {
  if (rng.chance(0.3)) {
    let t = JSON.stringify(BASE);
    const edits: string[] = [];
    for (let n = 1 + rng.int(3); n > 0; n--) {
      const at = rng.int(t.length);
      const op = rng.int(4);
      if (op === 0) t = t.slice(0, at) + t.slice(at + 1);
      else if (op === 1) t = t.slice(0, at) + rng.pick([...'[]{},:"0-.e9 ']) + t.slice(at);
      else if (op === 2) t = t.replace(/\d/g, (d, i: number) => (i === at || (i > at && rng.chance(0.01)) ? String(rng.int(10)) : d));
      else { const len = rng.int(40); t = t.slice(0, at) + t.slice(at, at + len) + t.slice(at); }
      edits.push(`text op${op}@${at}`);
    }
    return { input: t, what: edits.join(', ') };
  }
  const doc = structuredClone(BASE) as unknown;
  const edits: string[] = [];
  for (let n = 1 + rng.int(3); n > 0; n--) {
    const all = nodes(doc);
    if (all.length === 0) break;
    const nd = rng.pick(all);
    const p = nd.parent as Record<string | number, unknown>;
    const op = rng.int(6);
    if (op <= 1) { const i = rng.int(INTERESTING.length); p[nd.key] = INTERESTING[i](); edits.push(`${nd.key}=interesting${i}`); }
    else if (op === 2) {
      if (Array.isArray(nd.parent)) nd.parent.splice(nd.key as number, 1); else delete p[nd.key];
      edits.push(`delete ${nd.key}`);
    } else if (op === 3 && Array.isArray(nd.parent)) { nd.parent.splice(nd.key as number, 0, structuredClone(nd.parent[nd.key as number])); edits.push(`dup ${nd.key}`); }
    else if (op === 4 && Array.isArray(p[nd.key])) { (p[nd.key] as unknown[]).reverse(); edits.push(`reverse ${nd.key}`); }
    else if (typeof p[nd.key] === 'number') {
      const v = p[nd.key] as number;
      p[nd.key] = rng.pick([v * 1e5, v + 360, -v, v + 1e-12, v * 2]);
      edits.push(`num ${nd.key}`);
    }
  }
  return { input: rng.chance(0.5) ? doc : JSON.stringify(doc), what: edits.join(', ') };
}

function parseAndUse(input: unknown): number {
  let areaM2 = 0;
  for (const a of parseAois(input)) {
    reprojectAoi(a, 32632);
    areaM2 += multiPolygonAreaM2(a.polygonsLonLat);
  }
  return areaM2;
}

describe(`mutated AOI GeoJSON (${CASES} cases, seed ${SEED})`, () => {
  it('the unmutated GeoJSON parses into its two AOIs', () => {
    expect(parseAois(BASE).map((a) => a.name)).toEqual(['yard', 'lots']);
    expect(parseAndUse(BASE)).toBeGreaterThan(0);
  });

  it('every case ends in a result or a typed error, with one clean sentence, within 5 s', () => {
    const rng = xorshift32(SEED);
    const tally: Record<string, number> = {};
    const leaks: string[] = [];
    for (let k = 0; k < CASES; k++) {
      const m = mutateAoi(rng);
      const t0 = performance.now();
      let kind = 'ok';
      try {
        parseAndUse(m.input);
      } catch (err) {
        if (!(err instanceof SeamtallyError) || err.kind === 'internal') {
          leaks.push(`#${k} [${m.what}]: ${err instanceof Error ? `${err.name}: ${err.message}\n${err.stack}` : String(err)}`);
          continue;
        }
        kind = err.kind;
        const problem = sentenceProblem(err.message) ?? (err.message.length > 600 ? `is ${err.message.length} characters long` : null);
        if (problem) leaks.push(`#${k} [${m.what}]: ${err.kind} message ${problem}: ${err.message.slice(0, 300)}`);
      }
      const ms = performance.now() - t0;
      if (ms > CASE_MS) leaks.push(`#${k} [${m.what}]: took ${ms.toFixed(0)} ms`);
      tally[kind] = (tally[kind] ?? 0) + 1;
    }
    if (process.env.SHOW_ERRORS) console.log('fuzz-aoi outcomes', tally);
    expect(leaks).toEqual([]);
    expect(Object.keys(tally).length).toBeGreaterThanOrEqual(3); // the mutations reach results and several error kinds
  });
});
