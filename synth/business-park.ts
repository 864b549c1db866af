// The demo place, "Kestrel Brook Business Park" (invented): its block map, date-dependent occupancy and AOIs.
import type { BlockPlan, GridPlacement } from './world.ts';

export const PARK_NAME = 'Kestrel Brook Business Park';
export const PARK_EPSG = 32632;
/** Block (0,0)'s south-west corner in EPSG:32632 and the grid's rotation (the park's streets run ~13° off east). */
export const BUSINESS_PARK_GRID: GridPlacement = { oxM: 512_300, oyM: 5_318_700, angleRad: 0.227 };
export const PARK_BLOCKS = 9;

/** Date 1 (before) and date 2 (after); occupancy and new rooftop arrays differ between them. */
export const DEMO_DATES = ['2024-03-14', '2024-09-05'] as const;
const NEW_ARRAYS_YEAR = 2024.5;

const later = (date: string) => date >= DEMO_DATES[1];

/** Block plan inside the park's 9 × 9 block map (null outside: the random town continues there). */
export function businessParkPlan(bx: number, by: number, date: string): BlockPlan | null {
  if (bx < 0 || by < 0 || bx >= PARK_BLOCKS || by >= PARK_BLOCKS) return null;
  const d2 = later(date);
  const key = `${bx},${by}`;
  switch (key) {
    case '3,4': return { type: 'parking', occupancy: d2 ? 0.42 : 0.86 }; // west car park: busy in March
    case '5,4': return { type: 'parking', occupancy: d2 ? 0.81 : 0.33 }; // east car park: busy in September
    case '3,3': return { type: 'retail', occupancy: d2 ? 0.7 : 0.55, arrayShare: 0.3, newUnits: [1], newYear: NEW_ARRAYS_YEAR };
    case '4,3': return { type: 'retail', occupancy: d2 ? 0.64 : 0.6, arrayShare: 0.3, newUnits: [0, 2], newYear: NEW_ARRAYS_YEAR };
    case '5,5': return { type: 'depot', occupancy: d2 ? 0.55 : 0.78, arrayShare: 1 };
    case '2,5': return { type: 'warehouse', occupancy: 0.5, arrayShare: 0.8 };
    case '3,5': return { type: 'warehouse', occupancy: d2 ? 0.6 : 0.4, arrayShare: 0, newRoof: 0, newYear: NEW_ARRAYS_YEAR };
    case '4,5': return { type: 'warehouse', occupancy: 0.45, arrayShare: 0, newRoof: 0, newYear: NEW_ARRAYS_YEAR };
    case '4,4': return { type: 'park' };
    case '6,5': case '6,6': return { type: 'solar' };
    case '2,4': case '2,3': return { type: 'field' };
    case '6,4': case '6,3': return { type: 'parking', occupancy: d2 ? 0.3 : 0.25 };
    default: return { type: (bx * 7 + by * 3) % 5 === 0 ? 'park' : 'houses', arrayShare: 0.3 } as BlockPlan;
  }
}

/** One demo AOI: a polygon given in block-grid metres (u, v), converted to lon/lat when written. */
export interface DemoAoi { id: string; name: string; ringUV: [number, number][]; holesUV?: [number, number][][] }

const blockBox = (bx0: number, by0: number, bx1: number, by1: number, insetM = 12): [number, number][] => [
  [bx0 * 100 + insetM, by0 * 100 + insetM], [bx1 * 100 + 100 - 1, by0 * 100 + insetM],
  [bx1 * 100 + 100 - 1, by1 * 100 + 100 - 1], [bx0 * 100 + insetM, by1 * 100 + 100 - 1],
];

export const DEMO_AOIS: DemoAoi[] = [
  { id: 'car-park-west', name: 'Car park West', ringUV: blockBox(3, 4, 3, 4) },
  { id: 'car-park-east', name: 'Car park East', ringUV: blockBox(5, 4, 5, 4) },
  { id: 'retail-strip', name: 'Retail strip', ringUV: blockBox(3, 3, 4, 3) },
  {
    id: 'depot-roofs', name: 'Depot and warehouse roofs', ringUV: blockBox(2, 5, 5, 5),
    // The depot's office roof is left out (a hole), so the AOI shows how holes are treated.
    holesUV: [[[570, 578], [596, 578], [596, 596], [570, 596]]],
  },
];

/** Scenes of the demo: date 1 one scene at 0.3 m; date 2 two overlapping scenes at 0.5 m. Offsets are from the park centre (m). */
export interface DemoScene { name: string; date: string; gsdM: number; widthPx: number; heightPx: number; dxM: number; dyM: number; footprintRotDeg: number; hazeFraction: number }

export const DEMO_SCENES: DemoScene[] = [
  { name: 'kestrel-brook-2024-03-14', date: DEMO_DATES[0], gsdM: 0.3, widthPx: 3000, heightPx: 3000, dxM: -450, dyM: 450, footprintRotDeg: 4, hazeFraction: 0.03 },
  { name: 'kestrel-brook-2024-09-05-a', date: DEMO_DATES[1], gsdM: 0.5, widthPx: 1400, heightPx: 1800, dxM: -450, dyM: 450, footprintRotDeg: -3, hazeFraction: 0.05 },
  { name: 'kestrel-brook-2024-09-05-b', date: DEMO_DATES[1], gsdM: 0.5, widthPx: 1400, heightPx: 1800, dxM: -250, dyM: 450, footprintRotDeg: 5, hazeFraction: 0.08 },
];

/** World coordinates of grid (u, v). */
export function parkGridToWorld(uM: number, vM: number): [number, number] {
  const g = BUSINESS_PARK_GRID;
  const c = Math.cos(g.angleRad);
  const s = Math.sin(g.angleRad);
  return [g.oxM + uM * c - vM * s, g.oyM + uM * s + vM * c];
}

/** Centre of the park in world coordinates. */
export function parkCentre(): [number, number] {
  return parkGridToWorld((PARK_BLOCKS * 100) / 2, (PARK_BLOCKS * 100) / 2);
}
