// After a reload: areas, review decisions, added boxes and checked samples come back from IndexedDB; kept URL scenes reopen by
// themselves, kept file scenes wait (listed) until the analyst drops the same files again (matched by fingerprint).
import type { AppState, SceneEntry } from './state.ts';
import { openScene, type SceneServices } from './scene-open.ts';
import { adoptSceneCrs } from './scene-crs.ts';

/** Restore areas, review and added boxes (call before the demo, so kept areas win over the demo's). */
export async function restoreKeptWork(state: AppState): Promise<void> {
  const store = state.store;
  if (!store) return;
  state.aois = await store.allAois();
  state.review = new Map((await store.allReview()).map((r) => [r.key, r.state]));
  state.added = await store.allAdded();
  state.samples = await store.allSamples();
  state.reviewVersion++;
  state.events.emit('aois-changed');
  state.events.emit('review-changed');
  state.events.emit('samples-changed');
}

/** Reopen kept scenes that are not open yet. */
export async function restoreKeptScenes(state: AppState, svc: SceneServices): Promise<void> {
  const kept = (await state.store?.allScenes()) ?? [];
  for (const rec of kept.sort((a, b) => a.addedMs - b.addedMs)) {
    if (state.scenes.some((s) => s.fingerprint === rec.fingerprint)) continue;
    if (rec.origin.kind === 'url') {
      await openScene(state, svc, { kind: 'url', url: rec.origin.url }, { dateIso: rec.dateIso });
    } else {
      adoptSceneCrs(rec.description);
      const entry: SceneEntry = { ...rec, input: null };
      state.scenes = [...state.scenes, entry];
      state.events.emit('scenes-changed');
    }
  }
}

