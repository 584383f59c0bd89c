/**
 * Buffers of the terrain step's rasters, handed on from step to step.
 *
 * Memory a process has not touched yet costs a page fault on the first
 * write to each page; for DEM-sized rasters that is the larger part of
 * allocating them (about 1.3 ms per MB on the bench machine, against about
 * 0.3 ms per MB to clear memory already touched). A step gives back the
 * buffers of its scratch rasters when it is done, and a later step that
 * wants a raster of about that size gets one of them instead of new memory.
 *
 * Buffers can also be prepared ahead ({@link RasterPool.prepare}): shared
 * buffers, still all zero, that another thread touches page by page while
 * this one works (fill-threads.ts), so their page faults are taken off this
 * thread.
 */

/** A buffer waiting to be handed out; `zero` while it is known to hold only zeros. */
interface FreeBuffer {
  buffer: ArrayBufferLike;
  zero: boolean;
}

export class RasterPool {
  private free: FreeBuffer[] = [];

  /**
   * Gives back the buffers of `arrays` (null is skipped). Each must be a
   * raster nothing will read or write again, and the only live view of its
   * buffer.
   */
  release(...arrays: (ArrayBufferView | null | undefined)[]): void {
    for (const a of arrays) if (a) this.free.push({ buffer: a.buffer, zero: false });
  }

  /**
   * New shared buffers of the given sizes, bytes, all zero, put in the pool
   * at once; returned so that another thread can touch their pages before
   * they are used (it must only ever write 0 where it finds 0).
   */
  prepare(byteLengths: readonly number[]): SharedArrayBuffer[] {
    return byteLengths.map((bytes) => {
      const buffer = new SharedArrayBuffer(bytes);
      this.free.push({ buffer, zero: true });
      return buffer;
    });
  }

  /** The prepared buffers still in the pool. */
  untouched(): SharedArrayBuffer[] {
    return this.free.filter((f) => f.zero && f.buffer instanceof SharedArrayBuffer).map((f) => f.buffer as SharedArrayBuffer);
  }

  /** An Int32Array of `length`, all 0 when `clear` (else holding anything). */
  int32(length: number, clear: boolean): Int32Array {
    const f = this.take(4 * length, clear);
    if (!f) return new Int32Array(length);
    const a = new Int32Array(f.buffer, 0, length);
    if (clear && !f.zero) a.fill(0);
    return a;
  }

  /** A Float32Array of `length`, all 0 when `clear`. */
  float32(length: number, clear: boolean): Float32Array {
    const f = this.take(4 * length, clear);
    if (!f) return new Float32Array(length);
    const a = new Float32Array(f.buffer, 0, length);
    if (clear && !f.zero) a.fill(0);
    return a;
  }

  /** A Float64Array of `length`, all 0 when `clear`. */
  float64(length: number, clear: boolean): Float64Array {
    const f = this.take(8 * length, clear);
    if (!f) return new Float64Array(length);
    const a = new Float64Array(f.buffer, 0, length);
    if (clear && !f.zero) a.fill(0);
    return a;
  }

  /** A Uint8Array of `length`, all 0 when `clear`. */
  uint8(length: number, clear: boolean): Uint8Array {
    const f = this.take(length, clear);
    if (!f) return new Uint8Array(length);
    const a = new Uint8Array(f.buffer, 0, length);
    if (clear && !f.zero) a.fill(0);
    return a;
  }

  /**
   * The smallest free buffer of at least `bytes` and at most twice that,
   * taken off the list; all-zero buffers first when zeros are wanted, the
   * others first when not (they would be cleared for nothing).
   */
  private take(bytes: number, clear: boolean): FreeBuffer | null {
    let best = -1;
    for (let k = 0; k < this.free.length; k++) {
      const f = this.free[k]!;
      const size = f.buffer.byteLength;
      if (size < bytes || size > 2 * bytes) continue;
      if (best < 0) {
        best = k;
        continue;
      }
      const b = this.free[best]!;
      const better = f.zero === clear && b.zero !== clear ? true : f.zero !== clear && b.zero === clear ? false : size < b.buffer.byteLength;
      if (better) best = k;
    }
    if (best < 0) return null;
    const [f] = this.free.splice(best, 1);
    return f ?? null;
  }
}
