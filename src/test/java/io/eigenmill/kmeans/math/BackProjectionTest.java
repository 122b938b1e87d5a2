package io.eigenmill.kmeans.math;

import static org.junit.jupiter.api.Assertions.assertEquals;

import io.eigenmill.math.Linalg;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * The map back to original units against two outside facts: with all d components, scores of a row map back to the
 * row itself (x = mean + scale * (V V^T (x - mean) / scale), V orthogonal); and the standard deviation through the
 * map equals the sample sd of the mapped points computed directly. Tolerance 1e-12 relative to the data's size
 * (a few dozen operations on values of order 10^2).
 */
class BackProjectionTest {
  static final int D = 3;

  @Test
  void scoresOfARowMapBackToTheRow() {
    double[] v = orthonormal(D);
    double[] mean = {10, -5, 100};
    double[] scale = {2, 0.5, 30};
    double[] x = {13, -4.2, 55};
    double[] s = new double[D];
    for (int c = 0; c < D; c++) {
      for (int j = 0; j < D; j++) {
        s[c] += v[j + c * D] * (x[j] - mean[j]) / scale[j];
      }
    }
    double[] back = BackProjection.ofScores(mean, scale, v, D, D).apply(s, 0);
    for (int j = 0; j < D; j++) {
      assertEquals(x[j], back[j], 1e-12 * 100);
    }
  }

  @Test
  void deviationsEqualTheSdOfMappedPoints() {
    double[] v = orthonormal(D);
    double[] mean = {1, 2, 3};
    double[] scale = {3, 1, 7};
    BackProjection map = BackProjection.ofScores(mean, scale, v, D, 2);
    SplittableRandom rnd = new SplittableRandom(2);
    int n = 50;
    double[][] y = new double[n][2];
    double[][] x = new double[n][];
    for (int i = 0; i < n; i++) {
      y[i][0] = rnd.nextGaussian() * 2;
      y[i][1] = rnd.nextGaussian() + 0.3 * y[i][0];
      x[i] = map.apply(y[i], 0);
    }
    double[] cov = new double[4];
    double[] my = new double[2];
    for (double[] p : y) {
      my[0] += p[0] / n;
      my[1] += p[1] / n;
    }
    for (double[] p : y) {
      for (int a = 0; a < 2; a++) {
        for (int b = 0; b < 2; b++) {
          cov[a + 2 * b] += (p[a] - my[a]) * (p[b] - my[b]) / (n - 1);
        }
      }
    }
    double[] sd = map.deviations(cov, null, 2);
    for (int j = 0; j < D; j++) {
      double m = 0;
      for (double[] p : x) {
        m += p[j] / n;
      }
      double s2 = 0;
      for (double[] p : x) {
        s2 += (p[j] - m) * (p[j] - m) / (n - 1);
      }
      assertEquals(Math.sqrt(s2), sd[j], 1e-12 * Math.sqrt(s2), "sd of feature " + j);
    }
    double[] diag = BackProjection.ofFeatures(mean, scale).deviations(null, new double[] {4, 1, 0.25}, D);
    assertEquals(6, diag[0], 1e-15);
    assertEquals(1, diag[1], 1e-15);
    assertEquals(3.5, diag[2], 1e-15);
  }

  static double[] orthonormal(int d) {
    SplittableRandom rnd = new SplittableRandom(4);
    double[] a = new double[d * d];
    for (int i = 0; i < a.length; i++) {
      a[i] = rnd.nextGaussian();
    }
    Linalg.orthonormalizeColumns(a, d, d);
    return a;
  }
}
