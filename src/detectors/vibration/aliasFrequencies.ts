/**
 * Candidate true frequencies of a line seen at the (baseband) frequency `observedHz` when
 * sampling at `samplingHz`: {k·f_s − f_a, k·f_s + f_a} for k = 1, 2, …, up to `limitHz`
 * (sampling theorem: every such frequency gives the same samples), ascending, without the
 * observed frequency itself. O(limit/f_s).
 *
 * @param observedHz observed frequency f_a in [0, f_s/2], Hz
 * @param samplingHz sampling rate f_s = 1/Δt, Hz
 * @param limitHz highest candidate to list, Hz
 * @example
 * aliasFrequencies(30, 100, 250); // → [70, 130, 170, 230]
 */
export function aliasFrequencies(observedHz: number, samplingHz: number, limitHz: number): number[] {
  if (!(samplingHz > 0) || !(observedHz >= 0) || observedHz > samplingHz / 2 + 1e-12) {
    throw new RangeError('aliasFrequencies requires 0 <= observedHz <= samplingHz/2');
  }
  const out: number[] = [];
  for (let k = 1; k * samplingHz - observedHz <= limitHz; k++) {
    const low = k * samplingHz - observedHz;
    const high = k * samplingHz + observedHz;
    // At f_a = 0 or f_a = f_s/2 neighbouring candidates coincide: list each frequency once.
    const last = out.length === 0 ? observedHz : out[out.length - 1];
    if (low - last > 1e-9) out.push(low);
    if (high <= limitHz && high - low > 1e-9) out.push(high);
  }
  return out;
}

/**
 * The baseband frequency at which a line at `trueHz` appears when sampled at `samplingHz`:
 * f_a = |f_v − f_s·round(f_v/f_s)|, in [0, f_s/2]. O(1).
 *
 * @example
 * aliasedFrequency(130, 100); // → 30
 */
export function aliasedFrequency(trueHz: number, samplingHz: number): number {
  return Math.abs(trueHz - samplingHz * Math.round(trueHz / samplingHz));
}
