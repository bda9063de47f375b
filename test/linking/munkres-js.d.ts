// Minimal ambient types for the dev dependency munkres-js (ships no types); tests only.
declare module 'munkres-js' {
  /** Returns [row, column] pairs of an optimal assignment; rectangular input is padded with 0. */
  function computeMunkres(costMatrix: number[][], options?: { padValue?: number }): [number, number][];
  export default computeMunkres;
}
