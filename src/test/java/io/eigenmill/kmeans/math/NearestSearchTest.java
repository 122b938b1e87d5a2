package io.eigenmill.kmeans.math;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * The BLAS-3 nearest-centroid search against a brute-force scan of every centroid with exact squared distances.
 * Tolerance on distances: the search recomputes them as sums of d squared differences, the same arithmetic as the
 * brute force, so they agree to the last bit (checked at 0).
 */
class NearestSearchTest {
  static final int D = 3;

  @Test
  void matchesBruteForceForSeveralRunsAndChunks() {
    SplittableRandom rnd = new SplittableRandom(11);
    int[] ks = {1, 3, 5};
    int[] offsets = {0, 1, 4, 9};
    double[] c = new double[9 * D];
    for (int i = 0; i < c.length; i++) {
      c[i] = rnd.nextGaussian() * 3;
    }
    int rows = 37;
    int ld = 41;
    int xoff = 2;
    double[] x = new double[xoff + ld * D];
    for (int i = 0; i < rows; i++) {
      for (int l = 0; l < D; l++) {
        x[xoff + i + l * ld] = rnd.nextGaussian() * 4;
      }
    }
    NearestSearch s = new NearestSearch(D, c, offsets, 64, true);
    s.search(x, xoff, rows, ld);
    for (int r = 0; r < ks.length; r++) {
      for (int i = 0; i < rows; i++) {
        int best = -1;
        int second = -1;
        double b1 = Double.POSITIVE_INFINITY;
        double b2 = Double.POSITIVE_INFINITY;
        for (int j = offsets[r]; j < offsets[r + 1]; j++) {
          double d2 = 0;
          for (int l = 0; l < D; l++) {
            double t = x[xoff + i + l * ld] - c[j * D + l];
            d2 += t * t;
          }
          if (d2 < b1) {
            b2 = b1;
            second = best;
            b1 = d2;
            best = j;
          } else if (d2 < b2) {
            b2 = d2;
            second = j;
          }
        }
        assertEquals(best, s.nearest(r, i), "nearest of row " + i + " run " + r);
        assertEquals(b1, s.distance2(r, i), 0.0, "distance of row " + i + " run " + r);
        assertEquals(second, s.secondNearest(r, i), "second of row " + i + " run " + r);
        if (second < 0) {
          assertTrue(Double.isNaN(s.secondDistance2(r, i)), "no second centroid with k = 1");
        } else {
          assertEquals(b2, s.secondDistance2(r, i), 0.0);
        }
      }
    }
  }

  @Test
  void tiesGoToTheLowerIndexAndDuplicatesSecond() {
    double[] c = {1, 0, 0, 1, 0, 0, -1, 0, 0}; // centroids 0 and 1 coincide
    NearestSearch s = new NearestSearch(D, c, new int[] {0, 3}, 16, true);
    double[] x = {1, 0, 0}; // one row, ld 1
    s.search(x, 0, 1, 1);
    assertEquals(0, s.nearest(0, 0));
    assertEquals(0.0, s.distance2(0, 0), 0.0);
    assertEquals(1, s.secondNearest(0, 0), "the duplicate is second, at distance 0");
    assertEquals(0.0, s.secondDistance2(0, 0), 0.0);
  }

  /**
   * The nearest-only search (Lloyd passes, k-means|| rounds) against brute force: runs of 1, 5 and 33 centroids
   * (0, 3 and 6 tag bits in its keys). Its distance comes from the expansion ||x||^2 + ||c||^2 - 2 x.c, so it may
   * differ from the direct sum by the bound in its javadoc, (d + 2) u (||x|| + ||c||)^2 (Higham 2002, section 3.1);
   * the nearest centroid may differ only where the brute-force distances tie within that bound.
   */
  @Test
  void nearestOnlyMatchesBruteForceWithinTheExpansionBound() {
    SplittableRandom rnd = new SplittableRandom(23);
    int[] offsets = {0, 1, 6, 39};
    double[] c = new double[39 * D];
    for (int i = 0; i < c.length; i++) {
      c[i] = rnd.nextGaussian() * 3;
    }
    int rows = 300;
    double[] x = new double[rows * D];
    for (int i = 0; i < x.length; i++) {
      x[i] = rnd.nextGaussian() * 4;
    }
    NearestSearch s = new NearestSearch(D, c, offsets, 512, false);
    s.search(x, 0, rows, rows);
    double u = Math.ulp(1.0) / 2;
    int misses = 0;
    for (int r = 0; r < 3; r++) {
      for (int i = 0; i < rows; i++) {
        int best = -1;
        double b1 = Double.POSITIVE_INFINITY;
        double xn = 0;
        for (int l = 0; l < D; l++) {
          xn += x[i + l * rows] * x[i + l * rows];
        }
        double bound = 0;
        double[] d2 = new double[offsets[r + 1] - offsets[r]];
        for (int j = offsets[r]; j < offsets[r + 1]; j++) {
          double cn = 0;
          for (int l = 0; l < D; l++) {
            double t = x[i + l * rows] - c[j * D + l];
            d2[j - offsets[r]] += t * t;
            cn += c[j * D + l] * c[j * D + l];
          }
          bound = Math.max(bound, (D + 2) * u * Math.pow(Math.sqrt(xn) + Math.sqrt(cn), 2));
          if (d2[j - offsets[r]] < b1) {
            b1 = d2[j - offsets[r]];
            best = j;
          }
        }
        int got = s.nearest(r, i);
        assertTrue(d2[got - offsets[r]] <= b1 + 2 * bound, "row " + i + " run " + r + ": centroid " + got
            + " is not nearest within the bound");
        assertEquals(d2[got - offsets[r]], s.distance2(r, i), bound, "distance of row " + i + " run " + r);
        if (got != best) {
          misses++;
        }
      }
    }
    assertEquals(0, misses, "random data has no near-ties: every nearest centroid is the brute-force one");
  }

  @Test
  void nearestOnlyTiesGoToTheLowerIndex() {
    // run 0: centroids 1 and 2 coincide (and tie for the row); run 1: one centroid
    double[] c = {5, 5, 5, 1, 0, 0, 1, 0, 0, -1, 0, 0};
    NearestSearch s = new NearestSearch(D, c, new int[] {0, 3, 4}, 16, false);
    double[] x = {1, 0, 0};
    s.search(x, 0, 1, 1);
    assertEquals(1, s.nearest(0, 0), "the lower of two equal centroids");
    assertEquals(0.0, s.distance2(0, 0), 0.0);
    assertEquals(3, s.nearest(1, 0));
    assertEquals(4.0, s.distance2(1, 0), 1e-15);
  }

  @Test
  void chunkRowsKeepTheProductWithinBudget() {
    assertEquals(1024, NearestSearch.chunkRows(10, 1024));
    assertEquals(NearestSearch.PRODUCT_BUDGET / 1000, NearestSearch.chunkRows(1000, 1024));
    assertEquals(16, NearestSearch.chunkRows(1_000_000, 1024), "never fewer than 16 rows");
  }
}
