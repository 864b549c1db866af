import { makeMergeTables } from './merge-data.ts';
import { concatDetectionTables } from '../web/core/seam-merge.ts';
import { CandidateIndex } from '../web/core/candidate-index.ts';
const all = concatDetectionTables(makeMergeTables(1_000_000));
const rows = Uint32Array.from({ length: all.count }, (_, i) => i);
let t0 = performance.now();
const ix = new CandidateIndex(all, rows);
console.log('build', (performance.now() - t0).toFixed(0), (ix as any).grids.map((g: any) => [g.cellM, g.nx, g.ny, g.row.length]), !!(ix as any).tree);
for (let r = 0; r < 3; r++) {
t0 = performance.now(); let h = 0;
for (let i = 0; i < all.count; i++) h += ix.query(i);
console.log('queries', (performance.now() - t0).toFixed(0), 'hits/query', (h / all.count).toFixed(2));
}
