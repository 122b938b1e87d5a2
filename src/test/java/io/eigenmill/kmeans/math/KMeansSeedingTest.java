package io.eigenmill.kmeans.math;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.HashSet;
import java.util.List;
import java.util.Set;
import org.junit.jupiter.api.Test;

/** The driver-side reduction of the k-means|| candidates: weighted k-means++ and weighted Lloyd. */
class KMeansSeedingTest {
  // two tight groups on a line, weights 1..6
  final double[] pts = {0, 0.1, 0.2, 10, 10.1, 10.2};
  final double[] w = {1, 2, 3, 4, 5, 6};

  @Test
  void plusPlusPicksDistinctCandidatesDeterministically() {
    double[] a = KMeansSeeding.plusPlus(pts, w, 6, 1, 3, 42);
    double[] b = KMeansSeeding.plusPlus(pts, w, 6, 1, 3, 42);
    assertArrayEquals(a, b, 0.0, "same stream, same centres");
    Set<Double> seen = new HashSet<>();
    for (double c : a) {
      assertTrue(List.of(0.0, 0.1, 0.2, 10.0, 10.1, 10.2).contains(c), "a centre is a candidate");
      assertTrue(seen.add(c), "centres are distinct");
    }
  }

  @Test
  void zeroWeightCandidatesAreNeverPickedAndTooFewFail() {
    double[] only = {1, 0, 0, 1, 0, 0};
    for (long s = 0; s < 20; s++) {
      double[] c = KMeansSeeding.plusPlus(pts, only, 6, 1, 2, s);
      assertTrue((c[0] == 0 && c[1] == 10) || (c[0] == 10 && c[1] == 0), "only weighted points: " + c[0]);
    }
    assertThrows(IllegalArgumentException.class, () -> KMeansSeeding.plusPlus(pts, only, 6, 1, 3, 1));
  }

  @Test
  void weightedLloydReachesTheWeightedMeans() {
    double[] c = {0, 0.1};
    KMeansSeeding.lloyd(pts, w, 6, 1, c, 2, 100);
    // brute force: the two groups, weighted means (0*1 + 0.1*2 + 0.2*3)/6 and (10*4 + 10.1*5 + 10.2*6)/15
    double[] sorted = c[0] < c[1] ? c : new double[] {c[1], c[0]};
    assertEquals(0.8 / 6, sorted[0], 1e-14);
    assertEquals((40 + 50.5 + 61.2) / 15, sorted[1], 1e-13);
  }

  @Test
  void canonicalListIsSortedAndWithoutDuplicates() {
    PointList p = new PointList(2);
    p.add(5, new double[] {1, 2}, 0, 1);
    p.add(3, new double[] {7, 8}, 0, 1);
    p.add(5, new double[] {1, 2}, 0, 1);
    p.add(9, new double[] {0, 0}, 0, 1);
    PointList q = p.canonical();
    assertEquals(3, q.size());
    assertEquals(3, q.id(0));
    assertEquals(5, q.id(1));
    assertEquals(9, q.id(2));
    assertArrayEquals(new double[] {7, 8, 1, 2, 0, 0}, q.points(), 0.0);
  }
}
