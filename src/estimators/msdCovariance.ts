/**
 * Exact covariance matrix of the time-averaged MSD of one axis at lags 1..maxLag, for free
 * diffusion with Gaussian localization error and motion blur, in units of (2DΔt)².
 *
 * Derivation (our own, following the approach of Qian, Sheetz & Elson, Biophys. J. 60, 910,
 * 1991, and Michalet, Phys. Rev. E 82, 041914, 2010). In units of 2DΔt the steps have the
 * tridiagonal covariance c₀ = 1 + x, c₁ = −x/2 (x = σ²/(DΔt) − 2R), which is that of a unit
 * random walk plus a position "noise" of variance x/2. A lag-n displacement starting at frame i
 * covers steps (i, i + n]; two displacements (i, n) and (j = i + s, m) therefore have covariance
 *
 *   C(s) = overlap((0, n], (s, s + m]) + (x/2)·([s = 0] + [s = n − m] − [s = −m] − [s = n]).
 *
 * For Gaussian variables Cov(a², b²) = 2·Cov(a, b)² (Isserlis), so with K_n = N − n
 *
 *   Cov(ρ_n, ρ_m) = 2/(K_n·K_m) · Σ_s count(s)·C(s)²,
 *   count(s) = #{i : 0 ≤ i < K_n, 0 ≤ i + s < K_m}.
 *
 * C(s) vanishes outside |s| ≤ n + m, so each entry costs O(n + m) and the matrix O(maxLag³),
 * independent of N. ⟨ρ_n⟩ = n + x in the same units. At x = 0 the diagonal reproduces the
 * Qian, Sheetz & Elson relative variance (see {@link qianRelativeVariance}).
 *
 * @param x reduced error σ²/(DΔt) − 2R (≥ −1/2 for a valid covariance; −1/3 is blur alone).
 * @param framesN N, number of frames (equally spaced, ≥ 2).
 * @param maxLag largest lag (1 ≤ maxLag ≤ N − 1).
 * @returns row-major maxLag × maxLag Float64Array; entry [(n − 1)·maxLag + (m − 1)] is
 *   Cov(ρ_n, ρ_m)/(2DΔt)².
 * @throws RangeError for an invalid N or maxLag, or a non-finite x.
 *
 * @example
 * msdCovariance(0, 50, 1)[0] * 49 / 1 // → 2 (1-D: Var(ρ₁)/⟨ρ₁⟩² = 2/K)
 */
export function msdCovariance(x: number, framesN: number, maxLag: number): Float64Array {
  if (!Number.isFinite(x)) throw new RangeError('msdCovariance requires a finite x');
  if (!Number.isInteger(framesN) || framesN < 2) throw new RangeError('msdCovariance requires an integer framesN >= 2');
  if (!Number.isInteger(maxLag) || maxLag < 1 || maxLag > framesN - 1) {
    throw new RangeError('msdCovariance requires an integer maxLag in [1, framesN - 1]');
  }
  const covariance = new Float64Array(maxLag * maxLag);
  const halfX = x / 2;
  for (let n = 1; n <= maxLag; n++) {
    const countN = framesN - n;
    for (let m = n; m <= maxLag; m++) {
      const countM = framesN - m;
      let sum = 0;
      for (let s = -(n + m); s <= n + m; s++) {
        const count = Math.min(countN, countM - s) - Math.max(0, -s);
        if (count <= 0) continue;
        const overlap = Math.max(0, Math.min(n, s + m) - Math.max(0, s));
        let noise = 0;
        if (s === 0) noise += 1;
        if (s === n - m) noise += 1;
        if (s === -m) noise -= 1;
        if (s === n) noise -= 1;
        const c = overlap + halfX * noise;
        sum += count * c * c;
      }
      const value = (2 * sum) / (countN * countM);
      covariance[(n - 1) * maxLag + (m - 1)] = value;
      covariance[(m - 1) * maxLag + (n - 1)] = value;
    }
  }
  return covariance;
}
