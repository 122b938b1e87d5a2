package io.eigenmill.bench;

import java.util.List;
import java.util.Optional;

/**
 * What the main benchmark measured on one table.
 *
 * @param cases one entry per case run, in the fixed case order
 * @param accuracy one entry per PCA method run (ours, then the engine's)
 * @param kmeans the quality of both k-means runs; null when neither ran
 * @param ratios every ratio whose cases ran, with its target when it has one
 */
public record MainResult(BenchTable table, List<CaseResult> cases, List<MethodAccuracy> accuracy,
    KMeansQuality kmeans, List<Ratio> ratios) {

  /**
   * @param notes facts of the last repetition worth printing beside the time (passes, rows, read path)
   */
  public record CaseResult(BenchCase which, Timing timing, String notes) {}

  /**
   * @param leadingShares variance shares of the first components
   * @param largestAngle largest principal angle (radians) between this method's k = 10 loadings and the covariance
   *     method's; NaN for the covariance method itself, or when not comparable
   * @param largestLeadingAngle the same for the first {@code leadingShares.length} components only
   * @param gapAfterK eigenvalue k over eigenvalue k + 1 of this method's spectrum (NaN when unknown): close to 1,
   *     the k-th direction is nearly degenerate and any method's k-dimensional subspace is ill-determined there
   * @param scaled false for the engine's PCA, which works on unscaled features
   */
  public record MethodAccuracy(String method, double[] leadingShares, double largestAngle, double largestLeadingAngle,
      double gapAfterK, boolean scaled) {}

  /**
   * @param ours within-cluster sum of squares of our k-means (NaN when it did not run)
   * @param builtin the engine's {@code summary().trainingCost()} (NaN when it did not run)
   * @param ourPasses passes over the cached points of our run
   * @param builtinIterations the engine's {@code summary().numIter()}
   */
  public record KMeansQuality(double ours, double builtin, int ourPasses, int builtinIterations) {}

  public Optional<CaseResult> result(BenchCase which) {
    return cases.stream().filter(c -> c.which() == which).findFirst();
  }

  public Optional<MethodAccuracy> accuracyOf(String method) {
    return accuracy.stream().filter(a -> a.method().equals(method)).findFirst();
  }
}
