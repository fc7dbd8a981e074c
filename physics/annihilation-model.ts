/**
 * The interface between the cross-section stage (physics/annihilation.ts) and its consumers: the
 * thermal average for freeze-out (physics/relic) and the halo average for indirect detection
 * (physics/indirect). It describes the annihilation of one initial pair, chi chibar for Dirac and
 * chi chi for Majorana dark matter, as a function of the Mandelstam s.
 *
 * Conventions (shared physics notes indirect.md A1, A6): sigma(s) is the total cross section of the
 * initial pair summed over open final states; sigma*v_Mol(s) = 2 beta_chi sigma(s) with
 * beta_chi = sqrt(1 - 4 m_chi^2 / s). Natural units, GeV^-2 for cross sections.
 */

export interface AnnihilationChannel {
  /** final state: a fermion name from physics/constants ('b', 'tau', ...) or 'med_med' for two mediators */
  readonly name: string;
  /** sqrt(s) at which the channel opens, GeV */
  readonly thresholdGeV: number;
}

export interface Pole {
  /** sqrt(s) of the s-channel pole (the mediator mass), GeV */
  readonly massGeV: number;
  /** total width used in the propagator, GeV */
  readonly widthGeV: number;
}

export interface Annihilation {
  readonly mChiGeV: number;
  readonly channels: readonly AnnihilationChannel[];
  /** total sigma(s) of the initial pair, GeV^-2; zero below 4 m_chi^2 */
  sigmaTotalGeV2(sGeV2: number): number;
  /**
   * sigma*v_Mol(s) per channel in GeV^-2, written into out (length channels.length, same order);
   * returns the sum over channels.
   */
  sigmaVByChannelGeV2(sGeV2: number, out: Float64Array): number;
  /** s-channel poles at sqrt(s) > 2 m_chi, for splitting integrals (empty when the pole lies below threshold) */
  readonly poles: readonly Pole[];
  /**
   * Optional: s-channel poles at 0 < sqrt(s) <= 2 m_chi (mediator at or below twice the dark-matter
   * mass; it matters when close). sigma(s) has no peak in the physical region, but its complex singularity at
   * s = M^2 +- i M Gamma lies close to threshold, so sigma varies on the scale |2 m_chi - M| + Gamma/2
   * there; the thermal average refines its rule towards threshold when this is much smaller than T.
   * Absent or empty when there is none.
   */
  readonly subthresholdPoles?: readonly Pole[];
  /** sqrt(s) values above 2 m_chi where a channel opens, sorted, GeV */
  readonly thresholdsGeV: readonly number[];
}
