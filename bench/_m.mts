import { makeMergeTables } from './merge-data.ts';
import { mergeDetectionTables } from '../web/core/seam-merge.ts';
const t = makeMergeTables(1_000_000);
const t0 = performance.now(); mergeDetectionTables(t); console.log((performance.now() - t0).toFixed(0));
