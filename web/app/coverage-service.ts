// AOI coverage (imaged fraction) per date, computed in the tally worker and cached; the tally asks, gets null while
// it is being measured, and is told by a 'coverage-changed' event when the figure is in.
import type { Remote } from 'comlink';
import type { TallyApi } from '../../workers/contract.ts';
import type { AppState, AoiRecord, SceneEntry } from './state.ts';
import type { AoiInCrs } from '../core/aoi.ts';

export class CoverageService {
  private cache = new WeakMap<AoiRecord, Map<string, number | null>>();
  constructor(private state: AppState, private tally: Remote<TallyApi>) {}

  /** The imaged fraction of `aoi` on the date of `scenes`, or null while it is being measured (or failed). */
  get(aoi: AoiRecord, inFrame: AoiInCrs, scenes: SceneEntry[]): number | null {
    let m = this.cache.get(aoi);
    if (!m) { m = new Map(); this.cache.set(aoi, m); }
    const failed = this.state.failedTilesPx;
    const key = `${inFrame.epsg}|${scenes.map((s) => `${s.fingerprint}:${failed.get(s.fingerprint)?.length ?? 0}`).join(',')}`;
    if (m.has(key)) return m.get(key)!;
    m.set(key, null);
    const masks = scenes.map((s) => ({
      geoTransform: s.info.georef.geoTransform, sceneEpsg: s.info.georef.epsg, sceneWidthPx: s.info.widthPx, sceneHeightPx: s.info.heightPx,
      ...s.description.mask,
      failedTilesPx: failed.get(s.fingerprint),
    }));
    void this.tally.coverage(inFrame.polygons, inFrame.epsg, masks).then((r) => {
      if (!r.ok) { this.state.events.emit('notice', { level: 'error', text: r.error.message }); return; }
      m!.set(key, r.value);
      this.state.events.emit('coverage-changed');
    });
    return null;
  }
}
