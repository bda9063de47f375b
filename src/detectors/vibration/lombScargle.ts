/**
 * Lomb–Scargle periodogram (Lomb 1976, Astrophys. Space Sci. 39:447; Scargle 1982, ApJ 263:835)
 * of a zero-mean series of unit variance sampled at uneven times, in the "psd" normalisation
 * with known variance: at each frequency it is half the reduction in χ² from fitting
 * a·cos ωt + b·sin ωt by least squares,
 *
 *   z(f) = ½ [C S] [[CC, CS], [CS, SS]]⁻¹ [C S]ᵀ,  C = Σ u cos ωt, CC = Σ cos²ωt, …
 *
 * which is algebraically Lomb's form with the time offset τ. Under H0 (independent unit
 * normal u) z(f) is exponential with mean 1 at each frequency. The grid is f_j = j·Δf for
 * j = firstIndex…lastIndex; cos and sin are advanced by the angle-addition recurrence per sample
 * (no trig call in the inner loop; re-seeded every 64 steps to bound rounding).
 * Cost O(n·frequencies); no allocation when `out` is given.
 *
 * @param times sample times, s (any order)
 * @param values standardised values (unit variance under H0)
 * @param count number of samples used
 * @param frequencyStepHz Δf, Hz
 * @param firstIndex first j (≥ 1)
 * @param lastIndex last j
 * @param out power per j − firstIndex (length ≥ lastIndex − firstIndex + 1)
 * @param work optional scratch of ≥ 7·(lastIndex − firstIndex + 1) entries
 * @param values2 optional second series at the same times (e.g. the y axis): it shares the
 *   trigonometric sums, so two series cost little more than one
 * @param out2 power of the second series
 * @example
 * const z = lombScargle(t, u, n, 1 / span, 2, n / 2 - 1, new Float64Array(n));
 * // z[j − 2] ≈ 1 on average for white noise
 */
export function lombScargle(
  times: Float64Array,
  values: Float64Array,
  count: number,
  frequencyStepHz: number,
  firstIndex: number,
  lastIndex: number,
  out: Float64Array,
  work?: Float64Array,
  values2?: Float64Array,
  out2?: Float64Array,
): Float64Array {
  if (!(frequencyStepHz > 0) || firstIndex < 1 || lastIndex < firstIndex) {
    throw new RangeError('lombScargle requires frequencyStepHz > 0 and 1 <= firstIndex <= lastIndex');
  }
  const F = lastIndex - firstIndex + 1;
  const two = values2 !== undefined && out2 !== undefined;
  // Seven running sums per frequency: CC, SS, CS, then C and S of each series.
  const W = 7;
  const sums = work && work.length >= W * F ? work : new Float64Array(W * F);
  sums.fill(0, 0, W * F);
  for (let i = 0; i < count; i++) {
    const u = values[i];
    const v = two ? values2[i] : 0;
    const t = times[i];
    const stepAngle = 2 * Math.PI * frequencyStepHz * t;
    const cosStep = Math.cos(stepAngle);
    const sinStep = Math.sin(stepAngle);
    let c = 0;
    let s = 0;
    for (let j = 0; j < F; j++) {
      if ((j & 63) === 0) {
        const angle = stepAngle * (firstIndex + j);
        c = Math.cos(angle);
        s = Math.sin(angle);
      } else {
        const nc = c * cosStep - s * sinStep;
        s = s * cosStep + c * sinStep;
        c = nc;
      }
      const o = W * j;
      sums[o] += c * c;
      sums[o + 1] += s * s;
      sums[o + 2] += c * s;
      sums[o + 3] += u * c;
      sums[o + 4] += u * s;
      sums[o + 5] += v * c;
      sums[o + 6] += v * s;
    }
  }
  for (let j = 0; j < F; j++) {
    const o = W * j;
    const CC = sums[o];
    const SS = sums[o + 1];
    const CS = sums[o + 2];
    const det = CC * SS - CS * CS;
    const C = sums[o + 3];
    const S = sums[o + 4];
    out[j] = det > 0 ? (0.5 * (SS * C * C - 2 * CS * C * S + CC * S * S)) / det : 0;
    if (two) {
      const C2 = sums[o + 5];
      const S2 = sums[o + 6];
      out2[j] = det > 0 ? (0.5 * (SS * C2 * C2 - 2 * CS * C2 * S2 + CC * S2 * S2)) / det : 0;
    }
  }
  return out;
}
