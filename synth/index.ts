// Public API of the scene synthesizer (pure TypeScript; the Node file sink lives in cli/file-sink.ts).
export { makeSceneParams, validateSceneParams, sunForDate, BAND_LAYOUTS, BIT_DEPTHS, MAX_SIDE_PX } from './scene-params.ts';
export type { SceneParams, SceneOptions, BandLayout, BitDepth } from './scene-params.ts';
export { SceneRenderer, renderSceneWindow, supersampleFactor, radiometry } from './render.ts';
export type { WindowPx } from './render.ts';
export { sceneTruth, forEachTruth, writeTruthGeoJson, truthFeature } from './truth.ts';
export { truthCountsPerAoi } from './truth-counts.ts';
export type { TruthObject, TruthClass, TruthKind } from './objects.ts';
export { writeScene, sceneMetadata } from './write-scene.ts';
export { writeCog, pyramidLevels, memorySink, memorySpool } from './cog-writer.ts';
export type { ByteSink, Spool, CogSpec } from './cog-writer.ts';
export { bandNames } from './spectra.ts';
export { footprintCornersPx, footprintTest, footprintTestMap } from './footprint.ts';
export { MAX_ARRAY_EXTENT_M, MODULES } from './solar.ts';
export { demoSceneParams, demoAoisGeoJson, demoManifest, DEMO_VERSION } from './demo.ts';
