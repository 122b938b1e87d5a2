package io.eigenmill.report;

import io.eigenmill.kmeans.ClusterResult;
import io.eigenmill.record.RunResult;
import io.eigenmill.settings.Choices.ClusterSpace;
import java.util.ArrayList;
import java.util.List;

/**
 * Clusters: the k-selection table (within-cluster sum of squares, silhouette, Calinski-Harabasz, Davies-Bouldin per
 * k tried), the chosen k, cluster sizes and, per cluster, the features that distinguish it, in original units.
 *
 * @param unit what was clustered, plural: "rows" or "entities (host)"
 */
public record ClusterModel(
    List<Fact> facts,
    int k,
    String unit,
    List<Selection> selection,
    List<Size> sizes,
    List<ProfileView> profiles) {

  /** Distinguishing features listed per cluster. */
  static final int FEATURES_PER_PROFILE = 6;

  public record Selection(int k, double wcss, double silhouette, double calinskiHarabasz, double daviesBouldin,
      boolean chosen, List<String> texts) {}

  public record Size(int cluster, long size, String sizeText, String shareText) {}

  public record Shift(String feature, String clusterMean, String overallMean, double standardized,
      String standardizedText) {}

  public record ProfileView(int cluster, String title, List<Shift> shifts) {}

  /** Where k-means|| ran: all the points clustered, or a seeded sample of them; or the driver's restarts. */
  static String startingCentroids(ClusterResult c) {
    String what = c.entity().isEmpty() ? "rows" : "entities";
    long clustered = java.util.Arrays.stream(c.sizes()).sum();
    ClusterResult.Restarts r = chosenRestarts(c);
    if (r != null && r.onDriver()) {
      return "k-means++ restarts on the driver over all " + Fmt.count(clustered) + " " + what + ", each refined by"
          + " Lloyd iterations and single-point moves (Hartigan-Wong); the best confirmed by Lloyd passes over all"
          + " of them";
    }
    String on = c.initSample() == 0 || c.initSample() >= clustered ? "all " + Fmt.count(clustered) + " " + what
        : "a seeded sample of " + Fmt.count(c.initSample()) + " of the " + Fmt.count(clustered) + " " + what;
    return "k-means|| on " + on + ", then Lloyd iterations over all of them";
  }

  static ClusterModel of(RunResult run) {
    ClusterResult c = run.clusters();
    if (c == null) {
      return null;
    }
    String unit = c.entity().isEmpty() ? "rows" : "entities (" + c.entity() + ")";
    List<Fact> facts = new ArrayList<>(List.of(
        new Fact("Clustered", unit + ", in the " + (c.space() == ClusterSpace.SCORES ? "PCA score space"
            : "prepared feature space") + " (" + String.join(", ", c.dimensions()) + ")"),
        new Fact("Clusters (k)", Fmt.count(c.k())),
        new Fact("How k was chosen", c.selectionRule()),
        new Fact("Within-cluster sum of squares", Fmt.num(c.wcss())),
        new Fact("Silhouette", Fmt.num(c.silhouette(), 3) + " (exact, on a seeded sample of "
            + Fmt.count(c.silhouetteSample()) + " " + (c.entity().isEmpty() ? "rows" : "entities") + ")"),
        new Fact("Starting centroids", startingCentroids(c))));
    ClusterResult.Restarts chosen = chosenRestarts(c);
    if (chosen != null) {
      facts.add(new Fact("Restarts (k = " + c.k() + ")", restartsText(chosen)));
    }
    List<Selection> selection = new ArrayList<>();
    for (ClusterResult.KScore s : c.selection()) {
      selection.add(new Selection(s.k(), s.wcss(), s.silhouette(), s.calinskiHarabasz(), s.daviesBouldin(),
          s.k() == c.k(), List.of(Fmt.count(s.k()), Fmt.num(s.wcss()), Fmt.num(s.silhouette(), 3),
              Fmt.num(s.calinskiHarabasz()), Fmt.num(s.daviesBouldin(), 3), restartCount(s.restarts()),
              restartSpread(s.restarts()))));
    }
    List<Size> sizes = new ArrayList<>();
    for (int i = 0; i < c.sizes().length; i++) {
      sizes.add(new Size(i, c.sizes()[i], Fmt.count(c.sizes()[i]), share(c, i)));
    }
    List<ProfileView> profiles = new ArrayList<>();
    for (ClusterResult.Profile p : c.profiles()) {
      profiles.add(profile(p, unit));
    }
    return new ClusterModel(facts, c.k(), unit, selection, sizes, profiles);
  }

  /** The restarts of the chosen k, or null when not known. */
  static ClusterResult.Restarts chosenRestarts(ClusterResult c) {
    for (ClusterResult.KScore s : c.selection()) {
      if (s.k() == c.k()) {
        return s.restarts();
      }
    }
    return null;
  }

  /** E.g. "120 restarts, 10 reached the lowest within-cluster sum of squares; min / median / max 1.2 / 1.3 / 2". */
  static String restartsText(ClusterResult.Restarts r) {
    return Fmt.count(r.run()) + (r.onDriver() ? " restarts on the driver" : " k-means|| restarts") + ", "
        + Fmt.count(r.atBest()) + " reached the lowest within-cluster sum of squares (within 1e-9 relative);"
        + " their within-cluster sums of squares, min / median / max: " + restartSpread(r);
  }

  /** "at best / run", e.g. "10 / 120"; "-" when not known. */
  static String restartCount(ClusterResult.Restarts r) {
    return r == null ? "-" : Fmt.count(r.atBest()) + " / " + Fmt.count(r.run());
  }

  static String restartSpread(ClusterResult.Restarts r) {
    return r == null ? "-" : Fmt.num(r.min()) + " / " + Fmt.num(r.median()) + " / " + Fmt.num(r.max());
  }

  private static String share(ClusterResult c, int cluster) {
    for (ClusterResult.Profile p : c.profiles()) {
      if (p.cluster() == cluster) {
        return Fmt.percent(p.share(), 1);
      }
    }
    return "";
  }

  private static ProfileView profile(ClusterResult.Profile p, String unit) {
    List<Shift> shifts = new ArrayList<>();
    for (int i = 0; i < Math.min(FEATURES_PER_PROFILE, p.distinguishing().size()); i++) {
      ClusterResult.FeatureShift f = p.distinguishing().get(i);
      shifts.add(new Shift(f.feature(), Fmt.num(f.clusterMean()), Fmt.num(f.overallMean()),
          f.standardizedDifference(), signed(f.standardizedDifference())));
    }
    String title = "Cluster " + p.cluster() + " — " + Fmt.count(p.size()) + " " + unit.split(" ")[0] + " ("
        + Fmt.percent(p.share(), 1) + ")";
    return new ProfileView(p.cluster(), title, shifts);
  }

  /** "+1.23" or "-0.456": the sign is the point of a standardised difference. */
  static String signed(double v) {
    String s = Fmt.num(v, 3);
    return v > 0 ? "+" + s : s;
  }

  /** True when more than one k was tried, so the selection curves say something. */
  public boolean hasCurves() {
    return selection.size() > 1;
  }
}
