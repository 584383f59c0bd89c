/**
 * Fast Fourier transform, radix 2 (Cooley & Tukey 1965), in place on
 * separate real and imaginary Float64Arrays; and its 2-D form by rows then
 * columns. Unnormalised forward transform X[k] = Σ x[n]·e^(−2πikn/N).
 */

/** True when n is a power of two (≥ 1). */
export function isPowerOfTwo(n: number): boolean {
  return n >= 1 && (n & (n - 1)) === 0;
}

/** Smallest power of two ≥ n. */
export function nextPowerOfTwo(n: number): number {
  let p = 1;
  while (p < n) p *= 2;
  return p;
}

/** In-place forward FFT of length re.length (a power of two). */
export function fft(re: Float64Array, im: Float64Array): void {
  const n = re.length;
  if (!isPowerOfTwo(n) || im.length !== n) throw new Error(`fft length must be a power of two with matching arrays; got ${n}`);
  // Bit-reversal permutation.
  let j = 0;
  for (let i = 1; i < n; i++) {
    let bit = n >> 1;
    while (j & bit) {
      j ^= bit;
      bit >>= 1;
    }
    j ^= bit;
    if (i < j) {
      const tr = re[i]!;
      re[i] = re[j]!;
      re[j] = tr;
      const ti = im[i]!;
      im[i] = im[j]!;
      im[j] = ti;
    }
  }
  for (let len = 2; len <= n; len <<= 1) {
    const ang = (-2 * Math.PI) / len;
    const wr = Math.cos(ang);
    const wi = Math.sin(ang);
    const half = len >> 1;
    for (let i = 0; i < n; i += len) {
      let cr = 1;
      let ci = 0;
      for (let k = 0; k < half; k++) {
        const a = i + k;
        const b = a + half;
        const xr = re[b]! * cr - im[b]! * ci;
        const xi = re[b]! * ci + im[b]! * cr;
        re[b] = re[a]! - xr;
        im[b] = im[a]! - xi;
        re[a]! += xr;
        im[a]! += xi;
        const nr = cr * wr - ci * wi;
        ci = cr * wi + ci * wr;
        cr = nr;
      }
    }
  }
}

/** In-place 2-D forward FFT of a rows × cols array (row-major; both powers of two). */
export function fft2(re: Float64Array, im: Float64Array, rows: number, cols: number): void {
  const rr = new Float64Array(cols);
  const ri = new Float64Array(cols);
  for (let r = 0; r < rows; r++) {
    rr.set(re.subarray(r * cols, (r + 1) * cols));
    ri.set(im.subarray(r * cols, (r + 1) * cols));
    fft(rr, ri);
    re.set(rr, r * cols);
    im.set(ri, r * cols);
  }
  const cr = new Float64Array(rows);
  const ci = new Float64Array(rows);
  for (let c = 0; c < cols; c++) {
    for (let r = 0; r < rows; r++) {
      cr[r] = re[r * cols + c]!;
      ci[r] = im[r * cols + c]!;
    }
    fft(cr, ci);
    for (let r = 0; r < rows; r++) {
      re[r * cols + c] = cr[r]!;
      im[r * cols + c] = ci[r]!;
    }
  }
}
