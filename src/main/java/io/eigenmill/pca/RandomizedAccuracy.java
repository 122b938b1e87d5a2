package io.eigenmill.pca;

import io.eigenmill.pca.math.RitzAccuracy;

/**
 * How accurate the randomized method says its fit is ({@link RitzAccuracy}, from the last pass's residuals), the
 * target it was held to and what reaching it cost.
 *
 * @param figures residuals, bound, captured variance and direction estimates of the kept components
 * @param tolerance {@code reduce.randomized.tolerance}: the bound ||R_k||_2 / theta_1 the fit aims for
 * @param targetMet the final bound is at most the tolerance
 * @param powerIterationsSet {@code reduce.randomized.power-iterations}: the iterations always run
 * @param powerIterationsRun the iterations run (each one pass over the data)
 * @param maxPowerIterations {@code reduce.randomized.max-power-iterations}: the cap on the iterations run
 * @param boundByPass the bound after each randomized pass, first to last (pass i worked on i - 1 iterations)
 */
public record RandomizedAccuracy(RitzAccuracy figures, double tolerance, boolean targetMet, int powerIterationsSet,
    int powerIterationsRun, int maxPowerIterations, double[] boundByPass) implements java.io.Serializable {

  /** Power iterations (and passes) added to reach the tolerance. */
  public int extraPasses() {
    return powerIterationsRun - powerIterationsSet;
  }
}
