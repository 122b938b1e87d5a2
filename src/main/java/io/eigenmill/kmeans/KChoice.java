package io.eigenmill.kmeans;

import io.eigenmill.kmeans.ParallelKMeans.Fitted;
import io.eigenmill.kmeans.math.ClusterQuality;
import io.eigenmill.settings.Choices.KSelection;
import io.eigenmill.settings.JobSettings;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.TreeMap;

/**
 * The best run of each k (lowest within-cluster sum of squares; ties to the lower restart), its quality measures and the choice of k.
 * Calinski-Harabasz and Davies-Bouldin use every point (from the Lloyd pass of the reported state); the silhouette
 * is exact on the seeded sample, each sampled point labelled by its nearest centroid. With a range, k is the best
 * by {@code cluster.select-by} (silhouette and Calinski-Harabasz: largest; Davies-Bouldin: smallest), ties and
 * undefined values going to the smaller k; a fixed k is simply reported.
 */
final class KChoice {
  private final List<Fitted> best;
  private final int restarts;
  private final double[] silhouette;
  private final double[] calinskiHarabasz;
  private final double[] daviesBouldin;
  private final int chosen;
  private final String rule;
  private final int sampleSize;
  private final Map<Integer, ParallelKMeans.Spread> spread = new TreeMap<>();

  private KChoice(List<Fitted> best, int restarts, double[] silhouette, double[] ch, double[] db, int chosen,
      String rule, int sampleSize) {
    this.best = best;
    this.restarts = restarts;
    this.silhouette = silhouette;
    this.calinskiHarabasz = ch;
    this.daviesBouldin = db;
    this.chosen = chosen;
    this.rule = rule;
    this.sampleSize = sampleSize;
  }

  static KChoice of(JobSettings.Cluster s, List<Fitted> fitted, PointSummary summary, double totalSs, int d,
      List<ParallelKMeans.Spread> restarts) {
    KChoice c = of(s, fitted, summary, totalSs, d);
    for (ParallelKMeans.Spread sp : restarts) {
      c.spread.put(sp.k(), sp);
    }
    return c;
  }

  private static KChoice of(JobSettings.Cluster s, List<Fitted> fitted, PointSummary summary, double totalSs,
      int d) {
    Map<Integer, Fitted> byK = new TreeMap<>();
    for (Fitted f : fitted) {
      Fitted held = byK.get(f.run().k());
      if (held == null || f.wcss() < held.wcss()) {
        byK.put(f.run().k(), f);
      }
    }
    List<Fitted> best = new ArrayList<>(byK.values());
    int q = best.size();
    long n = summary.moments().count();
    double[] sample = summary.samplePoints();
    int m = summary.sampleSize();
    int[][] labels = new int[q][];
    int[] ks = new int[q];
    double[] ch = new double[q];
    double[] db = new double[q];
    for (int i = 0; i < q; i++) {
      Fitted f = best.get(i);
      ks[i] = f.run().k();
      labels[i] = ClusterQuality.labels(sample, m, d, f.centroids(), ks[i]);
      ch[i] = ClusterQuality.calinskiHarabasz(totalSs, f.wcss(), n, ks[i]);
      db[i] = ClusterQuality.daviesBouldin(f.centroids(), f.meanDistances(), f.sizes(), ks[i], d);
    }
    double[] sil = ClusterQuality.silhouettes(sample, m, d, labels, ks);
    if (s.k().isPresent()) {
      return new KChoice(best, s.restarts(), sil, ch, db, 0, "cluster.k = " + s.k().getAsInt() + " (fixed)", m);
    }
    double[] by = s.selectBy() == KSelection.SILHOUETTE ? sil
        : s.selectBy() == KSelection.CALINSKI_HARABASZ ? ch : db;
    boolean larger = s.selectBy() != KSelection.DAVIES_BOULDIN;
    int pick = -1;
    for (int i = 0; i < q; i++) {
      if (!Double.isNaN(by[i]) && (pick < 0 || (larger ? by[i] > by[pick] : by[i] < by[pick]))) {
        pick = i;
      }
    }
    String rule = s.selectBy().word() + " (" + (larger ? "largest" : "smallest") + ") over k = " + s.kMin() + ".."
        + s.kMax();
    if (pick < 0) {
      pick = 0;
      rule = s.selectBy().word() + " is undefined for every k in " + s.kMin() + ".." + s.kMax()
          + "; reported the smallest k";
    }
    return new KChoice(best, s.restarts(), sil, ch, db, pick, rule, m);
  }

  Fitted chosen() {
    return best.get(chosen);
  }

  double chosenSilhouette() {
    return silhouette[chosen];
  }

  String rule() {
    return rule;
  }

  int sampleSize() {
    return sampleSize;
  }

  List<ClusterResult.KScore> scores() {
    List<ClusterResult.KScore> out = new ArrayList<>();
    for (int i = 0; i < best.size(); i++) {
      Fitted f = best.get(i);
      ParallelKMeans.Spread sp = spread.get(f.run().k());
      ClusterResult.Restarts restarts = sp == null ? null
          : new ClusterResult.Restarts(sp.run(), sp.atBest(), sp.min(), sp.median(), sp.max(), sp.onDriver());
      out.add(new ClusterResult.KScore(f.run().k(), f.wcss(), silhouette[i], calinskiHarabasz[i],
          daviesBouldin[i], restarts));
    }
    return out;
  }

  List<long[]> bestSizes() {
    List<long[]> out = new ArrayList<>();
    for (Fitted f : best) {
      out.add(f.sizes().clone());
    }
    return out;
  }

  /** Sentences about the reported runs: stopped by the iteration cap, empty clusters re-seeded. */
  List<String> notes(JobSettings.Cluster s) {
    List<String> out = new ArrayList<>();
    for (Fitted f : best) {
      if (!f.converged()) {
        ParallelKMeans.Spread sp = spread.get(f.run().k());
        out.add(String.format(Locale.ROOT, "k = %d: the best of %d restarts stopped at cluster.max-iterations = %d"
            + " with a centroid still moving more than cluster.tolerance = %g times the data's RMS radius;"
            + " raise cluster.max-iterations", f.run().k(), sp == null ? restarts : sp.run(), s.maxIterations(),
            s.tolerance()));
      }
      if (f.reseeds() > 0) {
        out.add("k = " + f.run().k() + ": the best restart re-seeded " + f.reseeds() + " empty cluster"
            + (f.reseeds() > 1 ? "s" : "") + " with the point farthest from its centroid");
      }
    }
    return out;
  }
}
