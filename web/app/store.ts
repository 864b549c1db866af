// Work kept in IndexedDB (idb): areas, scenes (by fingerprint), runs with their finished tiles, review decisions,
// checked samples.
import { openDB, type DBSchema, type IDBPDatabase } from 'idb';
import type { ReviewState } from '../core/types.ts';
import type { TileDetections } from '../../workers/contract.ts';
import type { AoiRecord, SceneRecord, AddedBox, SampleRecord } from './state.ts';
import { SeamtallyError } from '../core/errors.ts';

/** A run as kept: its identity (what was asked) and how far it got. */
export interface RunRecord {
  id: string;
  /** Hash of scenes, model, tiling and areas-only choice: a reload resumes the run with the same key. */
  key: string;
  status: 'running' | 'cancelled' | 'done';
  tilesTotal: number;
  startedMs: number;
}

export interface TileRecord {
  runId: string;
  /** `${sceneId}/${tileIdx}` */
  tileKey: string;
  result: TileDetections;
}

export interface ReviewRecord {
  /** `${dateIso}|${detectionKey}` */
  key: string;
  state: ReviewState;
}

interface Schema extends DBSchema {
  aois: { key: string; value: AoiRecord };
  scenes: { key: string; value: SceneRecord };
  runs: { key: string; value: RunRecord; indexes: { byKey: string } };
  tiles: { key: [string, string]; value: TileRecord; indexes: { byRun: string } };
  review: { key: string; value: ReviewRecord };
  added: { key: string; value: AddedBox };
  samples: { key: string; value: SampleRecord };
}

/** Thin typed wrapper; every write reports a full disk as a plain sentence instead of failing silently. */
export class WorkStore {
  private constructor(private db: IDBPDatabase<Schema>) {}

  static async open(name = 'seamtally'): Promise<WorkStore> {
    // version 2 added the checked samples; a version-1 database keeps its stores and gains that one
    const db = await openDB<Schema>(name, 2, {
      upgrade(d, oldVersion) {
        if (oldVersion < 1) {
          d.createObjectStore('aois', { keyPath: 'id' });
          d.createObjectStore('scenes', { keyPath: 'fingerprint' });
          d.createObjectStore('runs', { keyPath: 'id' }).createIndex('byKey', 'key');
          d.createObjectStore('tiles', { keyPath: ['runId', 'tileKey'] }).createIndex('byRun', 'runId');
          d.createObjectStore('review', { keyPath: 'key' });
          d.createObjectStore('added', { keyPath: 'id' });
        }
        if (oldVersion < 2) d.createObjectStore('samples', { keyPath: 'key' });
      },
    });
    return new WorkStore(db);
  }

  /** Run a write; a full disk (QuotaExceededError, thrown at once or when the transaction ends) becomes a sentence. */
  private async guard<T>(write: () => Promise<T>): Promise<T> {
    try { return await write(); } catch (err) {
      if (err instanceof DOMException && err.name === 'QuotaExceededError') {
        throw new SeamtallyError('storage-quota', 'The browser has no room left to keep your work. Free disk space or clear old runs (Take away → Forget kept work), then try again.');
      }
      throw err;
    }
  }

  allAois(): Promise<AoiRecord[]> { return this.db.getAll('aois'); }
  putAoi(a: AoiRecord): Promise<string> { return this.guard(() => this.db.put('aois', a)); }
  deleteAoi(id: string): Promise<void> { return this.db.delete('aois', id); }

  allScenes(): Promise<SceneRecord[]> { return this.db.getAll('scenes'); }
  putScene(s: SceneRecord): Promise<string> { return this.guard(() => this.db.put('scenes', s)); }
  deleteScene(fingerprint: string): Promise<void> { return this.db.delete('scenes', fingerprint); }

  async latestRun(key: string): Promise<RunRecord | undefined> {
    const runs = await this.db.getAllFromIndex('runs', 'byKey', key);
    return runs.sort((a, b) => b.startedMs - a.startedMs)[0];
  }
  async lastRun(): Promise<RunRecord | undefined> {
    return (await this.db.getAll('runs')).sort((a, b) => b.startedMs - a.startedMs)[0];
  }
  putRun(r: RunRecord): Promise<string> { return this.guard(() => this.db.put('runs', r)); }
  putTile(t: TileRecord): Promise<[string, string]> { return this.guard(() => this.db.put('tiles', t)); }
  /** Keep several finished tiles in one transaction. */
  async putTiles(ts: TileRecord[]): Promise<void> {
    if (ts.length === 0) return;
    await this.guard(async () => {
      const tx = this.db.transaction('tiles', 'readwrite');
      await Promise.all([...ts.map((t) => tx.store.put(t)), tx.done]);
    });
  }
  tilesOf(runId: string): Promise<TileRecord[]> { return this.db.getAllFromIndex('tiles', 'byRun', runId); }

  allReview(): Promise<ReviewRecord[]> { return this.db.getAll('review'); }
  putReview(r: ReviewRecord): Promise<string> { return this.guard(() => this.db.put('review', r)); }
  allAdded(): Promise<AddedBox[]> { return this.db.getAll('added'); }
  putAdded(a: AddedBox): Promise<string> { return this.guard(() => this.db.put('added', a)); }
  deleteAdded(id: string): Promise<void> { return this.db.delete('added', id); }

  allSamples(): Promise<SampleRecord[]> { return this.db.getAll('samples'); }
  putSample(s: SampleRecord): Promise<string> { return this.guard(() => this.db.put('samples', s)); }
  deleteSample(key: string): Promise<void> { return this.db.delete('samples', key); }

  /** Forget runs, tiles, review and samples (areas and scenes stay). */
  async clearWork(): Promise<void> {
    const tx = this.db.transaction(['runs', 'tiles', 'review', 'added', 'samples'], 'readwrite');
    await Promise.all([tx.objectStore('runs').clear(), tx.objectStore('tiles').clear(),
      tx.objectStore('review').clear(), tx.objectStore('added').clear(), tx.objectStore('samples').clear(), tx.done]);
  }
}
