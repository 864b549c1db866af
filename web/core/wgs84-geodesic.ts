// The WGS 84 geodesic solver from geographiclib-geodesic (a CommonJS package: default import works in Node and Vite).
import geographiclib from 'geographiclib-geodesic';

export const WGS84_GEODESIC = geographiclib.Geodesic.WGS84;
