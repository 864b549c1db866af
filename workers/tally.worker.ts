// Tally worker entry (thin): merges a date's tile detections (core seam merge), measures AOI coverage and paints the
// map's detections picture (draw-detections.ts) off the main thread.
import { expose, transfer } from 'comlink';
import { mergeDetectionTables } from '../web/core/seam-merge.ts';
import { toErrorInfo } from '../web/core/errors.ts';
import type { DetectionTable, MapXY } from '../web/core/types.ts';
import { aoiCoverage, frameToScenePxMapping } from '../web/core/coverage.ts';
import type { CoverageMaskSpec, DetectionsPicture, PictureView, TallyApi } from './contract.ts';
import { tableBuffers } from './transfer.ts';
import { DetectionsPainter } from './draw-detections.ts';

const painter = new DetectionsPainter();

const api = {
  async coverage(aoiPolygons: MapXY[][][], frameEpsg: number, masks: CoverageMaskSpec[]) {
    try {
      const cm = masks.map((m) => ({ ...m, frameToScenePx: frameToScenePxMapping(m.geoTransform, m.sceneEpsg, frameEpsg) }));
      return { ok: true as const, value: aoiCoverage(aoiPolygons, cm).fraction };
    } catch (err) {
      return { ok: false as const, error: toErrorInfo(err) };
    }
  },
  async mergeDate(tables: DetectionTable[], opts: { iouThreshold?: number }) {
    try {
      const merged = mergeDetectionTables(tables, { iouThreshold: opts.iouThreshold });
      return transfer({ ok: true as const, value: merged }, tableBuffers(merged));
    } catch (err) {
      return { ok: false as const, error: toErrorInfo(err) };
    }
  },
  async setPicture(picture: DetectionsPicture) {
    try {
      painter.set(picture);
      return { ok: true as const, value: undefined };
    } catch (err) {
      return { ok: false as const, error: toErrorInfo(err) };
    }
  },
  async paintPicture(view: PictureView) {
    try {
      const bitmap = painter.paint(view);
      return transfer({ ok: true as const, value: bitmap }, [bitmap]);
    } catch (err) {
      return { ok: false as const, error: toErrorInfo(err) };
    }
  },
} satisfies TallyApi;

if (!self.name.startsWith('em-pthread')) expose(api);
