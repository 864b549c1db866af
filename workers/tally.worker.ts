// Tally worker entry (thin): merges the tile detections of one date off the main thread with the core's seam merge.
import { expose, transfer } from 'comlink';
import { mergeDetectionTables } from '../web/core/seam-merge.ts';
import { toErrorInfo } from '../web/core/errors.ts';
import type { DetectionTable } from '../web/core/types.ts';
import type { TallyApi } from './contract.ts';
import { tableBuffers } from './transfer.ts';

const api = {
  async mergeDate(tables: DetectionTable[], opts: { iouThreshold?: number }) {
    try {
      const merged = mergeDetectionTables(tables, { iouThreshold: opts.iouThreshold });
      return transfer({ ok: true as const, value: merged }, tableBuffers(merged));
    } catch (err) {
      return { ok: false as const, error: toErrorInfo(err) };
    }
  },
} satisfies TallyApi;

if (!self.name.startsWith('em-pthread')) expose(api);
