package io.eigenmill.kmeans.math;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Arrays;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * Single-point moves and the driver's restarts against the exact optimum of tiny point sets, found by enumerating
 * every assignment of n <= 10 points to k clusters (k^n of them, every k-partition among them).
 */
class HartiganWongTest {

  /** The lowest within-cluster sum of squares over all partitions into exactly k non-empty clusters. */
  static double bruteForce(double[] points, int m, int d, int k) {
    int[] owner = new int[m];
    double best = Double.POSITIVE_INFINITY;
    long total = (long) Math.pow(k, m);
    for (long code = 0; code < total; code++) {
      long c = code;
      for (int i = 0; i < m; i++) {
        owner[i] = (int) (c % k);
        c /= k;
      }
      double w = exactWcss(points, m, d, owner, k);
      if (w < best) {
        best = w;
      }
    }
    return best;
  }

  /** WCSS of a partition about its own means; +infinity when a cluster is empty. */
  static double exactWcss(double[] points, int m, int d, int[] owner, int k) {
    double[] centres = new double[k * d];
    long[] sizes = new long[k];
    HartiganWong.means(points, m, d, owner, k, centres, sizes);
    for (long s : sizes) {
      if (s == 0) {
        return Double.POSITIVE_INFINITY;
      }
    }
    return HartiganWong.wcss(points, m, d, owner, centres);
  }

  static double[] randomPoints(SplittableRandom r, int m, int d) {
    double[] p = new double[m * d];
    for (int i = 0; i < p.length; i++) {
      // a few loose groups, so that local optima exist
      p[i] = r.nextGaussian() + 3 * r.nextInt(3);
    }
    return p;
  }

  @Test
  void movesReachALocalOptimumNoSingleMoveImproves() {
    SplittableRandom r = new SplittableRandom(11);
    for (int trial = 0; trial < 40; trial++) {
      int m = 10;
      int d = 2;
      int k = 2 + trial % 3;
      double[] pts = randomPoints(r, m, d);
      int[] owner = new int[m];
      for (int i = 0; i < m; i++) {
        owner[i] = i % k; // a poor start: every cluster non-empty
      }
      double before = exactWcss(pts, m, d, owner, k);
      double[] centres = new double[k * d];
      HartiganWong.refine(pts, m, d, owner, k, centres, 1000);
      double after = exactWcss(pts, m, d, owner, k);
      assertTrue(after <= before, "moves never raise the sum of squares");
      assertEquals(after, HartiganWong.wcss(pts, m, d, owner, centres), 1e-12 * after, "centres are the means");
      // no single move lowers it (checked by recomputing every moved partition from scratch)
      for (int i = 0; i < m; i++) {
        for (int b = 0; b < k; b++) {
          int a = owner[i];
          if (b == a) {
            continue;
          }
          owner[i] = b;
          double moved = exactWcss(pts, m, d, owner, k);
          owner[i] = a;
          assertTrue(moved >= after * (1 - 1e-10), "trial " + trial + ": moving point " + i + " to " + b
              + " gives " + moved + " < " + after);
        }
      }
      // and it is a fixed point of Lloyd: every point is nearest to its own centroid
      assertArrayEquals(owner, HartiganWong.assign(pts, m, d, centres, k), "Lloyd fixed point");
    }
  }

  @Test
  void driverRestartsReachTheEnumeratedOptimum() {
    SplittableRandom r = new SplittableRandom(5);
    for (int trial = 0; trial < 24; trial++) {
      int m = 8 + trial % 3;
      int d = 1 + trial % 3;
      int k = 2 + trial % 3;
      double[] pts = randomPoints(r, m, d);
      double exact = bruteForce(pts, m, d, k);
      DriverRestarts.Outcome o = DriverRestarts.run(pts, m, d, k, 7 + trial, 3, 10, 1000);
      assertEquals(exact, o.best(), 1e-12 * exact, "trial " + trial + " m=" + m + " d=" + d + " k=" + k);
      assertTrue(o.atBest() >= 10 || o.restarts() == 1000, "stops after 10 restarts at the best");
      assertEquals(m, Arrays.stream(o.sizes()).sum());
      assertEquals(o.restarts(), o.wcss().length);
    }
  }

  @Test
  void refiningImprovesOnALloydFixedPoint() {
    // 1-d: Lloyd from centres 0 and 5 stops at {0, 2, 4 | 6}... a classic case single moves improve:
    // points 0, 2, 4, 6 with clusters {0, 2, 4} and {6}: WCSS 8; moving 4 gives {0, 2} {4, 6}: WCSS 4
    double[] pts = {0, 2, 4, 6};
    int[] owner = {0, 0, 0, 1};
    double[] centres = new double[2];
    // a Lloyd fixed point? point 4: distance to 2 is 2, to 6 is 2: a tie, kept by Lloyd with the lower index
    HartiganWong.refine(pts, 4, 1, owner, 2, centres, 100);
    assertEquals(4.0, HartiganWong.wcss(pts, 4, 1, owner, centres), 1e-12);
  }

  @Test
  void capFollowsTheBudget() {
    assertEquals(1000, DriverRestarts.cap(50, 4, 3, 3, 1000));
    assertEquals(3, DriverRestarts.cap(10_000_000, 100, 8, 3, 1000), "never below the minimum");
    int mid = DriverRestarts.cap(20_000, 10, 5, 3, 1000);
    assertTrue(mid > 3 && mid < 1000, "mid-size: " + mid);
  }
}
