// Node preload for the training scripts: gives the CommonJS package geographiclib-geodesic named ESM exports
// (Node's own CJS interop finds none), in case the core's `import { Geodesic }` runs outside a bundler.
import { register } from 'node:module';
import { pathToFileURL } from 'node:url';

const SHIM = 'seamtally-shim:geographiclib-geodesic';
const shimSource = [
  "import { createRequire } from 'node:module';",
  `const m = createRequire(${JSON.stringify(pathToFileURL(process.cwd() + '/package.json').href)})('geographiclib-geodesic');`,
  'export const Geodesic = m.Geodesic, PolygonArea = m.PolygonArea, Constants = m.Constants;',
  'export default m;',
].join('\n');
const hooks = `
export async function resolve(spec, ctx, next) {
  if (spec === 'geographiclib-geodesic') return { url: ${JSON.stringify(SHIM)}, shortCircuit: true };
  return next(spec, ctx);
}
export async function load(url, ctx, next) {
  if (url !== ${JSON.stringify(SHIM)}) return next(url, ctx);
  return { format: 'module', shortCircuit: true, source: ${JSON.stringify(shimSource)} };
}`;
register('data:text/javascript,' + encodeURIComponent(hooks));
