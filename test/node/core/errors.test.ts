// Errors keep their kind across a structured-clone boundary.
import { describe, it, expect } from 'vitest';
import { SeamtallyError, toErrorInfo, fromErrorInfo } from '../../../web/core/errors.ts';

describe('errors', () => {
  it('round-trips kind and message through plain data', () => {
    const e = new SeamtallyError('not-tiff', 'This file is not a TIFF.');
    const info = structuredClone(toErrorInfo(e));
    const back = fromErrorInfo(info);
    expect(back.kind).toBe('not-tiff');
    expect(back.message).toBe('This file is not a TIFF.');
  });
});
