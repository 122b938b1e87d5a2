package io.eigenmill.kmeans.math;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * One Lloyd iteration's buffer against a direct computation (each row to its brute-force nearest centroid, counts,
 * coordinate sums, within-cluster sum of squares, sums of distances, farthest rows), and its merge laws. Tolerances: sums of 200 terms of
 * magnitude <= 10 differ from another summation order by at most 200 eps 10 = 4.4e-13; checked at 1e-11.
 */
class LloydStatsTest {
  static final int D = 2;
  static final int N = 200;
  static final int[] OFFSETS = {0, 2, 5};

  // column-major, ld N; padded by one column because the BLAS binding checks xoff + ld * d <= length
  final double[] x = new double[N * D + N];
  final long[] ids = new long[N];
  final double[] c = {-3, -3, 3, 3, -4, 0, 0, 4, 4, 0};

  LloydStatsTest() {
    SplittableRandom rnd = new SplittableRandom(3);
    for (int i = 0; i < N; i++) {
      x[i] = rnd.nextGaussian() * 3;
      x[i + N] = rnd.nextGaussian() * 3;
      ids[i] = rnd.nextLong();
    }
  }

  LloydStats over(int from, int to) {
    LloydStats s = LloydStats.empty(D, OFFSETS);
    NearestSearch search = new NearestSearch(D, c, OFFSETS, 64, false);
    for (int a = from; a < to; a += 64) {
      int m = Math.min(64, to - a);
      search.search(x, a, m, N);
      s.add(search, x, a, m, N, ids, a);
    }
    return s;
  }

  @Test
  void matchesDirectComputation() {
    LloydStats s = over(0, N);
    for (int r = 0; r < 2; r++) {
      long[] count = new long[5];
      double[] sum = new double[5 * D];
      double[] dist = new double[5];
      double wss = 0;
      double far = -1;
      for (int i = 0; i < N; i++) {
        int best = -1;
        double b = Double.POSITIVE_INFINITY;
        for (int j = OFFSETS[r]; j < OFFSETS[r + 1]; j++) {
          double d2 = sq(x[i] - c[j * D]) + sq(x[i + N] - c[j * D + 1]);
          if (d2 < b) {
            b = d2;
            best = j;
          }
        }
        count[best]++;
        sum[best * D] += x[i];
        sum[best * D + 1] += x[i + N];
        dist[best] += Math.sqrt(b);
        wss += b;
        far = Math.max(far, b);
      }
      for (int j = OFFSETS[r]; j < OFFSETS[r + 1]; j++) {
        assertEquals(count[j], s.count(j), "count of centroid " + j);
        assertEquals(sum[j * D], s.sum(j, 0), 1e-11);
        assertEquals(sum[j * D + 1], s.sum(j, 1), 1e-11);
        assertEquals(dist[j], s.distanceSum(j), 1e-11);
      }
      assertEquals(wss, s.wcss(r), 1e-11 * wss);
      double[] f = s.farthestPoints(r);
      double top = Double.POSITIVE_INFINITY;
      for (int j = OFFSETS[r]; j < OFFSETS[r + 1]; j++) {
        top = Math.min(top, sq(f[0] - c[j * D]) + sq(f[1] - c[j * D + 1]));
      }
      assertEquals(far, top, 0.0, "the first farthest row is the row farthest from its centroid");
      assertEquals(OFFSETS[r + 1] - OFFSETS[r] - 1, f.length / D, "k - 1 farthest rows kept");
    }
  }

  @Test
  void mergeOfPartsEqualsTheWholeAndEmptyIsTheZero() {
    LloydStats whole = over(0, N);
    LloydStats parts = over(0, 70).merge(over(70, 71)).merge(over(71, N));
    LloydStats withEmpty = LloydStats.empty(D, OFFSETS).merge(over(0, N)).merge(LloydStats.empty(D, OFFSETS));
    for (LloydStats s : new LloydStats[] {parts, withEmpty}) {
      for (int j = 0; j < 5; j++) {
        assertEquals(whole.count(j), s.count(j));
        assertEquals(whole.sum(j, 0), s.sum(j, 0), 1e-11);
        assertEquals(whole.distanceSum(j), s.distanceSum(j), 1e-11);
      }
      for (int r = 0; r < 2; r++) {
        assertEquals(whole.wcss(r), s.wcss(r), 1e-11 * whole.wcss(r));
        assertArrayEquals(whole.farthestPoints(r), s.farthestPoints(r), 0.0);
      }
    }
  }

  @Test
  void bytesRoundTrip() {
    LloydStats s = over(0, N);
    LloydStats t = LloydStats.fromBytes(s.toBytes());
    for (int j = 0; j < 5; j++) {
      assertEquals(s.count(j), t.count(j));
      assertEquals(s.sum(j, 1), t.sum(j, 1), 0.0);
      assertEquals(s.distanceSum(j), t.distanceSum(j), 0.0);
    }
    for (int r = 0; r < 2; r++) {
      assertEquals(s.wcss(r), t.wcss(r), 0.0);
      assertArrayEquals(s.farthestPoints(r), t.farthestPoints(r), 0.0);
    }
  }

  static double sq(double v) {
    return v * v;
  }
}
