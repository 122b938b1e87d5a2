package io.eigenmill.report;

import io.eigenmill.monitor.ReconstructionResult;
import io.eigenmill.record.RunResult;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;

/**
 * Compression: how well k components reconstruct each feature, in the feature's original units. Features are listed
 * from the least to the best reconstructed (variance kept ascending), so the ones to look at come first; wide models
 * list the {@link #MAX_FEATURES} least reconstructed.
 */
public record CompressionModel(int k, String rows, List<Feature> features, int featuresTotal) {

  /** Features listed: the least reconstructed ones. */
  static final int MAX_FEATURES = 60;

  public record Feature(String name, double varianceKept, String rmse, String maxAbsError, String varianceKeptText) {}

  static CompressionModel of(RunResult run) {
    ReconstructionResult r = run.reconstruction();
    if (r == null) {
      return null;
    }
    List<Feature> features = new ArrayList<>();
    for (ReconstructionResult.FeatureError e : r.features()) {
      features.add(new Feature(e.feature(), e.varianceKept(), Fmt.num(e.rmse()), Fmt.num(e.maxAbsError()),
          Fmt.percent(e.varianceKept(), 1)));
    }
    features.sort(Comparator.comparingDouble(Feature::varianceKept));
    return new CompressionModel(r.k(), Fmt.count(r.rows()),
        List.copyOf(features.subList(0, Math.min(MAX_FEATURES, features.size()))), features.size());
  }
}
