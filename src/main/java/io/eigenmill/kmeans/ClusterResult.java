package io.eigenmill.kmeans;

import io.eigenmill.settings.Choices.ClusterSpace;
import java.util.List;

/**
 * The outcome of clustering rows or entities: the k-selection table, the chosen k and its quality, sizes,
 * centroids (in the clustered space and in original feature units) and per-cluster profiles.
 *
 * @param space the clustered space (written as its word, "scores" or "features")
 * @param entity the entity column clustered instead of rows, or "" for rows
 * @param selection one entry per k tried (one entry when k was fixed)
 * @param silhouetteSample rows in the seeded sample the silhouette was computed on (exact, Euclidean)
 * @param initSample rows in the seeded sample k-means|| chose the starting centroids on; 0 when it ran over all
 *     rows
 */
public record ClusterResult(
    ClusterSpace space,
    String entity,
    int k,
    String selectionRule,
    double wcss,
    double silhouette,
    long[] sizes,
    List<KScore> selection,
    List<String> dimensions,
    double[][] centroids,
    List<String> features,
    double[][] centroidsOriginal,
    List<Profile> profiles,
    int silhouetteSample,
    int initSample) {

  /**
   * @param restarts how the restarts of this k went; null when not known
   */
  public record KScore(int k, double wcss, double silhouette, double calinskiHarabasz, double daviesBouldin,
      Restarts restarts) {}

  /**
   * The restarts of one k: how many ran, how many reached the lowest within-cluster sum of squares (within 1e-9
   * relative), and the lowest, median and highest within-cluster sum of squares among them.
   *
   * @param onDriver true when they ran on the driver over every point (a table of at most cluster.init-sample
   *     rows; the best was then confirmed by Lloyd passes over all rows); false for k-means|| restarts
   */
  public record Restarts(int run, int atBest, double min, double median, double max, boolean onDriver) {}

  /** The features that most distinguish a cluster, largest |standardised difference| first. */
  public record Profile(int cluster, long size, double share, List<FeatureShift> distinguishing) {}

  /**
   * @param standardizedDifference (cluster mean - overall mean) / overall standard deviation
   */
  public record FeatureShift(String feature, double clusterMean, double overallMean,
      double standardizedDifference) {}
}
