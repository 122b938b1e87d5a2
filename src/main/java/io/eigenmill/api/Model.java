package io.eigenmill.api;

import io.eigenmill.io.PcaModel;
import java.util.List;

/**
 * A fitted or applied principal component model as plain Java values, copied from the job's model: the same numbers
 * the model folder holds ({@code model/}), so that a caller needs no Spark to read them.
 *
 * @param features the feature columns, in the model's order (d of them)
 * @param scaling {@code none} or {@code standardize}
 * @param rows the rows the model was fitted on
 * @param means the feature means (d)
 * @param scales the scales each centred feature was divided by (d; all 1 without scaling)
 * @param k the components kept
 * @param loadings {@code loadings[c][j]}: component c (0-based, descending eigenvalue), feature j; unit length,
 *     signed so that each component's entry of largest absolute value is positive
 * @param eigenvalues the variances of the components computed, descending (denominator n - 1): every one with
 *     the covariance and TSQR methods, the first k + oversample with the randomized method
 * @param totalVariance the sum of every eigenvalue (the prepared features' total variance)
 */
public record Model(List<String> features, String scaling, long rows, double[] means, double[] scales, int k,
    double[][] loadings, double[] eigenvalues, double totalVariance) {

  static Model of(PcaModel m) {
    double[][] loadings = new double[m.k()][m.d()];
    for (int c = 0; c < m.k(); c++) {
      for (int j = 0; j < m.d(); j++) {
        loadings[c][j] = m.loading(j, c);
      }
    }
    return new Model(List.copyOf(m.features()), m.scaling(), m.rows(), m.means().clone(), m.scales().clone(), m.k(),
        loadings, m.eigenvalues().clone(), m.totalVariance());
  }

  /** The share of the total variance each component of {@link #eigenvalues} explains. */
  public double[] explainedVarianceShares() {
    double[] out = new double[eigenvalues.length];
    for (int c = 0; c < out.length; c++) {
      out[c] = eigenvalues[c] / totalVariance;
    }
    return out;
  }
}
