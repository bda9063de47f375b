import FFT from 'fft.js';

/**
 * The per-segment sums of the cross-particle common-mode spectral F-test (Shumway 1970, JASA
 * 65:1527, analysis of variance of a common signal in a set of independent series), for one
 * segment of L steps of N particles, per axis and frequency bin j = 0…L/2:
 *
 * - Z_i(f_j) = Σ_t w_t d_i(t) e^{−2πi j t/L}, with the Hann window w_t = sin²(π t/L)
 *   (the periodic form, so that on-bin lines leak only into the two neighbours);
 * - `between[j]` = N·|Z̄(f_j)|² (the common-mode power, 2 degrees of freedom);
 * - `within[j]`  = Σ_i |Z_i − Z̄|² (the scatter about the mean, 2(N−1) degrees of freedom).
 *
 * Computed with one real FFT per particle and axis (fft.js; the FFT object and the buffers are
 * reused). Cost O(N·L log L) per segment. Units: Z in µm (steps × window weights).
 *
 * @example
 * const spectrum = new SegmentSpectrum(256);
 * spectrum.compute(stepsX, stepsY, rows); // rows of 256 steps, row-major
 * spectrum.count;            // → rows
 * spectrum.between[0][13];   // → N|Z̄|² at bin 13, x axis, µm²
 */
export class SegmentSpectrum {
  /** Segment length L (a power of two ≥ 8). */
  readonly length: number;
  /** Number of bins, L/2 + 1 (DC to Nyquist). */
  readonly bins: number;
  /** Hann window weights. */
  readonly window: Float64Array;
  /** Σ_t w_t², for amplitude scaling. */
  readonly windowSumSquares: number;
  /** Σ_t w_t, for amplitude scaling. */
  readonly windowSum: number;
  /** Particles in the segment, N. */
  count: number;
  /** N·|Z̄|² per axis ([x, y]) and bin, µm². */
  readonly between: [Float64Array, Float64Array];
  /** Σ_i |Z_i − Z̄|² per axis and bin, µm². */
  readonly within: [Float64Array, Float64Array];
  /** Z̄ real and imaginary parts per axis and bin, µm. */
  readonly meanRe: [Float64Array, Float64Array];
  readonly meanIm: [Float64Array, Float64Array];
  private readonly fft: FFT;
  private readonly input: Float64Array;
  private readonly output: Float64Array;
  private readonly sumRe: Float64Array;
  private readonly sumIm: Float64Array;
  private readonly sumSquares: Float64Array;

  /** @param length segment length L, a power of two ≥ 8. */
  constructor(length: number) {
    if (!Number.isInteger(length) || length < 8 || (length & (length - 1)) !== 0) {
      throw new RangeError('SegmentSpectrum requires a power-of-two length >= 8');
    }
    this.length = length;
    this.bins = length / 2 + 1;
    this.window = new Float64Array(length);
    let sum = 0;
    let sumSquares = 0;
    for (let t = 0; t < length; t++) {
      const s = Math.sin((Math.PI * t) / length);
      this.window[t] = s * s;
      sum += s * s;
      sumSquares += s * s * s * s;
    }
    this.windowSum = sum;
    this.windowSumSquares = sumSquares;
    this.count = 0;
    const make = (): [Float64Array, Float64Array] => [new Float64Array(this.bins), new Float64Array(this.bins)];
    this.between = make();
    this.within = make();
    this.meanRe = make();
    this.meanIm = make();
    this.fft = new FFT(length);
    this.input = new Float64Array(length);
    this.output = new Float64Array(2 * length);
    this.sumRe = new Float64Array(this.bins);
    this.sumIm = new Float64Array(this.bins);
    this.sumSquares = new Float64Array(this.bins);
  }

  /**
   * Computes the sums for `rows` particles whose steps are packed row-major in `stepsX` and
   * `stepsY` (row·L + t), µm. O(rows·L log L).
   */
  compute(stepsX: Float64Array, stepsY: Float64Array, rows: number): void {
    this.count = rows;
    this.computeAxis(stepsX, rows, 0);
    this.computeAxis(stepsY, rows, 1);
  }

  private computeAxis(steps: Float64Array, rows: number, axis: 0 | 1): void {
    const L = this.length;
    const B = this.bins;
    const { sumRe, sumIm, sumSquares, input, output, window } = this;
    sumRe.fill(0);
    sumIm.fill(0);
    sumSquares.fill(0);
    for (let row = 0; row < rows; row++) {
      const offset = row * L;
      for (let t = 0; t < L; t++) input[t] = window[t] * steps[offset + t];
      this.fft.realTransform(output, input); // fills bins 0…L/2 as (re, im) pairs
      for (let j = 0; j < B; j++) {
        const re = output[2 * j];
        const im = output[2 * j + 1];
        sumRe[j] += re;
        sumIm[j] += im;
        sumSquares[j] += re * re + im * im;
      }
    }
    const between = this.between[axis];
    const within = this.within[axis];
    const meanRe = this.meanRe[axis];
    const meanIm = this.meanIm[axis];
    for (let j = 0; j < B; j++) {
      if (rows === 0) {
        between[j] = 0;
        within[j] = 0;
        meanRe[j] = 0;
        meanIm[j] = 0;
        continue;
      }
      const power = sumRe[j] * sumRe[j] + sumIm[j] * sumIm[j];
      between[j] = power / rows; // N|Z̄|² = |ΣZ|²/N
      // Σ|Z_i − Z̄|² = Σ|Z_i|² − N|Z̄|² (clamped: rounding can make it a hair negative)
      within[j] = Math.max(0, sumSquares[j] - between[j]);
      meanRe[j] = sumRe[j] / rows;
      meanIm[j] = sumIm[j] / rows;
    }
  }
}
