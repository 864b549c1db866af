// Scene parameters of the synthesizer: types, documented defaults, and validation with clear errors.
import { SeamtallyError } from '../web/core/errors.ts';
import { hashString, Rng } from './rng.ts';

export type BandLayout = 'rgb' | 'rgbn' | 'pan' | '8';
export type BitDepth = 8 | 11 | 12 | 16;
export const BAND_LAYOUTS: readonly BandLayout[] = ['rgb', 'rgbn', 'pan', '8'];
export const BIT_DEPTHS: readonly BitDepth[] = [8, 11, 12, 16];
/** Largest side accepted (px); larger requests are refused rather than attempted. */
export const MAX_SIDE_PX = 200_000;

export interface SceneParams {
  /** File stem: DIR/<name>.tif and DIR/<name>.truth.geojson. */
  name: string;
  /** World seed: the town layout is a pure function of (seed, scenario, world position). */
  seed: number;
  /** 'town' (random blocks) or 'business-park' (the demo place). */
  scenario: string;
  /** Acquisition date YYYY-MM-DD: drives vehicle occupancy, arrays installed by then, and the sun. */
  date: string;
  gsdM: number;
  widthPx: number;
  heightPx: number;
  /** Scene CRS (a WGS 84 UTM zone) and the top-left corner of the top-left pixel in it. */
  epsg: number;
  originXM: number;
  originYM: number;
  bands: BandLayout;
  bits: BitDepth;
  /** Sun azimuth (clockwise from north) and elevation, degrees. */
  sunAzimuthDeg: number;
  sunElevationDeg: number;
  /** Additive haze as a fraction of the signal (0 = clear). */
  hazeFraction: number;
  /** Rotation of the acquisition footprint (degrees) and its inset (fraction of the side) → nodata collar. */
  footprintRotDeg: number;
  footprintInset: number;
  /** Gaussian point-spread sigma, in output pixels, applied before pixel aggregation. */
  psfSigmaPx: number;
  /** Read noise in electrons and full-well in electrons (shot noise follows from the signal). */
  readNoiseE: number;
  fullWellE: number;
  /** Fraction of parking stalls occupied (0–1); per-lot variation is added around it. */
  occupancy: number;
  /** Internal tile size of the written COG. */
  tilePx: number;
}

/** Options for makeSceneParams: everything except seed/gsd/size has a default. */
export type SceneOptions = Partial<SceneParams> & { seed: number; gsdM: number; widthPx: number; heightPx?: number };

/** Approximate sun position at 10:30 local solar time (declination formula of Cooper 1969, from memory). */
export function sunForDate(date: string, latDeg: number): { azimuthDeg: number; elevationDeg: number } {
  const d = new Date(`${date}T00:00:00Z`);
  const day = Math.floor((d.getTime() - Date.UTC(d.getUTCFullYear(), 0, 1)) / 86_400_000) + 1;
  const declRad = ((23.45 * Math.PI) / 180) * Math.sin((2 * Math.PI * (284 + day)) / 365);
  const latRad = (latDeg * Math.PI) / 180;
  const hourRad = (-22.5 * Math.PI) / 180; // 1.5 h before solar noon
  const sinEl = Math.sin(latRad) * Math.sin(declRad) + Math.cos(latRad) * Math.cos(declRad) * Math.cos(hourRad);
  const el = Math.asin(sinEl);
  const cosAz = (Math.sin(declRad) - Math.sin(el) * Math.sin(latRad)) / (Math.cos(el) * Math.cos(latRad));
  const az = (Math.acos(Math.max(-1, Math.min(1, cosAz))) * 180) / Math.PI; // morning: azimuth below 180° (east of south)
  return { azimuthDeg: az, elevationDeg: (el * 180) / Math.PI };
}

function bad(msg: string): SeamtallyError {
  return new SeamtallyError('bad-argument', msg);
}

/** Check a parameter set; throws a 'bad-argument' SeamtallyError whose sentence says what to change. */
export function validateSceneParams(p: SceneParams): void {
  if (!Number.isFinite(p.gsdM) || p.gsdM <= 0) throw bad(`The ground sampling distance must be a positive number of metres (got ${p.gsdM}); try --gsd 0.3.`);
  if (p.gsdM < 0.05 || p.gsdM > 5) throw bad(`The ground sampling distance ${p.gsdM} m is outside what the synthesizer models (0.05–5 m).`);
  for (const [k, v] of [['width', p.widthPx], ['height', p.heightPx]] as const) {
    if (!Number.isInteger(v) || v < 16) throw bad(`The scene ${k} must be a whole number of pixels, at least 16 (got ${v}).`);
    if (v > MAX_SIDE_PX) throw new SeamtallyError('too-large', `A scene ${k} of ${v} px is too large: the synthesizer writes at most ${MAX_SIDE_PX} px per side.`);
  }
  if (!BAND_LAYOUTS.includes(p.bands)) throw bad(`Unknown band layout "${p.bands}": use one of ${BAND_LAYOUTS.join(', ')}.`);
  if (!BIT_DEPTHS.includes(p.bits)) throw bad(`Unsupported bit depth ${p.bits}: use 8, 11, 12 or 16.`);
  if (!/^\d{4}-\d{2}-\d{2}$/.test(p.date) || Number.isNaN(Date.parse(`${p.date}T00:00:00Z`))) throw bad(`The date "${p.date}" is not a calendar date in the form YYYY-MM-DD.`);
  if (!((p.epsg >= 32601 && p.epsg <= 32660) || (p.epsg >= 32701 && p.epsg <= 32760))) throw bad(`The scene CRS must be a WGS 84 UTM zone (EPSG:326xx or 327xx), got EPSG:${p.epsg}.`);
  if (!(p.sunElevationDeg > 5 && p.sunElevationDeg <= 90)) throw bad(`Sun elevation ${p.sunElevationDeg}° must be between 5° and 90°.`);
  if (!(p.hazeFraction >= 0 && p.hazeFraction < 1)) throw bad(`Haze must be a fraction in [0, 1), got ${p.hazeFraction}.`);
  if (!(p.occupancy >= 0 && p.occupancy <= 1)) throw bad(`Occupancy must be a fraction in [0, 1], got ${p.occupancy}.`);
  if (!(p.tilePx >= 64 && p.tilePx % 16 === 0 && p.tilePx <= 4096)) throw bad(`The tile size must be a multiple of 16 between 64 and 4096 px, got ${p.tilePx}.`);
  if (!/^[A-Za-z0-9._-]+$/.test(p.name)) throw bad(`The scene name "${p.name}" may hold only letters, digits, dot, dash and underscore.`);
}

/** Latitude (degrees) of a UTM northing, rough (for the sun only). */
function roughLatDeg(epsg: number, northingM: number): number {
  const south = epsg > 32700;
  return ((south ? northingM - 10_000_000 : northingM) / 10_001_965.7) * 90;
}

/** Fill defaults (all derived from the seed and date, so the same options always give the same scene) and validate. */
export function makeSceneParams(o: SceneOptions): SceneParams {
  const rng = new Rng(o.seed ^ 0x5ce9e);
  const date = o.date ?? '2024-06-15';
  const epsg = o.epsg ?? 32632;
  const originYM = o.originYM ?? 5_290_000 + Math.floor(rng.next() * 40) * 1000;
  const sun = sunForDate(/^\d{4}-\d{2}-\d{2}$/.test(date) ? date : '2024-06-15', roughLatDeg(epsg, originYM));
  const p: SceneParams = {
    name: o.name ?? `synth-s${o.seed}-g${o.gsdM}`,
    seed: o.seed,
    scenario: o.scenario ?? 'town',
    date,
    gsdM: o.gsdM,
    widthPx: o.widthPx,
    heightPx: o.heightPx ?? o.widthPx,
    epsg,
    originXM: o.originXM ?? 480_000 + Math.floor(rng.next() * 40) * 1000,
    originYM,
    bands: o.bands ?? 'rgb',
    bits: o.bits ?? 8,
    sunAzimuthDeg: o.sunAzimuthDeg ?? sun.azimuthDeg,
    sunElevationDeg: o.sunElevationDeg ?? Math.max(12, sun.elevationDeg),
    hazeFraction: o.hazeFraction ?? 0.04,
    footprintRotDeg: o.footprintRotDeg ?? rng.range(-7, 7),
    footprintInset: o.footprintInset ?? 0.05,
    psfSigmaPx: o.psfSigmaPx ?? 0.45,
    readNoiseE: o.readNoiseE ?? 20,
    fullWellE: o.fullWellE ?? 30_000,
    occupancy: o.occupancy ?? 0.4 + 0.5 * (hashString(date + o.seed) / 4294967296),
    tilePx: o.tilePx ?? 512,
  };
  validateSceneParams(p);
  return p;
}
