package io.eigenmill.kmeans;

import io.eigenmill.io.PcaModel;
import io.eigenmill.kmeans.ParallelKMeans.Fitted;
import io.eigenmill.kmeans.math.BackProjection;
import io.eigenmill.math.Moments;
import io.eigenmill.settings.Choices.ClusterSpace;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Comparator;
import java.util.List;

/**
 * Turns the chosen run into the result record: clusters numbered by decreasing size (ties by the centroid's
 * coordinates, so the numbering is reproducible), centroids mapped back to original units
 * ({@link BackProjection}), and per-cluster profiles: the {@link #PROFILE_FEATURES} features with the largest
 * |standardised difference| (cluster mean - overall mean) / overall sd, all three in original units as seen through
 * the back-projection (features whose sd is 0 there are never distinguishing).
 */
final class ClusterProfiles {
  /** Distinguishing features listed per cluster. */
  static final int PROFILE_FEATURES = 5;

  private final BackProjection map;
  private final List<String> features;

  ClusterProfiles(PcaModel model, ClusterSpace space, List<String> pointColumns) {
    int p = pointColumns.size();
    if (model == null) {
      map = BackProjection.identity(p);
      features = pointColumns;
    } else if (space == ClusterSpace.SCORES) {
      map = BackProjection.ofScores(model.means(), model.scales(), model.loadings(), model.d(), p);
      features = model.features();
    } else {
      map = BackProjection.ofFeatures(model.means(), model.scales());
      features = model.features();
    }
  }

  /** True when the sd of a feature needs the covariance of the points (a non-diagonal map), not just variances. */
  boolean needsCovariance() {
    return !map.diagonal();
  }

  /** @param initSample rows of the sample k-means|| ran on, 0 when it ran over all rows */
  ClusterResult result(KChoice choice, PointSummary summary, ClusterSpace space, String entity, List<String> dims,
      int initSample) {
    Fitted f = choice.chosen();
    int k = f.run().k();
    int d = dims.size();
    Integer[] order = new Integer[k];
    for (int c = 0; c < k; c++) {
      order[c] = c;
    }
    double[] cs = f.centroids();
    Arrays.sort(order, Comparator.<Integer>comparingLong(c -> -f.sizes()[c])
        .thenComparing((a, b) -> Arrays.compare(cs, a * d, a * d + d, cs, b * d, b * d + d)));
    long n = summary.moments().count();
    Moments m = summary.moments();
    double[] overall = map.apply(m.mean(), 0);
    double[] sd = map.deviations(needsCovariance() ? m.covariance() : null, m.variances(), d);
    long[] sizes = new long[k];
    double[][] centroids = new double[k][];
    double[][] original = new double[k][];
    List<ClusterResult.Profile> profiles = new ArrayList<>();
    for (int c = 0; c < k; c++) {
      int from = order[c];
      sizes[c] = f.sizes()[from];
      centroids[c] = Arrays.copyOfRange(cs, from * d, from * d + d);
      original[c] = map.apply(centroids[c], 0);
      profiles.add(new ClusterResult.Profile(c, sizes[c], (double) sizes[c] / n,
          distinguishing(original[c], overall, sd)));
    }
    return new ClusterResult(space, entity, k, choice.rule(), f.wcss(), choice.chosenSilhouette(), sizes,
        choice.scores(), List.copyOf(dims), centroids, List.copyOf(features), original, profiles,
        choice.sampleSize(), initSample);
  }

  private List<ClusterResult.FeatureShift> distinguishing(double[] cluster, double[] overall, double[] sd) {
    List<ClusterResult.FeatureShift> all = new ArrayList<>();
    for (int j = 0; j < features.size(); j++) {
      if (sd[j] > 0) {
        all.add(new ClusterResult.FeatureShift(features.get(j), cluster[j], overall[j],
            (cluster[j] - overall[j]) / sd[j]));
      }
    }
    all.sort(Comparator.comparingDouble((ClusterResult.FeatureShift s) -> -Math.abs(s.standardizedDifference())));
    return List.copyOf(all.subList(0, Math.min(PROFILE_FEATURES, all.size())));
  }
}
