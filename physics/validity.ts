/**
 * Model-level validity flags: where the simplified-model treatment itself stops being trustworthy,
 * independently of the numerics. Stage-specific flags (velocity-suppressed direct detection,
 * approximate photon yields, ...) come from the stages themselves.
 *
 * - nonperturbative: a coupling above sqrt(4 pi), the usual perturbative-unitarity rule of thumb
 *   (common practice, no source). For spin-0 mediators the effective quark coupling is
 *   c_q = g_q m_q / v <= 0.7 g_q (top quark), so checking g_q itself is the stricter test.
 * - broad_mediator: Gamma/M > 0.3. A fixed-width Breit-Wigner and the narrow-width picture are no
 *   longer adequate (shared physics notes indirect.md A5; LHC DM working group practice, Abdallah et
 *   al. 2015, Phys. Dark Univ. 9-10, 8, from memory).
 * - axial_unitarity: an axial-vector mediator coupled to a massive fermion violates perturbative
 *   unitarity unless m_chi < sqrt(pi/2) m_med / g_chi (Kahlhoefer, Schmidt-Hoberg, Schwetz & Vogl 2016,
 *   JHEP 02, 016, from memory); the longitudinal mode makes chi chibar -> A A grow as 1/m_med^4.
 * - hadronic_threshold: m_chi below 5 GeV with quark channels open. Annihilation into free quarks is
 *   then an approximation to exclusive hadronic final states (sqrt(s) ~ 2 m_chi below ~10 GeV, the
 *   region of hadronic resonances); relic and photon yields there carry O(1) uncertainty
 *   (common practice, no source).
 */
import type { ModelPoint } from './model.js';

/** sqrt(4 pi): perturbativity bound on a dimensionless coupling (common practice, no source). */
export const PERTURBATIVE_COUPLING_MAX = Math.sqrt(4 * Math.PI);
/** Gamma/M above which the mediator counts as broad (indirect.md A5). */
export const BROAD_WIDTH_RATIO = 0.3;
/** m_chi below which quark-level final states are flagged, GeV (common practice, no source). */
export const HADRONIC_THRESHOLD_GEV = 5;

export function validityFlags(point: ModelPoint, widthMedGeV: number): string[] {
  const flags: string[] = [];
  if (Math.max(point.g_chi, point.g_q, point.g_l) > PERTURBATIVE_COUPLING_MAX) flags.push('nonperturbative');
  if (widthMedGeV / point.m_med > BROAD_WIDTH_RATIO) flags.push('broad_mediator');
  if (point.mediator === 'axial' && point.m_chi > Math.sqrt(Math.PI / 2) * (point.m_med / point.g_chi)) {
    flags.push('axial_unitarity');
  }
  if (point.m_chi < HADRONIC_THRESHOLD_GEV && point.g_q > 0) flags.push('hadronic_threshold');
  return flags;
}
