// Read-ahead in a detector worker: while tile k infers in the inference worker, the tile the page will most likely
// send next (the next one of this worker's band, `TileTask.nextTileIndex`) is read and filled into a second tensor.
// Owns the worker's tensors (TileScratch): two in use at most, one inferring and one being filled.
import { createTileScratch, type FilledTile, type ScenePipeline, type TileScratch } from '../web/core/pipeline.ts';

interface Pending { p: ScenePipeline; tileIndex: number; filled: Promise<FilledTile> }

export class ReadAhead {
  private free: TileScratch[] = [];
  private pending: Pending | null = null;

  /** A tensor for plan tiles of `tilePx` (a free one, else a new one). */
  private take(tilePx: number): TileScratch {
    this.free = this.free.filter((s) => s.tilePx === tilePx);
    return this.free.pop() ?? createTileScratch(tilePx);
  }

  /** Return a tensor once its tile has inferred; one whose buffer was lost (a failed run) is dropped. */
  give(s: TileScratch): void {
    if (s.tensor.byteLength > 0 && this.free.length < 2) this.free.push(s);
  }

  /**
   * The filled tile `tileIndex` of `p`: the one read ahead when it is that tile, else read and filled now. A read
   * ahead for another tile is dropped (its tensor returned once it settles).
   */
  filled(p: ScenePipeline, tileIndex: number, make: (scratch: TileScratch) => Promise<FilledTile>): Promise<FilledTile> {
    const hit = this.pending && this.pending.p === p && this.pending.tileIndex === tileIndex ? this.pending : null;
    if (hit) { this.pending = null; return hit.filled; }
    this.drop();
    return make(this.take(p.plan.tilePx));
  }

  /** Start reading and filling tile `tileIndex` of `p` now (replacing any other read ahead). */
  start(p: ScenePipeline, tileIndex: number, make: (scratch: TileScratch) => Promise<FilledTile>): void {
    if (this.pending && this.pending.p === p && this.pending.tileIndex === tileIndex) return;
    this.drop();
    const filled = make(this.take(p.plan.tilePx));
    filled.catch(() => undefined); // a failure surfaces when the tile is asked for; never an unhandled rejection
    this.pending = { p, tileIndex, filled };
  }

  /** Forget the read ahead (cancel, another model, a forgotten scene); its tensor comes back when it settles. */
  drop(): void {
    const old = this.pending;
    this.pending = null;
    old?.filled.then((f) => this.give(f.scratch), () => undefined);
  }
}
