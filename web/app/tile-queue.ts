// Tile hand-out for a pool of workers: each worker works through its own contiguous band of tiles (raster order),
// so neighbouring windows, which share file tiles, land on the same worker and its decoded-tile cache; a worker
// whose band is empty takes the far half of the fullest band (work stealing), so no worker idles while tiles remain.

/** Work-stealing queue of contiguous bands; no DOM or worker globals (also used by the bench harness). */
export class BandQueue<T> {
  private bands: T[][];

  /** Split `items` (in raster order) into `workers` contiguous bands of near-equal length. */
  constructor(items: readonly T[], workers: number) {
    const n = Math.max(1, Math.floor(workers));
    this.bands = [];
    for (let w = 0; w < n; w++) {
      this.bands.push(items.slice(Math.round((w * items.length) / n), Math.round(((w + 1) * items.length) / n)));
    }
  }

  /** Items not yet taken. */
  get size(): number {
    let s = 0;
    for (const b of this.bands) s += b.length;
    return s;
  }

  private band(worker: number): T[] {
    while (this.bands.length <= worker) this.bands.push([]);
    return this.bands[worker];
  }

  /** The next item for `worker`: the front of its band, else the far half of the fullest band moved to it first. */
  take(worker: number): T | undefined {
    const own = this.band(worker);
    if (own.length === 0) {
      let victim = -1;
      for (let w = 0; w < this.bands.length; w++) {
        if (w !== worker && this.bands[w].length > 0 && (victim < 0 || this.bands[w].length > this.bands[victim].length)) victim = w;
      }
      if (victim < 0) return undefined;
      const v = this.bands[victim];
      own.push(...v.splice(v.length - Math.ceil(v.length / 2)));
    }
    return own.shift();
  }

  /** The item `take(worker)` would return next from the worker's own band, without taking it (no stealing). */
  peek(worker: number): T | undefined { return this.bands[worker]?.[0]; }

  /** Hand an item back to the front of `worker`'s band (the worker could not start it). */
  putFront(worker: number, item: T): void { this.band(worker).unshift(item); }

  /** Queue an item again (a retry) at the back of `worker`'s band: it runs after the band's other tiles. */
  putBack(worker: number, item: T): void { this.band(worker).push(item); }
}
