package io.eigenmill.kmeans.math;

/**
 * Internal measures of a partition, used to compare values of k. Pure functions over point-major arrays.
 *
 * <ul>
 *   <li>Silhouette (Rousseeuw 1987, "Silhouettes: a graphical aid to the interpretation and validation of cluster
 *       analysis", J. Comput. Appl. Math. 20): for point i with a(i) its mean Euclidean distance to the other points
 *       of its cluster and b(i) the smallest mean distance to the points of another cluster,
 *       s(i) = (b(i) - a(i)) / max(a(i), b(i)); s(i) = 0 for a point alone in its cluster (Rousseeuw's convention)
 *       and when a(i) = b(i) = 0; when every point falls in one cluster, b is undefined and s(i) = 0. The measure
 *       is the mean of s(i). Higher is better.</li>
 *   <li>Calinski-Harabasz (Calinski and Harabasz 1974, "A dendrite method for cluster analysis", Comm. Stat. 3):
 *       [B / (k - 1)] / [W / (n - k)] with W the within-cluster and B = T - W the between-cluster sum of squares.
 *       Higher is better.</li>
 *   <li>Davies-Bouldin (Davies and Bouldin 1979, "A cluster separation measure", IEEE TPAMI 1(2)), with q = 1 and
 *       Euclidean distances: S_i the mean distance of cluster i's points to its centroid, M_ij the distance between
 *       centroids, DB = (1/k) sum_i max_{j != i} (S_i + S_j) / M_ij. Lower is better.</li>
 * </ul>
 * All three are undefined for k = 1 and returned as NaN.
 */
public final class ClusterQuality {
  private ClusterQuality() {}

  /** Calinski-Harabasz index; NaN when k < 2 or n <= k; +infinity when W = 0 < B. */
  public static double calinskiHarabasz(double totalSs, double wcss, long n, int k) {
    if (k < 2 || n <= k) {
      return Double.NaN;
    }
    double between = Math.max(0.0, totalSs - wcss);
    return (between / (k - 1)) / (wcss / (n - k));
  }

  /**
   * Davies-Bouldin index over the non-empty clusters; NaN when fewer than two clusters have points, +infinity when
   * two non-empty clusters share a centroid.
   *
   * @param centroids point-major {@code k x d}
   * @param meanDistances S_i, the mean Euclidean distance of cluster i's points to its centroid
   */
  public static double daviesBouldin(double[] centroids, double[] meanDistances, long[] sizes, int k, int d) {
    int used = 0;
    double total = 0;
    for (int i = 0; i < k; i++) {
      if (sizes[i] == 0) {
        continue;
      }
      used++;
      double worst = 0;
      for (int j = 0; j < k; j++) {
        if (j == i || sizes[j] == 0) {
          continue;
        }
        double m = Math.sqrt(KMeansSeeding.distance2(centroids, i * d, centroids, j * d, d));
        double ratio = (meanDistances[i] + meanDistances[j]) / m;
        worst = Math.max(worst, m == 0 ? Double.POSITIVE_INFINITY : ratio);
      }
      total += worst;
    }
    return used < 2 ? Double.NaN : total / used;
  }

  /** The nearest centroid (exact distances, ties to the lower index) of each of the s points. */
  public static int[] labels(double[] points, int s, int d, double[] centroids, int k) {
    int[] out = new int[s];
    for (int i = 0; i < s; i++) {
      out[i] = KMeansSeeding.nearest(points, i * d, centroids, k, d);
    }
    return out;
  }

  /**
   * The mean silhouette of the s points under each of several labellings, exactly (every pairwise Euclidean
   * distance, each computed once and shared by all labellings). NaN for a labelling with k < 2.
   *
   * <p>Cost: s(s-1)/2 distances of d terms plus 2 updates per labelling and pair; memory s x k per labelling.
   *
   * @param points point-major {@code s x d}
   * @param labels {@code labels[q][i]} in {@code [0, ks[q])}
   */
  public static double[] silhouettes(double[] points, int s, int d, int[][] labels, int[] ks) {
    int q = labels.length;
    double[][] sums = new double[q][];
    for (int t = 0; t < q; t++) {
      sums[t] = new double[s * ks[t]];
    }
    for (int i = 0; i < s; i++) {
      for (int j = i + 1; j < s; j++) {
        double dist = Math.sqrt(KMeansSeeding.distance2(points, i * d, points, j * d, d));
        for (int t = 0; t < q; t++) {
          int[] lab = labels[t];
          int k = ks[t];
          sums[t][i * k + lab[j]] += dist;
          sums[t][j * k + lab[i]] += dist;
        }
      }
    }
    double[] out = new double[q];
    for (int t = 0; t < q; t++) {
      out[t] = ks[t] < 2 || s == 0 ? Double.NaN : meanSilhouette(sums[t], labels[t], s, ks[t]);
    }
    return out;
  }

  private static double meanSilhouette(double[] sums, int[] lab, int s, int k) {
    long[] n = new long[k];
    for (int i = 0; i < s; i++) {
      n[lab[i]]++;
    }
    double total = 0;
    for (int i = 0; i < s; i++) {
      int own = lab[i];
      if (n[own] < 2) {
        continue;
      }
      double a = sums[i * k + own] / (n[own] - 1);
      double b = Double.POSITIVE_INFINITY;
      for (int c = 0; c < k; c++) {
        if (c != own && n[c] > 0) {
          b = Math.min(b, sums[i * k + c] / n[c]);
        }
      }
      double top = Math.max(a, b);
      if (b != Double.POSITIVE_INFINITY && top > 0) {
        total += (b - a) / top;
      }
    }
    return total / s;
  }
}
