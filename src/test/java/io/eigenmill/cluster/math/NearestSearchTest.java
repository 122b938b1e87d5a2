package io.eigenmill.cluster.math;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.math.NearestSearch;
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

  @Test
  void chunkRowsKeepTheProductWithinBudget() {
    assertEquals(1024, NearestSearch.chunkRows(10, 1024));
    assertEquals(NearestSearch.PRODUCT_BUDGET / 1000, NearestSearch.chunkRows(1000, 1024));
    assertEquals(16, NearestSearch.chunkRows(1_000_000, 1024), "never fewer than 16 rows");
  }
}
