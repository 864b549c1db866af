// The sidecar's `lowSun` block from two `seamtally eval` reports on validation scenes: the summer set
// (make-scenes.ts val) and the low-sun set (val-lowsun, sun 12-32 deg). Per class: mean signed quadrant count error
// (AOIs with at least 10 truth objects) under the low sun minus that under the high sun, in percent.
// Usage: npx tsx models/train/low-sun.ts --high VAL.json --low VAL_LOWSUN.json --sidecar X.model.json [--below 32]
import { readFileSync, renameSync, writeFileSync } from 'node:fs';
import { parseArgs } from 'node:util';
import { validateSidecar } from '../../web/core/model-contract.ts';

interface Report { aoiCounts: Array<{ className: string; aoi: string; trueCount: number; error: number | null }> }
const { values: v } = parseArgs({ options: { high: { type: 'string' }, low: { type: 'string' }, sidecar: { type: 'string' }, below: { type: 'string' } } });
if (!v.high || !v.low || !v.sidecar) throw new Error('usage: low-sun.ts --high VAL.json --low VAL_LOWSUN.json --sidecar X.model.json [--below 32]');
const read = (f: string) => JSON.parse(readFileSync(f, 'utf8')) as Report;
const high = read(v.high), low = read(v.low);
const raw = JSON.parse(readFileSync(v.sidecar, 'utf8')) as Record<string, unknown> & { classes: string[] };
const meanSigned = (r: Report, cls: string) => {
  const rows = r.aoiCounts.filter((x) => x.className === cls && x.aoi !== 'whole scene' && x.trueCount >= 10 && x.error !== null);
  return { n: rows.length, pct: (100 * rows.reduce((s, x) => s + x.error!, 0)) / Math.max(1, rows.length) };
};
const countBiasPct: Record<string, number> = {};
for (const cls of raw.classes) {
  const h = meanSigned(high, cls), l = meanSigned(low, cls);
  if (h.n && l.n) countBiasPct[cls] = Math.round((l.pct - h.pct) * 10) / 10;
  process.stderr.write(`${cls}: high sun ${h.pct.toFixed(1)} % (${h.n} AOIs), low sun ${l.pct.toFixed(1)} % (${l.n} AOIs)\n`);
}
raw.lowSun = {
  belowDeg: Number(v.below ?? 32), countBiasPct,
  source: 'validation scenes (models/train/make-scenes.ts): 16 summer town scenes (val, seeds 5001-5016) against 16 with the sun 12-32 deg high (val-lowsun, seeds 5101-5116); mean signed count error per scene quadrant',
};
validateSidecar(raw);
writeFileSync(`${v.sidecar}.part`, JSON.stringify(raw, null, 2) + '\n');
renameSync(`${v.sidecar}.part`, v.sidecar);
process.stderr.write(`lowSun written to ${v.sidecar}: ${JSON.stringify(countBiasPct)}\n`);
