package io.eigenmill.kmeans.math;

/**
 * Single-point moves of k-means (Hartigan and Wong 1979, "Algorithm AS 136: A K-Means Clustering Algorithm",
 * Applied Statistics 28(1)): a point x of cluster a (n_a points, centroid c_a) moved to cluster b lowers the
 * within-cluster sum of squares by n_a / (n_a - 1) d^2(x, c_a) - n_b / (n_b + 1) d^2(x, c_b), so it is moved when
 * that is positive for some b (to the b where it is largest), and both centroids are updated at once. A partition
 * no single move improves is also a fixed point of Lloyd's algorithm (every point is strictly nearest to its own
 * centroid, because n_a / (n_a - 1) > 1 > n_b / (n_b + 1)), and it is often better than the Lloyd fixed point it
 * started from. This is the exhaustive form of the moves (every point against every cluster in each sweep), not
 * AS 136's live-set bookkeeping: its points are the few on the driver.
 *
 * <p>Rounding: a move must gain more than {@link #GAIN} times the point's removal cost, so that rounding in the
 * incrementally updated centroids cannot make two moves undo each other; the centroids are recomputed exactly from
 * the assignment after every sweep. Pure function over point-major arrays.
 */
public final class HartiganWong {
  /** Relative gain a move needs (see the class comment). */
  static final double GAIN = 1e-12;

  private HartiganWong() {}

  /**
   * Improves {@code owner} in place by single-point moves until none helps or after {@code maxSweeps} sweeps, and
   * writes the final centroids into {@code centres}.
   *
   * @param points point-major {@code m x d}
   * @param owner cluster (0..k-1) of each point, changed in place
   * @param centres point-major {@code k x d}, overwritten with the means of the final clusters (an empty cluster
   *     keeps its value)
   * @return the number of moves made
   */
  public static int refine(double[] points, int m, int d, int[] owner, int k, double[] centres, int maxSweeps) {
    long[] sizes = new long[k];
    means(points, m, d, owner, k, centres, sizes);
    int moves = 0;
    for (int sweep = 0; sweep < maxSweeps; sweep++) {
      int moved = 0;
      for (int i = 0; i < m; i++) {
        int a = owner[i];
        if (sizes[a] <= 1) {
          continue; // moving a cluster's only point leaves an empty cluster: no gain in a k-partition
        }
        int off = i * d;
        double remove = sizes[a] / (sizes[a] - 1.0) * KMeansSeeding.distance2(points, off, centres, a * d, d);
        int to = -1;
        double bestAdd = remove * (1 - GAIN);
        for (int b = 0; b < k; b++) {
          if (b == a) {
            continue;
          }
          double add = sizes[b] / (sizes[b] + 1.0) * KMeansSeeding.distance2(points, off, centres, b * d, d);
          if (add < bestAdd) {
            bestAdd = add;
            to = b;
          }
        }
        if (to >= 0) {
          long na = sizes[a];
          long nb = sizes[to];
          for (int l = 0; l < d; l++) {
            double x = points[off + l];
            centres[a * d + l] = (na * centres[a * d + l] - x) / (na - 1);
            centres[to * d + l] = (nb * centres[to * d + l] + x) / (nb + 1);
          }
          sizes[a]--;
          sizes[to]++;
          owner[i] = to;
          moved++;
        }
      }
      means(points, m, d, owner, k, centres, sizes);
      moves += moved;
      if (moved == 0) {
        break;
      }
    }
    return moves;
  }

  /** Each point's nearest centre (ties to the lower index). */
  public static int[] assign(double[] points, int m, int d, double[] centres, int k) {
    int[] owner = new int[m];
    for (int i = 0; i < m; i++) {
      owner[i] = KMeansSeeding.nearest(points, i * d, centres, k, d);
    }
    return owner;
  }

  /** The within-cluster sum of squares of {@code owner} about {@code centres}. */
  public static double wcss(double[] points, int m, int d, int[] owner, double[] centres) {
    double s = 0;
    for (int i = 0; i < m; i++) {
      s += KMeansSeeding.distance2(points, i * d, centres, owner[i] * d, d);
    }
    return s;
  }

  /**
   * The means of the clusters of {@code owner} into {@code centres} (an empty cluster keeps its value), and sizes.
   * Two passes: the plain mean, then the mean of the residuals added to it (the residuals of equal points are exact,
   * so a cluster of equal points gets exactly their value).
   */
  static void means(double[] points, int m, int d, int[] owner, int k, double[] centres, long[] sizes) {
    double[] sums = new double[k * d];
    java.util.Arrays.fill(sizes, 0);
    for (int i = 0; i < m; i++) {
      int c = owner[i];
      sizes[c]++;
      for (int l = 0; l < d; l++) {
        sums[c * d + l] += points[i * d + l];
      }
    }
    double[] plain = new double[k * d];
    for (int c = 0; c < k; c++) {
      for (int l = 0; l < d; l++) {
        plain[c * d + l] = sizes[c] > 0 ? sums[c * d + l] / sizes[c] : 0;
      }
    }
    java.util.Arrays.fill(sums, 0.0);
    for (int i = 0; i < m; i++) {
      int c = owner[i];
      for (int l = 0; l < d; l++) {
        sums[c * d + l] += points[i * d + l] - plain[c * d + l];
      }
    }
    for (int c = 0; c < k; c++) {
      if (sizes[c] > 0) {
        for (int l = 0; l < d; l++) {
          centres[c * d + l] = plain[c * d + l] + sums[c * d + l] / sizes[c];
        }
      }
    }
  }
}
