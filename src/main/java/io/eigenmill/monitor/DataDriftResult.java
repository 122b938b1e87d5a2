package io.eigenmill.monitor;

import java.util.List;

/**
 * How the rows an apply job scored differ from the data the model was fitted on, from the moments gathered in the
 * scoring pass ({@link DataDrift}): per feature, the new mean and variance against the model's; per component, the
 * variance of the new scores against the model's eigenvalue; and how the new data's total (prepared) variance splits
 * between the model's subspace and the rest, against the model's own split.
 *
 * @param rows rows scored (after missing values were dropped or imputed; imputed cells hold the model mean)
 * @param modelRows rows the model was fitted on
 * @param features one entry per model feature, in model order
 * @param components one entry per retained component
 * @param modelTotalVariance the model's total variance in prepared units (sum of all eigenvalues, or the trace)
 * @param newTotalVariance the new rows' total variance in prepared units: sum_j var(x_j) / scale_j^2
 * @param modelInsideShare the model's cumulative explained-variance ratio at k
 * @param newInsideShare the new rows' variance in the model's subspace (sum of the scores' variances) over their total
 * @param modelOutsideShare the model's discarded share, 1 - modelInsideShare
 * @param newOutsideShare the new rows' variance outside the subspace (sum of the residuals' variances) over their total
 */
public record DataDriftResult(
    long rows,
    long modelRows,
    List<FeatureDrift> features,
    List<ComponentDrift> components,
    double modelTotalVariance,
    double newTotalVariance,
    double modelInsideShare,
    double newInsideShare,
    double modelOutsideShare,
    double newOutsideShare) {

  /**
   * @param meanShiftSd (new mean - model mean) / model sd
   * @param varianceRatio new variance / model variance (both sample variances, n - 1)
   */
  public record FeatureDrift(String feature, double modelMean, double modelSd, double newMean, double newSd,
      double meanShiftSd, double varianceRatio) {}

  /**
   * @param component 1-based
   * @param eigenvalue the model's variance of this score
   * @param newVariance the sample variance of this score over the new rows
   * @param varianceRatio newVariance / eigenvalue
   * @param scoreMeanSd the new rows' mean score over sqrt(eigenvalue) (the fitted rows' mean score is 0)
   * @param modelShare eigenvalue / model total variance
   * @param newShare newVariance / new total variance
   */
  public record ComponentDrift(int component, double eigenvalue, double newVariance, double varianceRatio,
      double scoreMeanSd, double modelShare, double newShare) {}

  /** The total variance of the new rows over the model's. */
  public double totalVarianceRatio() {
    return modelTotalVariance > 0 ? newTotalVariance / modelTotalVariance : 0.0;
  }
}
