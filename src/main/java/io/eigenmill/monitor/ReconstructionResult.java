package io.eigenmill.monitor;

import java.util.List;

/** How well k components reconstruct each feature, in the feature's original units. */
public record ReconstructionResult(int k, long rows, List<FeatureError> features) {

  /**
   * @param rmse root mean squared reconstruction error (original units)
   * @param maxAbsError largest absolute error over the rows
   * @param varianceKept 1 - (residual variance / feature variance): the share of the feature's variance kept
   */
  public record FeatureError(String feature, double rmse, double maxAbsError, double varianceKept) {}
}
