// A PNG snapshot of the map as shown (all layer canvases composed), for the printable report.
import type { MapView } from './map-view.ts';

/** Compose the map's layer canvases into one PNG data URL (waits for the next complete render). */
export function mapSnapshot(view: MapView): Promise<string> {
  const map = view.map;
  return new Promise((resolve) => {
    map.once('rendercomplete', () => {
      const size: number[] = map.getSize() ?? [800, 600];
      const out = document.createElement('canvas');
      out.width = size[0] ?? 800;
      out.height = size[1] ?? 600;
      const ctx = out.getContext('2d')!;
      ctx.fillStyle = '#0b0e12';
      ctx.fillRect(0, 0, out.width, out.height);
      for (const c of map.getViewport()?.querySelectorAll<HTMLCanvasElement>('.ol-layer canvas, canvas.ol-layer') ?? []) {
        if (c.width === 0) continue;
        const parent = c.parentNode as HTMLElement;
        ctx.globalAlpha = Number(parent.style.opacity || c.style.opacity || 1);
        const m = c.style.transform.match(/^matrix\(([^(]*)\)$/);
        const mat = m ? m[1].split(',').map(Number) : [c.width / (c.offsetWidth || c.width), 0, 0, c.height / (c.offsetHeight || c.height), 0, 0];
        ctx.setTransform(mat[0], mat[1], mat[2], mat[3], mat[4], mat[5]);
        ctx.drawImage(c, 0, 0);
      }
      ctx.setTransform(1, 0, 0, 1, 0, 0);
      ctx.globalAlpha = 1;
      resolve(out.toDataURL('image/png'));
    });
    map.renderSync();
  });
}
