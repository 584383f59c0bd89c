/**
 * Buffers of the terrain step's rasters, handed on from step to step.
 *
 * Memory a process has not touched yet costs a page fault on the first
 * write to each page; for DEM-sized rasters that is the larger part of
 * allocating them (about 1.3 ms per MB on the bench machine, against about
 * 0.3 ms per MB to clear memory already touched). A step gives back the
 * buffers of its scratch rasters when it is done, and a later step that
 * wants a raster of about that size gets one of them instead of new memory.
 */
export class RasterPool {
  private free: ArrayBufferLike[] = [];

  /**
   * Gives back the buffers of `arrays` (null is skipped). Each must be a
   * raster nothing will read or write again, and the only live view of its
   * buffer.
   */
  release(...arrays: (ArrayBufferView | null | undefined)[]): void {
    for (const a of arrays) if (a) this.free.push(a.buffer);
  }

  /** An Int32Array of `length`, cleared to 0 when `clear` (else holding anything). */
  int32(length: number, clear: boolean): Int32Array {
    const b = this.take(4 * length);
    if (!b) return new Int32Array(length);
    const a = new Int32Array(b, 0, length);
    if (clear) a.fill(0);
    return a;
  }

  /** A Float32Array of `length`, cleared to 0 when `clear`. */
  float32(length: number, clear: boolean): Float32Array {
    const b = this.take(4 * length);
    if (!b) return new Float32Array(length);
    const a = new Float32Array(b, 0, length);
    if (clear) a.fill(0);
    return a;
  }

  /** A Uint8Array of `length`, cleared to 0 when `clear`. */
  uint8(length: number, clear: boolean): Uint8Array {
    const b = this.take(length);
    if (!b) return new Uint8Array(length);
    const a = new Uint8Array(b, 0, length);
    if (clear) a.fill(0);
    return a;
  }

  /** The smallest free buffer of at least `bytes` and at most twice that, taken off the list. */
  private take(bytes: number): ArrayBufferLike | null {
    let best = -1;
    for (let k = 0; k < this.free.length; k++) {
      const size = this.free[k]!.byteLength;
      if (size >= bytes && size <= 2 * bytes && (best < 0 || size < this.free[best]!.byteLength)) best = k;
    }
    if (best < 0) return null;
    const [buffer] = this.free.splice(best, 1);
    return buffer ?? null;
  }
}
