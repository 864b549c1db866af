// Page entry: creates the one app state and the services (map, worker pool, tally worker), mounts every panel,
// restores kept work, loads the shipped detector and the demo, and resumes an interrupted run.
import 'ol/ol.css';
import { createAppState, setThreshold, type AppState, type ModelEntry } from './state.ts';
import { WorkStore } from './store.ts';
import { buildLayout } from './layout.ts';
import { createMapView } from './map-view.ts';
import { SceneLayers } from './scene-layers.ts';
import { AoiLayer } from './aoi-layer.ts';
import { DetectionsLayer } from './detections-layer.ts';
import { SampleLayer } from './sample-layer.ts';
import { DetectorPool } from './worker-pool.ts';
import { RunController } from './run-controller.ts';
import { spawnTally } from '../../workers/spawn.ts';
import { mountNotices } from './notices.ts';
import { cautionStrip } from './cautions.ts';
import { mountImageryPanel } from './imagery-panel.ts';
import { mountAoiPanel } from './aoi-panel.ts';
import { mountDetectorPanel, rememberedShippedChoice } from './detector-panel.ts';
import { mountRunPanel } from './run-panel.ts';
import { mountTallyPanel } from './tally-panel.ts';
import { mountComparePanel } from './compare-panel.ts';
import { mountReviewPanel } from './review-panel.ts';
import { mountTakeawayPanel } from './takeaway-panel.ts';
import { addArea, addHole, editArea } from './aoi-actions.ts';
import { fetchDefaultModel } from './model-load.ts';
import { demoAreaIds, fetchManifest } from './demo.ts';
import { DemoOffer, demoChoice, mountDemoOffer } from './demo-choice.ts';
import { readPageConfig } from './config.ts';
import { installQuotaFault } from './faults.ts';
import { CoverageService } from './coverage-service.ts';
import { restoreKeptWork, restoreKeptScenes } from './restore.ts';
import { toErrorInfo } from '../core/errors.ts';
import { DEFAULT_MIN_SCORE } from '../core/model-contract.ts';

async function main(): Promise<void> {
  const config = readPageConfig(location);
  if (config.faults?.quota) installQuotaFault('tiles');
  const store = await WorkStore.open().catch(() => null);
  const state: AppState = createAppState(store);
  if (config.workers !== null) state.poolSize = config.workers;
  const layout = buildLayout(document.getElementById('app')!);
  mountNotices(state, layout.notices);
  cautionStrip(layout.foot);
  if (!store) state.events.emit('notice', { level: 'error', text: 'This browser does not let seamtally keep your work (IndexedDB is unavailable, e.g. in a private window): results are lost on reload.' });

  const view = createMapView(layout.map);
  const layers = new SceneLayers(view);
  const pool = new DetectorPool(state.poolSize, config.faults);
  const tally = spawnTally();
  const svc = { pool, layers };
  const aoiLayer = new AoiLayer(view, {
    drawn: (ring) => { void addArea(state, ring); },
    holeDrawn: (ring) => { void addHole(state, ring); },
    edited: (id, polys) => { void editArea(state, id, polys); },
  });
  const detections = new DetectionsLayer(view, state, tally.api);
  const sampleLayer = new SampleLayer(view);
  const runs = new RunController(state, { pool, tally: tally.api }, { paceMs: config.paceMs });

  const useModel = async (m: ModelEntry) => {
    await pool.setModel(m);
    state.model = m;
    state.events.emit('model-changed');
    setThreshold(state, m.sidecar.minScore ?? DEFAULT_MIN_SCORE);
  };

  mountImageryPanel(state, layout.imagery, layout.map, svc);
  mountAoiPanel(state, layout.areas, aoiLayer);
  mountDetectorPanel(state, layout.detector, useModel);
  mountRunPanel(state, layout.run, runs, pool);
  const tallies = mountTallyPanel(state, layout.tabs.tally, new CoverageService(state, tally.api));
  mountComparePanel(state, layout.tabs.compare, tallies.current);
  mountReviewPanel(state, layout.tabs.check, { view, detections, layout, samples: sampleLayer, getTally: tallies.current });
  mountTakeawayPanel(state, layout.tabs.takeaway, { view, getTally: tallies.current, exportFails: config.faults?.exportFails ?? false });
  state.events.on('shown-date-changed', () => layers.showDate(state.shownDate));
  // With scenes of several dates the map shows the newest date alone (both dates' boxes over one picture drown each
  // other, and review would show boxes over the other date's tarmac) until the analyst picks another or all dates.
  state.events.on('scenes-changed', () => {
    if (state.shownDateChosen) return;
    const dates = [...new Set(state.scenes.map((s) => s.dateIso))].sort();
    const want = dates.length >= 2 ? dates[dates.length - 1] : null;
    if (want !== state.shownDate) { state.shownDate = want; state.events.emit('shown-date-changed'); }
  });
  // where the map looks (for scripted checks that click on it): centre and resolution in the view projection
  view.map.on('moveend', () => {
    const v = view.map.getView();
    layout.map.dataset.center = (v.getCenter() ?? []).join(',');
    layout.map.dataset.resolution = String(v.getResolution() ?? '');
  });
  // A scene opened elsewhere switches the map into its CRS: redraw areas and detections in the new projection.
  view.map.on('change:view', () => { aoiLayer.render(state.aois); detections.rebuild(); layout.map.dataset.projection = view.projectionCode(); });

  await restoreKeptWork(state);
  const demo = await fetchManifest(config.manifestUrl);
  try {
    // an explicit ?model= first, then the shipped detector chosen in an earlier session, then the demo's, then the default
    await useModel(await fetchDefaultModel(config.modelUrl ?? rememberedShippedChoice() ?? demo?.modelUrl ?? undefined));
  } catch (err) {
    state.events.emit('notice', { level: 'error', text: toErrorInfo(err).message });
  }
  // the demo is offered, not imposed: opened when the address asks for it or the analyst chose it before
  if (demo) {
    const offer = new DemoOffer(state, svc, demo);
    mountDemoOffer(state, layout.imagery, offer, () => demoAreaIds(demo));
    if (config.demoAsked || demoChoice() === 'open') await offer.open();
  } else state.events.emit('notice', { level: 'info', text: 'No demo scenes were found (run npm start to build them). Open your own GeoTIFF scenes to begin.' });
  await restoreKeptScenes(state, svc);
  await runs.restore();
  // kept scenes whose files were not open at load: once the analyst has reopened them all, restore the kept run
  // (its results; review decisions and samples are already back)
  if (state.scenes.some((s) => !s.input)) {
    const stop = state.events.on('scenes-changed', () => {
      if (state.scenes.length === 0) { stop(); return; }
      if (state.opening > 0 || state.scenes.some((s) => !s.input) || state.results.length > 0 || state.progress.status !== 'idle') return;
      stop();
      void runs.restore();
    });
  }
  document.body.dataset.ready = 'true';
}

void main();
