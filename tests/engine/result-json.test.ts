// The typed-array encoding of results: Node's Buffer path gives the same base64 as the standard
// btoa over the little-endian bytes (WHATWG HTML, "forgiving-base64 encode"; RFC 4648 sec. 4), and
// decodes back to the same values.
import { describe, expect, it } from 'vitest';
import { decodeArray, encodeArray } from '../../server/src/engine/result-json';

function reference(a: Float64Array | Float32Array | Int16Array): string {
  const bytes = new Uint8Array(a.buffer, a.byteOffset, a.byteLength);
  let binary = '';
  for (const b of bytes) binary += String.fromCharCode(b);
  return btoa(binary);
}

describe('result array encoding', () => {
  const arrays = [
    Float64Array.from([0, -1.5, Math.PI, NaN, Infinity, 1e-300]),
    Float32Array.from([0.1, -2, NaN]),
    Int16Array.from([-1, 0, 3, 32767]),
    new Float64Array(new Float64Array([9, 8, 7, 6]).buffer, 8, 2), // a view with an offset
    new Float32Array(0),
  ];
  it('matches the standard base64 of the bytes and decodes back', () => {
    for (const a of arrays) {
      const e = encodeArray(a);
      expect(e.base64).toBe(reference(a));
      expect(e.length).toBe(a.length);
      const back = decodeArray(e);
      expect(Array.from(back)).toEqual(Array.from(a));
    }
  });
});
