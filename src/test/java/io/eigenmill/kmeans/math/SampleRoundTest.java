package io.eigenmill.kmeans.math;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.math.SeedStream;
import java.util.SplittableRandom;
import java.util.TreeSet;
import org.junit.jupiter.api.Test;

/**
 * The one-pass k-means|| round against the rule as Bahmani et al. (2012, Algorithm 2 step 4) state it, applied row by
 * row once phi is known: x is sampled when u(x) < l d^2(x, C) / phi. Both sides use the same unit numbers, so the
 * sets must be equal (a row whose u sits within rounding of the boundary would differ; with 300 rows the chance is
 * ~1e-13).
 */
class SampleRoundTest {
  static final int N = 300;
  static final int D = 2;

  final double[] x = new double[N * D];
  final long[] ids = new long[N];
  final double[] centres = {0, 0, 5, 5};
  final long stream = SeedStream.stream(9, SeedStream.OVERSAMPLE, 2, 0, 1);

  SampleRoundTest() {
    SplittableRandom rnd = new SplittableRandom(8);
    for (int i = 0; i < N; i++) {
      x[i] = rnd.nextGaussian() * 3;
      x[i + N] = rnd.nextGaussian() * 3;
      ids[i] = rnd.nextLong();
    }
    x[7] = 5; // a row on a centre: distance 0, never sampled
    x[7 + N] = 5;
  }

  SampleRound round(int capacity, int from, int to) {
    SampleRound s = new SampleRound(new long[] {stream}, new int[] {capacity}, D);
    NearestSearch search = new NearestSearch(D, centres, new int[] {0, 2}, 64, false);
    double[] chunk = new double[64 * D];
    for (int a = from; a < to; a += 64) {
      int m = Math.min(64, to - a);
      for (int i = 0; i < m; i++) {
        chunk[i] = x[a + i];
        chunk[i + 64] = x[a + i + N];
      }
      search.search(chunk, 0, m, 64);
      s.add(search, chunk, m, 64, ids, a);
    }
    return s;
  }

  @Test
  void selectsExactlyTheRowsOfTheRule() {
    double l = 4; // 2k with k = 2
    double phi = 0;
    double[] d2 = new double[N];
    for (int i = 0; i < N; i++) {
      d2[i] = Math.min(sq(x[i]) + sq(x[i + N]), sq(x[i] - 5) + sq(x[i + N] - 5));
      phi += d2[i];
    }
    TreeSet<Long> expected = new TreeSet<>();
    for (int i = 0; i < N; i++) {
      if (d2[i] > 0 && SeedStream.unit(stream, ids[i]) < l * d2[i] / phi) {
        expected.add(ids[i]);
      }
    }
    assertTrue(expected.size() > 0 && expected.size() < 20, "a handful sampled: " + expected.size());
    SampleRound whole = round(40, 0, N);
    assertEquals(phi, whole.cost(0), 1e-12 * phi);
    assertEquals(expected, ids(whole.selected(0, whole.cost(0) / l)));
    assertFalse(whole.overflowed(0, whole.cost(0) / l));
    SampleRound parts = round(40, 0, 100).merge(round(40, 100, N));
    assertEquals(expected, ids(parts.selected(0, parts.cost(0) / l)), "merged partitions sample the same rows");
    SampleRound small = round(2, 0, N);
    assertTrue(small.overflowed(0, small.cost(0) / l), "two kept rows cannot hold the sample: overflow reported");
  }

  static TreeSet<Long> ids(PointList p) {
    TreeSet<Long> out = new TreeSet<>();
    for (int i = 0; i < p.size(); i++) {
      out.add(p.id(i));
    }
    return out;
  }

  static double sq(double v) {
    return v * v;
  }
}
