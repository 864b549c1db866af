// Node file sink and temp-file spools for the streaming COG writer (the only Node-specific part of synth).
import { closeSync, openSync, readSync, unlinkSync, writeSync, renameSync } from 'node:fs';
import type { ByteSink, Spool } from '../synth/cog-writer.ts';

/** A file opened for writing at `path` (written as `path.part`, renamed on commit so a file is whole or absent). */
export function fileSink(path: string): ByteSink & { commit(): void; abort(): void } {
  const tmp = `${path}.part`;
  const fd = openSync(tmp, 'w');
  let pos = 0;
  let open = true;
  const close = () => { if (open) { closeSync(fd); open = false; } };
  return {
    write(b) { let done = 0; while (done < b.length) done += writeSync(fd, b, done, b.length - done, pos + done); pos += b.length; },
    pwrite(o, b) { let done = 0; while (done < b.length) done += writeSync(fd, b, done, b.length - done, o + done); },
    commit() { close(); renameSync(tmp, path); },
    abort() { close(); try { unlinkSync(tmp); } catch { /* already gone */ } },
  };
}

/** A factory of spools backed by temporary files next to `basePath`. */
export function fileSpools(basePath: string): () => Spool {
  let n = 0;
  return () => {
    const path = `${basePath}.spool${n++}`;
    const fd = openSync(path, 'w+');
    let size = 0;
    let open = true;
    return {
      write(b) { let done = 0; while (done < b.length) done += writeSync(fd, b, done, b.length - done, size + done); size += b.length; },
      copyTo(sink) {
        const chunk = new Uint8Array(1 << 22);
        for (let at = 0; at < size;) {
          const got = readSync(fd, chunk, 0, Math.min(chunk.length, size - at), at);
          if (got <= 0) throw new Error(`short read from spool ${path}`);
          sink.write(got === chunk.length ? chunk : chunk.subarray(0, got));
          at += got;
        }
      },
      dispose() { if (open) { closeSync(fd); open = false; try { unlinkSync(path); } catch { /* already gone */ } } },
    };
  };
}
