/** Temperature dependence of band gaps. */
import type { Num } from './num'
import { map4, check, nonNegative } from './broadcast'

/**
 * Varshni's empirical band-gap temperature dependence, Eg(T) = Eg0 − a·T²/(T + b).
 *
 * - `T`: temperature, K (≥ 0); `Eg0`: gap at 0 K, J; `a`: J/K (the α of the tables, often given in meV/K);
 *   `b`: K (the β of the tables, roughly the Debye temperature; T + b > 0)
 * - result: band gap, J
 *
 * Source: Y. P. Varshni, Physica 34, 149 (1967); parameters for III–V compounds in I. Vurgaftman, J. R. Meyer,
 * L. R. Ram-Mohan, J. Appl. Phys. 89, 5815 (2001).
 *
 * @example varshni(300, 1.519 eV, 0.5405 meV/K, 204) (GaAs, Vurgaftman 2001) → 1.519 − 0.5405e-3·300²/504 eV
 *   = 1.42248 eV (2.279068e-19 J)
 */
export function varshni(T: Num, Eg0: Num, a: Num, b: Num): Num {
  check('varshni', 'the temperature T', T, nonNegative, 'zero or positive (kelvin)')
  return map4(T, Eg0, a, b, (t, e0, aa, bb) => e0 - (aa * t * t) / (t + bb))
}
