package io.eigenmill.kmeans.math;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;

import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * The two kernels of the nearest-only search against the rule their javadoc states (the key of centroid t is the
 * squared distance's bits, clamped at 0, with the low tag bits replaced by t; the smallest key wins), written out
 * plainly here, and against each other bit for bit (the SIMD kernel makes the same IEEE additions in the same order).
 * Exact comparisons throughout: nothing here is approximate.
 */
class NearestKeysTest {
  private static final int[] COUNTS = {1, 2, 3, 5, 8, 9, 33};
  private static final int[] ROWS = {0, 1, 7, 8, 9, 63, 1000};

  /** The rule, one row and one centroid at a time. */
  private static long expected(double[] product, int ld, double[] norms, int first, int count, double[] rowNorm,
      int i, long tags) {
    long best = Long.MAX_VALUE;
    for (int t = 0; t < count; t++) {
      double d2 = rowNorm[i] + (product[(first + t) * ld + i] + norms[first + t]);
      long bits = d2 > 0 ? Double.doubleToRawLongBits(d2) : 0L;
      long key = (bits & ~tags) | t;
      if (key < best) {
        best = key;
      }
    }
    return best;
  }

  private static long tags(int count) {
    return count <= 1 ? 0 : (Long.highestOneBit(count - 1L) << 1) - 1;
  }

  @Test
  void bothKernelsFollowTheRuleOnRandomScoresWithTiesAndNegatives() {
    SplittableRandom rnd = new SplittableRandom(41);
    NearestKeys lanes = new LaneNearestKeys();
    NearestKeys scalar = new NearestKeys.Scalar();
    for (int count : COUNTS) {
      for (int rows : ROWS) {
        int first = 2; // the run does not start at centroid 0
        int total = first + count + 1;
        int ld = rows + 3; // the leading dimension exceeds the rows
        double[] norms = new double[total];
        double[] product = new double[total * ld];
        double[] rowNorm = new double[rows];
        for (int j = 0; j < total; j++) {
          norms[j] = 1 + rnd.nextDouble() * 4;
        }
        for (int i = 0; i < rows; i++) {
          rowNorm[i] = 1 + rnd.nextDouble() * 4;
          for (int j = 0; j < total; j++) {
            // -2 x.c is at most 2 ||x|| ||c||: scores near -(rowNorm + norm) give distances near 0, some negative
            product[j * ld + i] = -(rowNorm[i] + norms[j]) * (rnd.nextInt(5) == 0 ? 1 + 1e-16 * rnd.nextInt(-4, 5)
                : rnd.nextDouble());
          }
          if (count > 1 && rnd.nextInt(3) == 0) {
            // an exact tie between two centroids of the run, and a near tie of one ulp with a third
            int a = first + rnd.nextInt(count);
            int b = first + rnd.nextInt(count);
            product[b * ld + i] = product[a * ld + i] + norms[a] - norms[b];
            int c = first + rnd.nextInt(count);
            product[c * ld + i] = Math.nextUp(product[a * ld + i] + norms[a] - norms[c]);
          }
        }
        long tags = tags(count);
        long[] want = new long[rows];
        double[] wantDistance = new double[rows + 5];
        for (int i = 0; i < rows; i++) {
          want[i] = expected(product, ld, norms, first, count, rowNorm, i, tags);
          int j = first + (int) (want[i] & tags);
          double d2 = rowNorm[i] + (product[j * ld + i] + norms[j]);
          wantDistance[5 + i] = d2 > 0 ? d2 : 0.0; // the chosen centroid's distance, clamped, all its bits
        }
        long[] got = new long[rows];
        double[] distance = new double[rows + 5];
        scalar.smallest(product, ld, norms, first, count, rowNorm, rows, tags, got, distance, 5);
        assertArrayEquals(want, got, "scalar kernel, " + count + " centroids, " + rows + " rows");
        assertArrayEquals(bits(wantDistance), bits(distance), "scalar kernel's distances");
        long[] gotLanes = new long[rows];
        double[] laneDistance = new double[rows + 5];
        lanes.smallest(product, ld, norms, first, count, rowNorm, rows, tags, gotLanes, laneDistance, 5);
        assertArrayEquals(want, gotLanes, "SIMD kernel, " + count + " centroids, " + rows + " rows");
        assertArrayEquals(bits(wantDistance), bits(laneDistance), "SIMD kernel's distances");
      }
    }
  }

  private static long[] bits(double[] v) {
    long[] out = new long[v.length];
    for (int i = 0; i < v.length; i++) {
      out[i] = Double.doubleToRawLongBits(v[i]);
    }
    return out;
  }

  @Test
  void searchesWithEitherKernelAgreeBitForBit() {
    SplittableRandom rnd = new SplittableRandom(5);
    int d = 6;
    int[] offsets = {0, 8, 16, 21};
    double[] c = new double[21 * d];
    for (int i = 0; i < c.length; i++) {
      c[i] = rnd.nextGaussian() * 3;
    }
    int rows = 1021;
    double[] x = new double[rows * d];
    for (int i = 0; i < rows; i++) {
      int blob = rnd.nextInt(21); // clustered rows around the centroids
      for (int l = 0; l < d; l++) {
        x[i + l * rows] = c[blob * d + l] + rnd.nextGaussian() * 0.5;
      }
    }
    NearestSearch withLanes = new NearestSearch(d, c, offsets, 1024, false, new LaneNearestKeys());
    NearestSearch withScalar = new NearestSearch(d, c, offsets, 1024, false, new NearestKeys.Scalar());
    withLanes.search(x, 0, rows, rows);
    withScalar.search(x, 0, rows, rows);
    for (int r = 0; r < 3; r++) {
      for (int i = 0; i < rows; i++) {
        assertEquals(withScalar.nearest(r, i), withLanes.nearest(r, i), "run " + r + " row " + i);
        assertEquals(Double.doubleToRawLongBits(withScalar.distance2(r, i)),
            Double.doubleToRawLongBits(withLanes.distance2(r, i)), "run " + r + " row " + i);
      }
    }
  }

  @Test
  void theScalarKernelIsChosenWhenSwitchedOffOrWithoutTheVectorModule() {
    assertInstanceOf(NearestKeys.Scalar.class, NearestKeys.Chosen.choose("off", true));
    assertInstanceOf(NearestKeys.Scalar.class, NearestKeys.Chosen.choose("OFF", true));
    assertInstanceOf(NearestKeys.Scalar.class, NearestKeys.Chosen.choose("auto", false));
    NearestKeys auto = NearestKeys.Chosen.choose("auto", true);
    // the suite's JVM has the module (the pom passes --add-modules); 4 or more double lanes on any x86-64 with AVX
    assertEquals(LaneNearestKeys.lanes() >= 4, auto instanceof LaneNearestKeys, auto.describe());
    assertEquals("scalar", new NearestKeys.Scalar().describe());
  }
}
