package io.eigenmill.monitor;

import io.eigenmill.io.PcaModel;
import io.eigenmill.monitor.math.DriftMoments;
import java.util.ArrayList;
import java.util.List;

/**
 * Turns the moments a scoring pass gathered over new rows ({@link DriftMoments}) into the comparison with the model
 * ({@link DataDriftResult}). Pure, O(d + k) on the driver.
 *
 * <p>The split of the total: a prepared row z is its projection P V^T plus its residual r, orthogonal to each other
 * row by row, so sum_j var(z_j) = sum_c var(p_c) + sum_j var(r_j) (the cross terms sum to zero). The inside share is
 * the scores' variances over the total, the outside share the residuals' variances over the total, each summed from
 * its own columns (the outside is not taken as a difference, which would cancel when the model explains the rows
 * well); the two add to 1 up to rounding.
 */
final class DataDrift {
  private DataDrift() {}

  static DataDriftResult of(PcaModel model, DriftMoments moments) {
    int d = model.d();
    int k = model.k();
    List<DataDriftResult.FeatureDrift> features = new ArrayList<>();
    double total = 0;
    for (int j = 0; j < d; j++) {
      double sd = model.sds()[j];
      double shift = moments.meanShift(j);
      double var = moments.featureVariance(j);
      double scale = model.scales()[j];
      total += var / (scale * scale);
      features.add(new DataDriftResult.FeatureDrift(model.features().get(j), model.means()[j], sd,
          model.means()[j] + shift, Math.sqrt(var), sd > 0 ? shift / sd : 0.0, sd > 0 ? var / (sd * sd) : 1.0));
    }
    List<DataDriftResult.ComponentDrift> components = new ArrayList<>();
    double inside = 0;
    double modelInside = 0;
    double modelTotal = model.totalVariance();
    for (int c = 0; c < k; c++) {
      double lambda = model.eigenvalues()[c];
      double v = moments.scoreVariance(c);
      inside += v;
      modelInside += lambda;
      components.add(new DataDriftResult.ComponentDrift(c + 1, lambda, v, lambda > 0 ? v / lambda : 0.0,
          lambda > 0 ? moments.scoreMean(c) / Math.sqrt(lambda) : 0.0, modelTotal > 0 ? lambda / modelTotal : 0.0,
          total > 0 ? v / total : 0.0));
    }
    double outside = 0;
    for (int j = 0; j < d; j++) {
      outside += moments.residualVariance(j);
    }
    double modelInsideShare = modelTotal > 0 ? Math.min(1.0, modelInside / modelTotal) : 0.0;
    return new DataDriftResult(moments.rows(), model.rows(), features, components, modelTotal, total,
        modelInsideShare, total > 0 ? inside / total : 0.0, 1.0 - modelInsideShare, total > 0 ? outside / total : 0.0);
  }
}
