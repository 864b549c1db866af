// The detections picture for the map, drawn off the main thread: oriented boxes coloured by class (rejected dashed
// red, added white, the selected one filled), painted into an OffscreenCanvas for one view extent and resolution.
// The tally worker keeps each date's boxes (sent once per merged table) and paints on request; the page shows the
// bitmap as an image layer, so neither the drawing nor its rasterisation holds the page's main thread.
import { boxCornersInto } from '../web/core/oriented-box.ts';
import { createTransform } from '../web/core/crs.ts';
import type { DetectionsPicture, PictureBoxes, PictureView } from './contract.ts';

const classColours = ['#4fd1c5', '#f27f5b', '#b39ddb', '#9ccc65', '#ffd54f', '#64b5f6'];

/** Colour of a class index (the same in map, tables and chart). */
export function classColour(classIdx: number): string { return classColours[classIdx % classColours.length]; }

/** How a detection is drawn (`DetectionsPicture` looks): 0 not drawn, then counted, rejected, added. */
export const LOOK_NONE = 0, LOOK_COUNTED = 1, LOOK_REJECTED = 2, LOOK_ADDED = 3;

/** The largest picture painted, per side in device pixels (a bigger request is refused rather than allocated). */
const MAX_SIDE_PX = 16_384;

/**
 * Rings stroked per path. One path of thousands of rings rasterises far slower than many small ones (16 000 boxes
 * in chromium's software canvas: one path ~1.2 s, 1 000 rings per path ~0.3 s, 50 ~0.17 s, 1 ~0.15 s).
 */
const RINGS_PER_STROKE = 50;
/**
 * Boxes shorter than this on screen (CSS px) are drawn as a small dot, at most one per DOT_CELL_PX square: at low zoom
 * thousands of outlined boxes would merge into blobs that hide the imagery (the selected box is always outlined).
 */
const DOT_BELOW_PX = 7;
const DOT_CELL_PX = 4;

type Ctx = OffscreenCanvasRenderingContext2D;

function strokeLook(ctx: Ctx, cls: number, look: number, pixelRatio: number): void {
  ctx.strokeStyle = look === LOOK_REJECTED ? '#ff7b7b' : look === LOOK_ADDED ? '#ffffff' : classColour(cls);
  ctx.lineWidth = 1.6 * pixelRatio;
  ctx.setLineDash(look === LOOK_REJECTED ? [3 * pixelRatio, 3 * pixelRatio] : []);
}

/** Keeps the boxes of the latest picture and paints them. */
export class DetectionsPainter {
  private boxes = new Map<number, PictureBoxes>();
  private picture: DetectionsPicture = { dates: [] };

  /** Take a new picture; boxes come only with tables not sent before, tables no longer used are dropped. */
  set(picture: DetectionsPicture): void {
    const keep = new Map<number, PictureBoxes>();
    for (const d of picture.dates) {
      const b = d.boxes ?? this.boxes.get(d.tableKey);
      if (!b) throw new Error(`detections picture: the boxes of table ${d.tableKey} were never sent`);
      if (b.count !== d.look.length) throw new Error(`detections picture: ${d.look.length} looks for ${b.count} boxes of table ${d.tableKey}`);
      keep.set(d.tableKey, b);
    }
    this.boxes = keep;
    this.picture = { dates: picture.dates.map((d) => ({ ...d, boxes: undefined })) };
  }

  /** Paint the picture for `view` into a new bitmap. */
  paint(view: PictureView): ImageBitmap {
    const [minX, minY, maxX, maxY] = view.extent;
    const k = view.pixelRatio / view.resolution;
    const wPx = Math.max(1, Math.round((maxX - minX) * k));
    const hPx = Math.max(1, Math.round((maxY - minY) * k));
    if (!(wPx <= MAX_SIDE_PX && hPx <= MAX_SIDE_PX)) throw new Error(`detections picture of ${wPx} × ${hPx} px is larger than ${MAX_SIDE_PX} px a side`);
    const canvas = new OffscreenCanvas(wPx, hPx);
    const ctx = canvas.getContext('2d')!;
    ctx.lineJoin = 'round';
    ctx.lineCap = 'round';
    const xy = new Float64Array(8);
    const px = new Float64Array(8);
    for (const d of this.picture.dates) {
      if (!d.shown) continue;
      const b = this.boxes.get(d.tableKey)!;
      const toView = d.frameEpsg === view.viewEpsg ? null : createTransform(d.frameEpsg, view.viewEpsg);
      /** Corners of row i in picture pixels into `px`; false when the box lies wholly outside the picture. */
      const corners = (i: number): boolean => {
        boxCornersInto(b.cxM[i], b.cyM[i], b.lengthM[i], b.widthM[i], b.angleRad[i], xy);
        let x0 = Infinity, x1 = -Infinity, y0 = Infinity, y1 = -Infinity;
        for (let c = 0; c < 8; c += 2) {
          let x = xy[c], y = xy[c + 1];
          if (toView) { const p = toView([x, y]); x = p[0]; y = p[1]; }
          x = (x - minX) * k; y = (maxY - y) * k;
          px[c] = x; px[c + 1] = y;
          if (x < x0) x0 = x; if (x > x1) x1 = x; if (y < y0) y0 = y; if (y > y1) y1 = y;
        }
        const m = 4 * view.pixelRatio; // the stroke's width
        return x1 >= -m && x0 <= wPx + m && y1 >= -m && y0 <= hPx + m;
      };
      const ring = (): void => {
        ctx.moveTo(px[0], px[1]); ctx.lineTo(px[2], px[3]); ctx.lineTo(px[4], px[5]); ctx.lineTo(px[6], px[7]); ctx.closePath();
      };
      // One path per class × look, in the order each first appears (as the map drew one feature per bucket).
      const n = b.count;
      const bucketOf = new Int32Array(n);
      const order: number[] = [];
      const slot = new Map<number, number>();
      for (let i = 0; i < n; i++) {
        const look = d.look[i];
        if (look === LOOK_NONE) { bucketOf[i] = -1; continue; }
        const key = b.classIdx[i] * 4 + look;
        let s = slot.get(key);
        if (s === undefined) { s = order.length; slot.set(key, s); order.push(key); }
        bucketOf[i] = s;
      }
      // at low zoom: dots, thinned to one per small square of the picture (first class × look bucket wins)
      const dotBelow = DOT_BELOW_PX * view.pixelRatio;
      const cellPx = DOT_CELL_PX * view.pixelRatio;
      const gw = Math.ceil(wPx / cellPx) + 1;
      const taken = new Uint8Array(gw * (Math.ceil(hPx / cellPx) + 1));
      const dots: number[] = [];
      for (let s = 0; s < order.length; s++) {
        strokeLook(ctx, order[s] >> 2, order[s] & 3, view.pixelRatio);
        ctx.beginPath();
        let inPath = 0;
        dots.length = 0;
        for (let i = 0; i < n; i++) {
          if (bucketOf[i] !== s || !corners(i)) continue;
          if (Math.hypot(px[0] - px[2], px[1] - px[3]) < dotBelow) {
            const cx = (px[0] + px[4]) / 2, cy = (px[1] + px[5]) / 2;
            if (cx < 0 || cy < 0 || cx > wPx || cy > hPx) continue;
            const g = Math.floor(cy / cellPx) * gw + Math.floor(cx / cellPx);
            if (taken[g]) continue;
            taken[g] = 1;
            dots.push(cx, cy);
            continue;
          }
          ring();
          if (++inPath === RINGS_PER_STROKE) { ctx.stroke(); ctx.beginPath(); inPath = 0; }
        }
        if (inPath > 0) ctx.stroke();
        if (dots.length) {
          const r = 1.2 * view.pixelRatio;
          ctx.fillStyle = ctx.strokeStyle;
          ctx.beginPath();
          for (let j = 0; j < dots.length; j += 2) ctx.rect(dots[j] - r, dots[j + 1] - r, 2 * r, 2 * r);
          ctx.fill();
        }
      }
      if (d.selectedRow >= 0 && d.selectedRow < n && corners(d.selectedRow)) {
        ctx.beginPath();
        ring();
        ctx.fillStyle = 'rgba(255,255,255,0.25)';
        ctx.fill();
        ctx.strokeStyle = '#ffffff';
        ctx.lineWidth = 3.5 * view.pixelRatio;
        ctx.setLineDash([]);
        ctx.stroke();
      }
    }
    return canvas.transferToImageBitmap();
  }
}
