/**
 * Why a window's fit was accepted or rejected. The string is what
 * `WindowResult.status` stores; a rejected fit carries no fitted numbers.
 */
export const FIT_STATUS = {
  /** fit converged and passed every check */
  ok: 'ok',
  /** t, y, mask or weights of different lengths, or a bad option */
  badInput: 'bad-input',
  /** a NaN/Infinity among the unmasked samples (or their weights) */
  nonFiniteInput: 'non-finite-input',
  /** fewer usable samples than the model needs (default minimum 20) */
  tooFewSamples: 'too-few-samples',
  /** the window spans fewer periods than `minPeriods` */
  tooFewPeriods: 'too-few-periods',
  /** the FFT found no spectral peak standing above the noise */
  noOscillation: 'no-oscillation',
  /** the fitted amplitude is not significant (below 5 σ or below the noise floor) */
  amplitudeBelowNoise: 'amplitude-below-noise',
  /** the iteration did not meet its convergence rule within the iteration limit */
  didNotConverge: 'did-not-converge',
  /** the fitted period left the searched band or moved far from the seed */
  periodOutsideWindow: 'period-outside-window',
  /** the amplitude grows significantly (rate < −3 σ) or the motion is overdamped (Q < 0.5) */
  decayUnphysical: 'decay-unphysical',
  /** the normal matrix is singular: parameters not identifiable from these samples */
  singular: 'singular-matrix',
  /** the residuals exceed what the readout and the thermally driven motion leave by more than 100× in variance, and a tenth of the swing: the model does not describe the data */
  residualExcess: 'residual-excess',
  /**
   * the analysis threw (a program fault, not a property of the data): the window is kept unfitted
   * and the run goes on; the message is in the run's `internal-error` event for this window
   */
  internalError: 'internal-error',
} as const;

/** One of the FIT_STATUS strings. */
export type FitStatus = (typeof FIT_STATUS)[keyof typeof FIT_STATUS];
