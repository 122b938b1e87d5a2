package io.eigenmill.kmeans.math;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.kmeans.BruteForce;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * The quality measures against their published definitions, computed by hand on a tiny example and by a direct
 * brute force ({@link BruteForce}, written straight from the papers) on random data.
 * Silhouette: Rousseeuw (1987), s(i) = (b - a) / max(a, b), s = 0 for a singleton. Calinski and Harabasz (1974):
 * [B / (k - 1)] / [W / (n - k)], B = sum_j n_j ||c_j - mean||^2. Davies and Bouldin (1979) with q = 1, p = 2.
 * Tolerance 1e-12 relative: the brute forces sum the same terms in another order (n <= 60, error ~ n eps).
 */
class ClusterQualityTest {

  @Test
  void handExampleOnALine() {
    double[] pts = {0, 1, 10, 11};
    int[] lab = {0, 0, 1, 1};
    // a = 1 for every point; b = 10.5, 9.5, 9.5, 10.5 (mean distance to the other pair)
    double expected = (9.5 / 10.5 + 8.5 / 9.5) / 2;
    assertEquals(expected, ClusterQuality.silhouettes(pts, 4, 1, new int[][] {lab}, new int[] {2})[0], 1e-15);
    // T = 30.25 + 20.25 + 20.25 + 30.25 = 101, W = 0.5 + 0.5 = 1, B = 100: (100 / 1) / (1 / 2) = 200
    assertEquals(200.0, ClusterQuality.calinskiHarabasz(101, 1, 4, 2), 1e-12);
    // S_0 = S_1 = 0.5, M_01 = 10: (1/2)(0.1 + 0.1) = 0.1
    assertEquals(0.1, ClusterQuality.daviesBouldin(new double[] {0.5, 10.5}, new double[] {0.5, 0.5},
        new long[] {2, 2}, 2, 1), 1e-15);
  }

  @Test
  void undefinedForOneCluster() {
    assertTrue(Double.isNaN(ClusterQuality.calinskiHarabasz(10, 10, 5, 1)));
    assertTrue(Double.isNaN(ClusterQuality.daviesBouldin(new double[] {0}, new double[] {1}, new long[] {5}, 1, 1)));
    assertTrue(Double.isNaN(ClusterQuality.silhouettes(new double[] {0, 1}, 2, 1, new int[][] {{0, 0}},
        new int[] {1})[0]));
  }

  @Test
  void randomDataAgainstBruteForce() {
    SplittableRandom rnd = new SplittableRandom(17);
    int n = 60;
    int d = 3;
    double[] pts = new double[n * d];
    for (int i = 0; i < pts.length; i++) {
      pts[i] = rnd.nextGaussian() + (i / d % 3) * 2.5;
    }
    int[] ks = {2, 3, 4};
    int[][] labels = new int[3][n];
    for (int t = 0; t < 3; t++) {
      for (int i = 0; i < n; i++) {
        labels[t][i] = i < ks[t] ? i : rnd.nextInt(ks[t]); // every cluster non-empty
      }
      labels[t][n - 1] = ks[t] - 1;
    }
    labels[2][5] = 3; // make cluster 3 of k = 4 a singleton
    for (int i = 0; i < n; i++) {
      if (i != 3 && i != 5 && labels[2][i] == 3) {
        labels[2][i] = 0;
      }
    }
    labels[2][3] = 1;
    double[] sil = ClusterQuality.silhouettes(pts, n, d, labels, ks);
    for (int t = 0; t < 3; t++) {
      double brute = bruteSilhouette(pts, n, d, labels[t], ks[t]);
      assertEquals(brute, sil[t], 1e-12, "silhouette k = " + ks[t]);
      double[] centroids = new double[ks[t] * d];
      long[] sizes = new long[ks[t]];
      double[] mean = new double[d];
      for (int i = 0; i < n; i++) {
        sizes[labels[t][i]]++;
        for (int l = 0; l < d; l++) {
          centroids[labels[t][i] * d + l] += pts[i * d + l];
          mean[l] += pts[i * d + l] / n;
        }
      }
      for (int j = 0; j < ks[t]; j++) {
        for (int l = 0; l < d; l++) {
          centroids[j * d + l] /= sizes[j];
        }
      }
      double w = 0;
      double total = 0;
      double[] meanDist = new double[ks[t]];
      for (int i = 0; i < n; i++) {
        int j = labels[t][i];
        double d2 = dist2(pts, i * d, centroids, j * d, d);
        w += d2;
        total += dist2(pts, i * d, mean, 0, d);
        meanDist[j] += Math.sqrt(d2) / sizes[j];
      }
      double between = 0;
      for (int j = 0; j < ks[t]; j++) {
        between += sizes[j] * dist2(centroids, j * d, mean, 0, d);
      }
      double ch = (between / (ks[t] - 1)) / (w / (n - ks[t]));
      assertEquals(ch, ClusterQuality.calinskiHarabasz(total, w, n, ks[t]), 1e-10 * ch, "CH k = " + ks[t]);
      double db = 0;
      for (int i = 0; i < ks[t]; i++) {
        double worst = 0;
        for (int j = 0; j < ks[t]; j++) {
          if (i != j) {
            worst = Math.max(worst, (meanDist[i] + meanDist[j]) / Math.sqrt(dist2(centroids, i * d, centroids,
                j * d, d)));
          }
        }
        db += worst / ks[t];
      }
      assertEquals(db, ClusterQuality.daviesBouldin(centroids, meanDist, sizes, ks[t], d), 1e-12 * db);
    }
  }

  static double bruteSilhouette(double[] pts, int n, int d, int[] lab, int k) {
    double[][] x = new double[n][d];
    for (int i = 0; i < n; i++) {
      System.arraycopy(pts, i * d, x[i], 0, d);
    }
    return BruteForce.silhouette(x, lab, k);
  }

  static double dist2(double[] a, int ao, double[] b, int bo, int d) {
    double s = 0;
    for (int l = 0; l < d; l++) {
      s += (a[ao + l] - b[bo + l]) * (a[ao + l] - b[bo + l]);
    }
    return s;
  }
}
