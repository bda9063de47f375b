/**
 * Orientation-averaged translational diffusion coefficient of a rigid dimer of two touching equal
 * spheres, relative to one sphere: D̄_dimer / D₀ = (1/3)(6πηa)(1/f∥ + 2/f⊥) = 0.718 (±0.003).
 *
 * Source: the axial friction f∥ = 2 × 0.6451 × 6πηa is the touching limit of R. A. Stimson &
 * G. B. Jeffery, Proc. R. Soc. Lond. A 111, 110 (1926); the transverse friction
 * f⊥ = 2 × 0.7247 × 6πηa follows the problem of A. J. Goldman, R. G. Cox & H. Brenner, Chem. Eng.
 * Sci. 21, 1151 (1966); the average D̄ = (k_BT/3)·tr(Ξ_t⁻¹) holds for a symmetric cluster, which
 * has no rotation–translation coupling. Value computed with a bead-shell model (García de la
 * Torre & Bloomfield); see the shared reference notes, estimators.md §8. The cruder Kirkwood–Riseman
 * estimate gives 0.75.
 *
 * A population at ≈ 0.72 D₀ with about twice the single-particle intensity indicates dimers.
 *
 * @example
 * DIMER_DIFFUSION_RATIO * 0.42875 // → 0.308 (µm²/s: a dimer of 1 µm beads in water at 20 °C)
 */
export const DIMER_DIFFUSION_RATIO = 0.718;

/**
 * Orientation-averaged D of a rigid triangular trimer of touching equal spheres, relative to one
 * sphere (bead-shell computation, estimators.md §8; ±0.002).
 *
 * @example
 * TRIANGULAR_TRIMER_DIFFUSION_RATIO * 0.42875 // → 0.264 (µm²/s)
 */
export const TRIANGULAR_TRIMER_DIFFUSION_RATIO = 0.616;

/**
 * Orientation-averaged D of a rigid linear trimer of touching equal spheres, relative to one
 * sphere (bead-shell computation, estimators.md §8; ±0.002).
 *
 * @example
 * LINEAR_TRIMER_DIFFUSION_RATIO * 0.42875 // → 0.248 (µm²/s)
 */
export const LINEAR_TRIMER_DIFFUSION_RATIO = 0.579;
