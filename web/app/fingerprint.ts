// Scene fingerprints: SHA-256 of the size plus the first and last 64 KiB, so reopened files are recognised.
import type { SceneInput } from '../../workers/contract.ts';
import { SeamtallyError } from '../core/errors.ts';

const CHUNK_B = 64 * 1024;

async function rangeBytes(url: string, startB: number, endB: number): Promise<ArrayBuffer> {
  const res = await fetch(url, { headers: { Range: `bytes=${startB}-${endB - 1}` } });
  if (!res.ok) throw new SeamtallyError('network', `The server answered ${res.status} for ${url}. Check the address and that the server allows this page to read it.`);
  const buf = await res.arrayBuffer();
  return res.status === 206 ? buf : buf.slice(startB, endB);
}

async function sizeOfUrl(url: string): Promise<number> {
  const res = await fetch(url, { headers: { Range: 'bytes=0-0' } });
  const cr = res.headers.get('Content-Range');
  const m = cr ? /\/(\d+)$/.exec(cr) : null;
  if (m) return Number(m[1]);
  const len = res.headers.get('Content-Length');
  if (res.status === 200 && len) return Number(len);
  throw new SeamtallyError('range-unsupported', `The server of ${url} does not say how large the file is (no range support), so it cannot be read window by window. Download the file and open it from disk instead.`);
}

/** Fingerprint of a File or URL scene (hex SHA-256). */
export async function fingerprintScene(input: SceneInput): Promise<string> {
  let sizeB: number;
  let head: ArrayBuffer;
  let tail: ArrayBuffer;
  if (input.kind === 'file') {
    sizeB = input.file.size;
    head = await input.file.slice(0, CHUNK_B).arrayBuffer();
    tail = await input.file.slice(Math.max(0, sizeB - CHUNK_B)).arrayBuffer();
  } else {
    sizeB = await sizeOfUrl(input.url);
    head = await rangeBytes(input.url, 0, Math.min(sizeB, CHUNK_B));
    tail = await rangeBytes(input.url, Math.max(0, sizeB - CHUNK_B), sizeB);
  }
  const sizeBytes = new TextEncoder().encode(String(sizeB));
  const all = new Uint8Array(sizeBytes.length + head.byteLength + tail.byteLength);
  all.set(sizeBytes, 0);
  all.set(new Uint8Array(head), sizeBytes.length);
  all.set(new Uint8Array(tail), sizeBytes.length + head.byteLength);
  const digest = await crypto.subtle.digest('SHA-256', all);
  return [...new Uint8Array(digest)].map((b) => b.toString(16).padStart(2, '0')).join('');
}
